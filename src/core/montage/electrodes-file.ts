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
 * standard templates (MNI…, fsaverage…) are RAS; the five identifiers in ALS below (the appendix's
 * x-to-the-nose systems) are ALS (x to the nose, y to the left ear, z up), so RAS = (−y, x, z). `Other` (its axes are in
 * free text) and names not in the list are taken as RAS, with a note.
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

const ALS = ['EEGLAB', 'EEGLAB-HJ', 'CTF', '4DBti', 'KitYokogawa'];
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
  const orientation = orientationOf(system);
  const notes = orientation === null ? [`${o.file}: coordinate system '${system}' does not name its axes; taken as x right, y front, z up (RAS)`] : [];
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
    // ALS → RAS: right = −left, front = x (BIDS appendix "Coordinate systems")
    electrodes.push(orientation === 'ALS' ? { name, x: -y, y: x, z } : { name, x, y, z });
  }
  if (electrodes.length === 0) throw new ElectrodesFileError(`${o.file}: no electrode has a position (x, y, z)`);
  return { file: o.file, coordinateSystem: system, unit: o.unit, electrodes, notes };
}
