/**
 * Volume conduction on the unit sphere: a source at a site reaches an electrode with the gain
 * g = exp(−d²/(2σ²)), d the angular distance (great-circle arc, radians) between the two
 * positions and σ the source's spread (a smooth stand-in for a conduction model; common practice
 * in simulation, not a head model).
 */
import { electrodePosition, type Position3 } from '../montage/positions.ts';
import { ScenarioError } from './scenario.ts';

export function sitePosition(site: string, field: string): Position3 {
  const p = electrodePosition(site);
  if (!p) throw new ScenarioError(field, site, 'not a 10-10 electrode name with a known position');
  return p;
}

/** Great-circle distance between two unit vectors, radians: d = acos(a·b). */
export function angularDistance(a: Position3, b: Position3): number {
  const dot = a.x * b.x + a.y * b.y + a.z * b.z;
  return Math.acos(Math.max(-1, Math.min(1, dot)));
}

/** Gain of a source at `source` with spread widthDeg at the electrode position. */
export function conductionGain(source: Position3, electrode: Position3, widthDeg: number): number {
  const d = angularDistance(source, electrode);
  const sigma = (widthDeg * Math.PI) / 180;
  return Math.exp((-d * d) / (2 * sigma * sigma));
}
