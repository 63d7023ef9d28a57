/**
 * Idealised 10-10 electrode positions on a unit sphere (head centre at the origin, x to the right
 * ear, y to the nasion, z to the vertex). The 10-20 rule places electrodes at 10 % (10-10: finer)
 * steps of the nasion–inion and pre-auricular arcs (Jasper 1958; ACNS guideline 2016): on the
 * idealised sphere the midline steps are 22.5° of polar angle from Cz, and the equator (Fpz, T7,
 * Oz, T8) carries Fp1/AF7/F7/FT7/T7/TP7/P7/PO7/O1 at 18° steps of azimuth from the front.
 * Interior electrodes of a row lie on the great circle from the row's midline electrode to its
 * equator electrode, at fractions 1/4 … 4/4 for electrode numbers 1–2 … 7–8 (9–10 extend below
 * the equator). These are standard idealised coordinates (common practice), not a digitised cap.
 */
export interface Position3 {
  x: number;
  y: number;
  z: number;
}

// Row prefix → [polar angle of its midline electrode (deg, negative = behind Cz), azimuth of its
// equator electrode (deg from the front)].
const ROWS: Record<string, [number, number]> = {
  AF: [67.5, 36],
  F: [45, 54],
  FC: [22.5, 72],
  FT: [22.5, 72],
  C: [0, 90],
  T: [0, 90],
  CP: [-22.5, 108],
  TP: [-22.5, 108],
  P: [-45, 126],
  PO: [-67.5, 144],
};

// Old 10-20 names for the temporal row (ACNS 2016: T3→T7, T4→T8, T5→P7, T6→P8).
const OLD_NAMES: Record<string, string> = { T3: 'T7', T4: 'T8', T5: 'P7', T6: 'P8' };

function fromAngles(polarDeg: number, azimuthDeg: number): Position3 {
  const t = (polarDeg * Math.PI) / 180;
  const a = (azimuthDeg * Math.PI) / 180;
  return { x: Math.sin(t) * Math.sin(a), y: Math.sin(t) * Math.cos(a), z: Math.cos(t) };
}

function slerp(a: Position3, b: Position3, f: number): Position3 {
  const dot = Math.max(-1, Math.min(1, a.x * b.x + a.y * b.y + a.z * b.z));
  const omega = Math.acos(dot);
  if (omega < 1e-12) return { ...a };
  const sa = Math.sin((1 - f) * omega) / Math.sin(omega);
  const sb = Math.sin(f * omega) / Math.sin(omega);
  return { x: sa * a.x + sb * b.x, y: sa * a.y + sb * b.y, z: sa * a.z + sb * b.z };
}

function midline(polarDeg: number): Position3 {
  // positive polar angles are in front of Cz (azimuth 0), negative behind (azimuth 180)
  return polarDeg >= 0 ? fromAngles(polarDeg, 0) : fromAngles(-polarDeg, 180);
}

/**
 * Position of a 10-10 electrode by name (case-insensitive; old names T3–T6 and A1/A2 accepted),
 * or undefined for names that are not scalp positions of the system.
 */
export function electrodePosition(name: string): Position3 | undefined {
  const upper = name.trim().toUpperCase();
  const canonical = OLD_NAMES[upper] ?? upper;
  // special positions: poles of the equator and the reference sites below it
  const special: Record<string, Position3> = {
    FPZ: fromAngles(90, 0),
    FP1: fromAngles(90, -18),
    FP2: fromAngles(90, 18),
    OZ: fromAngles(90, 180),
    O1: fromAngles(90, -162),
    O2: fromAngles(90, 162),
    IZ: fromAngles(112.5, 180),
    NZ: fromAngles(112.5, 0),
    M1: fromAngles(115, -108),
    M2: fromAngles(115, 108),
    A1: fromAngles(112.5, -90),
    A2: fromAngles(112.5, 90),
  };
  if (special[canonical]) return special[canonical];
  const m = /^(AF|FC|FT|CP|TP|PO|F|C|T|P)(Z|\d+)$/.exec(canonical);
  if (!m) return undefined;
  const row = ROWS[m[1]];
  if (m[2] === 'Z') return m[1] === 'T' || m[1] === 'FT' || m[1] === 'TP' ? undefined : midline(row[0]);
  const num = Number(m[2]);
  if (num < 1 || num > 10) return undefined;
  const column = Math.ceil(num / 2); // 1–2 → 1, 3–4 → 2, 5–6 → 3, 7–8 → 4, 9–10 → 5
  const isTemporalRow = m[1] === 'T' || m[1] === 'FT' || m[1] === 'TP';
  if (isTemporalRow && column < 4) return undefined; // T7, FT7, TP9 … exist; T3 was mapped above
  const side = num % 2 === 1 ? -1 : 1; // odd left, even right
  const equator = fromAngles(90, side * row[1]);
  return slerp(midline(row[0]), equator, column / 4);
}

/**
 * Position of a stored channel by its name: an electrode (C3) at its 10-10 position; a
 * scalp-to-scalp pair (Pz-Oz) at the midpoint of its two electrodes on the sphere (the chord
 * midpoint pushed out to the unit sphere, i.e. halfway along the great circle: Fpz-Cz at Fz,
 * Pz-Oz at POz, as the 10-20 rule spaces them); an electrode against a mastoid, ear lobe or any
 * non-scalp reference (C3-M2) at the electrode. Undefined when the first part has no position.
 */
export function channelPosition(name: string): Position3 | undefined {
  const whole = electrodePosition(name);
  if (whole) return whole;
  const m = /^\s*([A-Za-z0-9]+)\s*-\s*(\S.*?)\s*$/.exec(name);
  if (!m) return undefined;
  const a = electrodePosition(m[1]);
  if (!a) return undefined;
  const b = isScalpSite(m[2]) ? electrodePosition(m[2]) : undefined;
  if (!b) return a;
  const mid = { x: (a.x + b.x) / 2, y: (a.y + b.y) / 2, z: (a.z + b.z) / 2 };
  const r = Math.hypot(mid.x, mid.y, mid.z);
  // opposite electrodes have no unique midpoint (never a pair of one cap's sites)
  if (r < 1e-9) return undefined;
  return { x: mid.x / r, y: mid.y / r, z: mid.z / r };
}

/** The two electrode positions of a scalp-to-scalp pair name (Pz-Oz), or null when the name is not one. */
export function pairPositions(name: string): [Position3, Position3] | null {
  const m = /^\s*([A-Za-z0-9]+)\s*-\s*([A-Za-z0-9]+)\s*$/.exec(name);
  if (!m || !isScalpSite(m[1]) || !isScalpSite(m[2])) return null;
  return [electrodePosition(m[1])!, electrodePosition(m[2])!];
}

/** True for a 10-10 scalp site (mastoids M1/M2 and ear lobes A1/A2 are reference sites, not scalp). */
export function isScalpSite(name: string): boolean {
  return !/^(M|A)[12]$/i.test(name.trim()) && electrodePosition(name) !== undefined;
}

/**
 * Azimuthal equidistant projection for scalp maps: the vertex at (0, 0), the equator on the
 * unit circle, nose up (+y), right ear +x (common practice for topographic plots).
 */
export function projectToDisk(p: Position3): { x: number; y: number } {
  const polar = Math.acos(Math.max(-1, Math.min(1, p.z)));
  const r = polar / (Math.PI / 2);
  const h = Math.hypot(p.x, p.y);
  return h < 1e-12 ? { x: 0, y: 0 } : { x: (r * p.x) / h, y: (r * p.y) / h };
}
