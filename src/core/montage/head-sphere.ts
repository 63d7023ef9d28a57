/**
 * The sphere that best fits a set of electrode positions, and the positions as directions from
 * its centre (points on the unit sphere, the form the 10-10 template, the neighbour graph and the
 * scalp maps use). The fit is the algebraic least-squares sphere: x² + y² + z² = 2ax + 2by + 2cz
 * + d, linear in (a, b, c, d); centre (a, b, c), radius √(d + a² + b² + c²) (common practice for
 * digitised electrodes; e.g. Pratt 1987, Computer Graphics 21:145–152, for the algebraic fit).
 */
import type { Position3 } from './positions.ts';

export interface Sphere {
  centre: Position3;
  radius: number;
}

/**
 * Least-squares sphere through the points, or null when they cannot fix one: fewer than 4 points,
 * points on one plane or line (the normal equations are singular), or a fit whose points lie
 * more than a fifth of the radius off the sphere on average (a flat patch of a cap).
 */
export function fitSphere(points: readonly Position3[]): Sphere | null {
  if (points.length < 4) return null;
  // shift to the centroid and scale to unit spread, so the normal equations are well scaled
  let mx = 0;
  let my = 0;
  let mz = 0;
  for (const p of points) {
    mx += p.x / points.length;
    my += p.y / points.length;
    mz += p.z / points.length;
  }
  let spread = 0;
  for (const p of points) spread = Math.max(spread, Math.hypot(p.x - mx, p.y - my, p.z - mz));
  if (!(spread > 0)) return null;
  // normal equations AᵀA·u = Aᵀb, rows A = [2x, 2y, 2z, 1], b = x² + y² + z²
  const ata = Array.from({ length: 4 }, () => new Float64Array(4));
  const atb = new Float64Array(4);
  for (const p of points) {
    const x = (p.x - mx) / spread;
    const y = (p.y - my) / spread;
    const z = (p.z - mz) / spread;
    const row = [2 * x, 2 * y, 2 * z, 1];
    const b = x * x + y * y + z * z;
    for (let i = 0; i < 4; i++) {
      atb[i] += row[i] * b;
      for (let j = 0; j < 4; j++) ata[i][j] += row[i] * row[j];
    }
  }
  const u = solve4(ata, atb);
  if (!u) return null;
  const r2 = u[3] + u[0] * u[0] + u[1] * u[1] + u[2] * u[2];
  if (!(r2 > 0)) return null;
  const radius = Math.sqrt(r2);
  let misfit = 0;
  for (const p of points)
    misfit += Math.abs(Math.hypot((p.x - mx) / spread - u[0], (p.y - my) / spread - u[1], (p.z - mz) / spread - u[2]) - radius) / points.length;
  if (misfit > 0.2 * radius) return null;
  return { centre: { x: mx + u[0] * spread, y: my + u[1] * spread, z: mz + u[2] * spread }, radius: radius * spread };
}

/** Gaussian elimination with partial pivoting; null when a pivot is negligible (singular). */
function solve4(a: Float64Array[], b: Float64Array): number[] | null {
  const m = a.map((r, i) => [...r, b[i]]);
  const scale = Math.max(...m.map((r) => Math.max(...r.slice(0, 4).map(Math.abs))));
  for (let c = 0; c < 4; c++) {
    let best = c;
    for (let r = c + 1; r < 4; r++) if (Math.abs(m[r][c]) > Math.abs(m[best][c])) best = r;
    if (Math.abs(m[best][c]) < 1e-10 * scale) return null;
    [m[c], m[best]] = [m[best], m[c]];
    for (let r = c + 1; r < 4; r++) {
      const f = m[r][c] / m[c][c];
      for (let k = c; k < 5; k++) m[r][k] -= f * m[c][k];
    }
  }
  const u = new Array<number>(4).fill(0);
  for (let r = 3; r >= 0; r--) {
    let s = m[r][4];
    for (let k = r + 1; k < 4; k++) s -= m[r][k] * u[k];
    u[r] = s / m[r][r];
  }
  return u;
}

/** Direction of p from the centre, as a point on the unit sphere; null for the centre itself. */
export function directionFrom(centre: Position3, p: Position3): Position3 | null {
  const dx = p.x - centre.x;
  const dy = p.y - centre.y;
  const dz = p.z - centre.z;
  const r = Math.hypot(dx, dy, dz);
  return r > 0 ? { x: dx / r, y: dy / r, z: dz / r } : null;
}
