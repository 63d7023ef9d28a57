/**
 * Electrode positions as a file gives them: the tab-separated layout of a BIDS `_electrodes.tsv`
 * (columns `name`, `x`, `y`, `z`, in that order, other columns allowed; `n/a` where an electrode
 * has no position; BIDS EEG, "Electrodes description") with the unit and the coordinate system
 * of its `_coordsystem.json` (`EEGCoordinateUnits` m, cm or mm; `EEGCoordinateSystem`). Pure: the
 * caller reads the files.
 *
 * Every position is turned into metres in one head frame: x to the right ear, y to the nose, z up
 * (RAS), the origin of the file's coordinate system. Orientations of the EEG coordinate systems
 * (BIDS specification, appendix "Coordinate systems"): CapTrak, ElektaNeuromag, ChietiItab and the
 * standard templates (MNI…, fsaverage…) are RAS; CTF, 4DBti and KitYokogawa are ALS (x to the nose,
 * y to the left ear, z up), so RAS = (−y, x, z). For any other name (`Other`, whose axes are in free
 * text, or a system not listed here) the axes are read from the electrodes themselves when they
 * carry 10-10 names: frontal (Fp, AF, F) against occipital (O, PO) gives the front, odd-numbered
 * (left) against even-numbered (right) gives the left (10-10 naming, common practice). When the
 * names do not say either, the file is taken as RAS, with a note.
 */

export type CoordinateUnit = 'm' | 'cm' | 'mm';

export const COORDINATE_UNITS: readonly CoordinateUnit[] = ['m', 'cm', 'mm'];

const METRES_PER_UNIT: Record<CoordinateUnit, number> = { m: 1, cm: 0.01, mm: 0.001 };

/** One electrode with a position, metres, x right, y front, z up. */
export interface FileElectrode {
  name: string;
  x: number;
  y: number;
  z: number;
}

/** The electrodes of one positions file, in one frame. */
export interface ElectrodeLayout {
  /** The file, as the messages and the database name it (relative to the cohort). */
  file: string;
  /** Coordinate system as the file states it (`RAS` when none is stated). */
  coordinateSystem: string;
  unit: CoordinateUnit;
  electrodes: FileElectrode[];
  /** What was read with a compromise (an orientation assumed), in words. */
  notes: string[];
}

export class ElectrodesFileError extends Error {
  override name = 'ElectrodesFileError';
}

const ALS = ['CTF', '4DBti', 'KitYokogawa'];
const RAS = ['CapTrak', 'ElektaNeuromag', 'ChietiItab', 'RAS'];
// BIDS standard template identifiers (RAS, origin at the AC): names start with these
const TEMPLATE_PREFIXES = ['MNI', 'ICBM', 'IXI549Space', 'fsaverage', 'fsLR', 'UNCInfant', 'Talairach', 'OASIS30'];

/** 'ALS' or 'RAS' for a coordinate system name; null when the name does not say (Other, unknown). */
export function orientationOf(system: string): 'RAS' | 'ALS' | null {
  const s = system.trim().toLowerCase();
  if (ALS.some((n) => n.toLowerCase() === s)) return 'ALS';
  if (RAS.some((n) => n.toLowerCase() === s) || TEMPLATE_PREFIXES.some((p) => s.startsWith(p.toLowerCase()))) return 'RAS';
  return null;
}

/** The unit of a positions file from its text ('m', 'cm', 'mm'); throws naming the file otherwise. */
export function coordinateUnit(value: unknown, file: string): CoordinateUnit {
  if (typeof value === 'string' && (COORDINATE_UNITS as readonly string[]).includes(value.trim())) return value.trim() as CoordinateUnit;
  throw new ElectrodesFileError(`${file}: coordinate unit ${JSON.stringify(value)} is not one of m, cm, mm`);
}

const missing = (cell: string | undefined) => cell === undefined || cell.trim() === '' || cell.trim().toLowerCase() === 'n/a';

/**
 * Reads an electrodes TSV: a header row with `name`, `x`, `y`, `z` (any case; other columns
 * ignored), one electrode a row. Rows whose x, y or z is `n/a` or empty are electrodes without a
 * position (skipped); a coordinate that is not a number, a row without a name, a name given twice
 * or a file with no position at all is an error naming the file and the row.
 */
