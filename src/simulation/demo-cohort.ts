/**
 * The demo cohort: demo-cohort/scenario.json and demo-cohort/participants.tsv are committed; the
 * recordings are generated on first use into demo-cohort/recordings/ (git-ignored). A stamp file
 * beside them holds the SHA-256 of the scenario file and the generator version, so they are made
 * again only when either changed (or a file is missing).
 */
import { createHash } from 'node:crypto';
import { access, readFile, rm, writeFile } from 'node:fs/promises';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { listSubjects } from '../core/simulate/index.ts';
import { loadScenario, recordingName, scoringName, writeSimulatedCohort, type SimulatedCohortFiles, type SimulateProgress } from './write-cohort.ts';

/** Raise when the generator's output changes for the same scenario. */
export const GENERATOR_VERSION = 1;
export const STAMP_FILE = '.scenario-sha256';

export const DEMO_DIR = fileURLToPath(new URL('../../demo-cohort/', import.meta.url));
export const DEMO_SCENARIO = path.join(DEMO_DIR, 'scenario.json');
export const DEMO_RECORDINGS = path.join(DEMO_DIR, 'recordings');

export interface EnsuredCohort extends SimulatedCohortFiles {
  /** false when the files were already up to date. */
  generated: boolean;
}

async function exists(file: string): Promise<boolean> {
  try {
    await access(file);
    return true;
  } catch {
    return false;
  }
}

/** SHA-256 of the scenario file's bytes and the generator version. */
export async function scenarioStamp(scenarioPath: string): Promise<string> {
  const bytes = await readFile(scenarioPath);
  return createHash('sha256').update(`bandwise-simulate v${GENERATOR_VERSION}\n`).update(bytes).digest('hex');
}

/** Generates the cohort of scenarioPath into outDir unless the stamp there says it is up to date. */
export async function ensureCohort(scenarioPath: string, outDir: string, options: { onProgress?: (p: SimulateProgress) => void } = {}): Promise<EnsuredCohort> {
  const scenario = await loadScenario(scenarioPath);
  const stamp = await scenarioStamp(scenarioPath);
  const stampPath = path.join(outDir, STAMP_FILE);
  const subjects = listSubjects(scenario);
  const files: SimulatedCohortFiles = {
    recordings: subjects.map((s) => path.join(outDir, recordingName(s.code))),
    truthPath: path.join(outDir, 'truth.json'),
    participantsPath: path.join(outDir, 'participants.tsv'),
  };
  const needed = [...files.recordings, ...subjects.map((s) => path.join(outDir, scoringName(s.code))), files.truthPath, files.participantsPath];
  const current = (await exists(stampPath)) ? (await readFile(stampPath, 'utf8')).trim() : null;
  if (current === stamp && (await Promise.all(needed.map(exists))).every(Boolean)) return { ...files, generated: false };
  await rm(stampPath, { force: true }); // an interrupted run leaves no stamp
  const written = await writeSimulatedCohort(scenario, outDir, options);
  await writeFile(stampPath, stamp + '\n');
  return { ...written, generated: true };
}

/**
 * Makes sure demo-cohort/recordings/ holds the demo. participantsPath is the committed
 * demo-cohort/participants.tsv (paths recordings/<subject>.edf), the table to ingest.
 */
export async function ensureDemoCohort(options: { onProgress?: (p: SimulateProgress) => void } = {}): Promise<EnsuredCohort> {
  const result = await ensureCohort(DEMO_SCENARIO, DEMO_RECORDINGS, options);
  return { ...result, participantsPath: path.join(DEMO_DIR, 'participants.tsv') };
}

/**
 * Ingest parameters of the demo database (bandwise demo and the tests on the demo): the recorded
 * reference and linked mastoids, so reference choices can be compared; everything else default.
 */
export const DEMO_INGEST_PARAMS = { references: ['recorded', 'linked-mastoids'] } as const;
