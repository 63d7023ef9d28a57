/**
 * Electrode positions files of a cohort (Node side: reading the files; the parsing is
 * src/core/montage/electrodes-file.ts).
 *
 * A positions file is a tab-separated table with the columns name, x, y, z (the layout of a BIDS
 * `_electrodes.tsv`). Its unit and coordinate system come from a BIDS `_coordsystem.json`
 * (`EEGCoordinateUnits` m, cm or mm; `EEGCoordinateSystem`): in a BIDS folder the one that goes
 * with the electrodes file (required there, as BIDS requires it); for a positions file a cohort
 * table or `--positions` names, the `<stem>_coordsystem.json` beside a `<stem>_electrodes.tsv`
 * when there is one, else the unit given (`--positions-unit`, default mm) with x to the right ear,
 * y to the nose, z up.
 *
 * BIDS file names (specification, rules/files/raw/channels.yaml): electrodes
 * `sub-<label>[_ses-<label>][_acq-<label>][_run-<index>][_space-<label>]_electrodes.tsv`,
 * coordsystem `sub-<label>[_ses-<label>][_acq-<label>][_space-<label>]_coordsystem.json`; they
 * carry no task, so one file serves every recording of the session. A recording takes the
 * electrodes file of its folder whose entities it shares (acq and run when the file has them),
 * the one sharing most when several fit; two that fit equally (two spaces) are a problem.
 */
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { coordinateUnit, ElectrodesFileError, parseElectrodesTsv, type CoordinateUnit, type ElectrodeLayout } from '../../src/core/montage/electrodes-file.ts';

export { ElectrodesFileError };

/** Unit and coordinate system of a `_coordsystem.json` text; throws naming the file. */
export function parseCoordsystem(text: string, file: string): { unit: CoordinateUnit; system: string | null } {
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new ElectrodesFileError(`${file}: not valid JSON (${(e as Error).message})`);
  }
  const o = (json ?? {}) as Record<string, unknown>;
  if (o.EEGCoordinateUnits === undefined) throw new ElectrodesFileError(`${file}: EEGCoordinateUnits is missing (m, cm or mm)`);
  const system = typeof o.EEGCoordinateSystem === 'string' && o.EEGCoordinateSystem.trim() !== '' ? o.EEGCoordinateSystem : null;
  return { unit: coordinateUnit(o.EEGCoordinateUnits, file), system };
}

async function readText(abs: string): Promise<string | null> {
  try {
    return await readFile(abs, 'utf8');
  } catch {
    return null;
  }
}

/**
 * A positions file named by a cohort table or `--positions`: its `_coordsystem.json` when it is a
 * `<stem>_electrodes.tsv` with one beside it, else `unit` and RAS axes. `shown` names it in messages.
 */
export async function readPositionsFile(abs: string, shown: string, unit: CoordinateUnit): Promise<ElectrodeLayout> {
  const text = await readText(abs);
  if (text === null) throw new ElectrodesFileError(`${shown}: positions file cannot be read`);
  const m = /^(.*)_electrodes\.tsv$/i.exec(abs);
  const sidecarPath = m ? `${m[1]}_coordsystem.json` : null;
  const sidecar = sidecarPath ? await readText(sidecarPath) : null;
  const frame = sidecar !== null ? parseCoordsystem(sidecar, path.basename(sidecarPath!)) : { unit, system: null };
  return parseElectrodesTsv(text, { file: shown, unit: frame.unit, coordinateSystem: frame.system });
}

const ELECTRODE_ENTITIES = ['sub', 'ses', 'acq', 'run', 'space'] as const;

/** Entities of a BIDS `_electrodes.tsv` name, or null when it is not one. */
function electrodesEntities(name: string): Map<string, string> | null {
  const m = /^(.*)_electrodes\.tsv$/.exec(name);
  if (!m) return null;
  const entities = new Map<string, string>();
  let last = -1;
  for (const part of m[1].split('_')) {
    const dash = part.indexOf('-');
    const order = (ELECTRODE_ENTITIES as readonly string[]).indexOf(part.slice(0, dash));
    if (dash <= 0 || order <= last) return null;
    last = order;
    entities.set(part.slice(0, dash), part.slice(dash + 1));
  }
  return entities.has('sub') ? entities : null;
}

/**
 * The electrodes file of a BIDS recording (file names of its folder, the recording's entities),
 * or null when none fits; { ambiguous } when several fit equally.
 */
export function bidsElectrodesFile(folderFiles: readonly string[], recording: ReadonlyMap<string, string>): string | null | { ambiguous: string[] } {
  let best: { name: string; score: number }[] = [];
  for (const name of folderFiles) {
    const e = electrodesEntities(name);
    if (!e) continue;
    if (e.get('sub') !== recording.get('sub') || e.get('ses') !== recording.get('ses')) continue;
    if (['acq', 'run'].some((k) => e.has(k) && e.get(k) !== recording.get(k))) continue;
    const score = ['acq', 'run'].filter((k) => e.has(k)).length;
    if (best.length === 0 || score > best[0].score) best = [{ name, score }];
    else if (score === best[0].score) best.push({ name, score });
  }
  if (best.length === 0) return null;
  return best.length === 1 ? best[0].name : { ambiguous: best.map((b) => b.name) };
}

/** The `_coordsystem.json` name that goes with a BIDS electrodes file (the same entities without run). */
export function bidsCoordsystemName(electrodesName: string): string {
  const e = electrodesEntities(electrodesName)!;
  return (
    [...e]
      .filter(([k]) => k !== 'run')
      .map(([k, v]) => `${k}-${v}`)
      .join('_') + '_coordsystem.json'
  );
}