export function parseElectrodesTsv(text: string, o: { file: string; unit: CoordinateUnit; coordinateSystem: string | null }): ElectrodeLayout {
  const lines = text.replace(/^\uFEFF/, '').split(/\r?\n/);
  const header = (lines[0] ?? '').split('\t').map((h) => h.trim().toLowerCase());
  const col = (name: string) => header.indexOf(name);
  const absent = ['name', 'x', 'y', 'z'].filter((c) => col(c) < 0);
  if (absent.length > 0) throw new ElectrodesFileError(`${o.file}: the header needs the columns name, x, y, z (missing: ${absent.join(', ')})`);
  const system = o.coordinateSystem?.trim() || 'RAS';
  const scale = METRES_PER_UNIT[o.unit];
  const seen = new Map<string, number>();
  const electrodes: FileElectrode[] = [];
  for (let i = 1; i < lines.length; i++) {
    if (lines[i].trim() === '') continue;
    const cells = lines[i].split('\t');
    const name = cells[col('name')]?.trim() ?? '';
    if (missing(name)) throw new ElectrodesFileError(`${o.file}: line ${i + 1} has no electrode name`);
    const key = name.toUpperCase();
    if (seen.has(key)) throw new ElectrodesFileError(`${o.file}: electrode "${name}" is on lines ${seen.get(key)} and ${i + 1}`);
    seen.set(key, i + 1);
    const raw = [cells[col('x')], cells[col('y')], cells[col('z')]];
    if (raw.some(missing)) continue;
    const v = raw.map((c) => Number(c!.trim()));
    const bad = v.findIndex((x) => !Number.isFinite(x));
    if (bad >= 0) throw new ElectrodesFileError(`${o.file}: line ${i + 1}, electrode "${name}": ${'xyz'[bad]} = "${raw[bad]!.trim()}" is not a number`);
    const [x, y, z] = v.map((c) => c * scale);
    electrodes.push({ name, x, y, z });
  }
  if (electrodes.length === 0) throw new ElectrodesFileError(`${o.file}: no electrode has a position (x, y, z)`);
  const named = orientationOf(system);
  const orientation = named ?? orientationFromNames(electrodes);
  const notes: string[] = [];
  if (named === null && orientation !== null)
    notes.push(`${o.file}: coordinate system '${system}' does not name its axes; read as ${orientation} from the 10-10 names of its electrodes`);
  if (orientation === null) notes.push(`${o.file}: coordinate system '${system}' does not name its axes; taken as x right, y front, z up (RAS)`);
  // ALS → RAS: right = −left, front = x (BIDS appendix "Coordinate systems")
  const ras = orientation === 'ALS' ? electrodes.map((e) => ({ name: e.name, x: -e.y, y: e.x, z: e.z })) : electrodes;
  return { file: o.file, coordinateSystem: system, unit: o.unit, electrodes: ras, notes };
}

const FRONTAL = /^(FP|AF|F)\d*z?$/i;
const OCCIPITAL = /^(O|PO)\d*z?$/i;

/**
 * 'RAS' or 'ALS' from where the 10-10 names lie: the front is the mean of the frontal electrodes
 * minus the mean of the occipital ones, the left the mean over mirror pairs (C3 and C4: the same
 * letters, odd number n on the left, n + 1 on the right; 10-10 naming, common practice) of the
 * odd one minus the even one. null unless both directions lie mostly along one axis, in the sense
 * one of the two frames expects.
 */
function orientationFromNames(electrodes: FileElectrode[]): 'RAS' | 'ALS' | null {
  const mean = (sel: FileElectrode[]) =>
    sel.length === 0 ? null : [sel.reduce((s, e) => s + e.x, 0) / sel.length, sel.reduce((s, e) => s + e.y, 0) / sel.length];
  const frontal = mean(electrodes.filter((e) => FRONTAL.test(e.name)));
  const occipital = mean(electrodes.filter((e) => OCCIPITAL.test(e.name)));
  const byName = new Map(electrodes.map((e) => [e.name.toUpperCase(), e]));
  const left = [0, 0];
  let pairs = 0;
  for (const e of electrodes) {
    const m = /^([A-Z]+)(\d+)$/i.exec(e.name);
    if (!m || Number(m[2]) % 2 !== 1) continue;
    const mirror = byName.get(`${m[1].toUpperCase()}${Number(m[2]) + 1}`);
    if (!mirror) continue;
    left[0] += e.x - mirror.x;
    left[1] += e.y - mirror.y;
    pairs++;
  }
  if (!frontal || !occipital || pairs === 0) return null;
  const front = [frontal[0] - occipital[0], frontal[1] - occipital[1]];
  // RAS: front along +y, left along −x; ALS: front along +x, left along +y
  const along = (v: number[], axis: 0 | 1, sign: 1 | -1) => sign * v[axis] > 2 * Math.abs(v[1 - axis]);
  if (along(front, 1, 1) && along(left, 0, -1)) return 'RAS';
  if (along(front, 0, 1) && along(left, 1, 1)) return 'ALS';
  return null;
}
