/**
 * Writes a simulated cohort to disk: one EDF+C file per subject (µV, 16-bit, 1-s records, the
 * stages as "Sleep stage …" annotations), a scoring TSV per subject (onset, duration, stage), the
 * cohort table participants.tsv and truth.json (everything planted). Epochs are generated and
 * written one at a time, so memory stays small whatever the night length.
 */
import { mkdir, readFile, writeFile } from 'node:fs/promises';
import path from 'node:path';
import { listSubjects, NightGenerator, planNight, truthOf, type NightPlan, type Scenario } from '../core/simulate/index.ts';
import { EdfWriter, type EdfWriteSpec } from './edf-writer.ts';
import { parseScenario, ScenarioFileError } from './scenario-schema.ts';

/** Physical range of every EEG signal, µV: with digital −32768 … 32767 one step is 0.1 µV. */
export const PHYSICAL_MIN_UV = -3276.8;
export const PHYSICAL_MAX_UV = 3276.7;
const RECORD_S = 1;

export interface SimulateProgress {
  subject: string;
  subjectsDone: number;
  subjectsTotal: number;
  epochsDone: number;
  epochsTotal: number;
}

export interface SimulatedCohortFiles {
  recordings: string[];
  truthPath: string;
  participantsPath: string;
}

export async function loadScenario(scenario: unknown): Promise<Scenario> {
  if (typeof scenario !== 'string') return parseScenario(scenario, 'scenario');
  let text: string;
  try {
    text = await readFile(scenario, 'utf8');
  } catch (e) {
    throw new ScenarioFileError(scenario, [`cannot be read: ${(e as Error).message}`]);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new ScenarioFileError(scenario, [`is not valid JSON: ${(e as Error).message}`]);
  }
  return parseScenario(json, scenario);
}

export const recordingName = (subject: string): string => `${subject}.edf`;
export const scoringName = (subject: string): string => `${subject}_scoring.tsv`;

/** The cohort table; recording and scoring paths are `${prefix}<subject>.edf` etc. */
export function participantsTsv(scenario: Scenario, prefix = ''): string {
  const rows = ['subject\tgroup\trecording\tscoring\tage\tsex\tscore'];
  for (const s of listSubjects(scenario)) {
    rows.push([s.code, s.group, prefix + recordingName(s.code), prefix + scoringName(s.code), s.age, s.sex, s.score].join('\t'));
  }
  return rows.join('\n') + '\n';
}

/** The scoring table of one night: one row per epoch, onset and duration in s. */
export function scoringTsv(plan: NightPlan): string {
  const rows = ['onset\tduration\tstage'];
  plan.stages.forEach((st, i) => rows.push(`${i * plan.epochS}\t${plan.epochS}\t${st}`));
  return rows.join('\n') + '\n';
}

export function edfSpec(plan: NightPlan, scenario: Scenario): EdfWriteSpec {
  return {
    variant: 'EDF+C',
    startDate: scenario.startDate,
    recordDurationS: RECORD_S,
    signals: plan.channels.map((ch) => ({
      label: `EEG ${ch}-${plan.reference.label}`,
      transducer: 'simulated EEG electrode',
      physicalDimension: 'uV',
      physicalMin: PHYSICAL_MIN_UV,
      physicalMax: PHYSICAL_MAX_UV,
      digitalMin: -32768,
      digitalMax: 32767,
      prefilter: `HP:${scenario.highPassHz}Hz (simulated)`,
      samplesPerRecord: plan.fsHz * RECORD_S,
    })),
    annotations: plan.stages.map((st, i) => ({ onsetS: i * plan.epochS, durationS: plan.epochS, text: `Sleep stage ${st}` })),
  };
}

/** Writes one subject's night as EDF+C, epoch by epoch. */
export async function writeNightEdf(file: string, plan: NightPlan, scenario: Scenario, onEpoch?: (done: number) => void): Promise<void> {
  const writer = await EdfWriter.open(file, edfSpec(plan, scenario));
  try {
    const gen = new NightGenerator(plan);
    const out = plan.channels.map(() => new Float32Array(plan.epochSamples));
    for (let e = 0; e < plan.nEpochs; e++) {
      gen.generate(e, out);
      await writer.writeRecords(out);
      onEpoch?.(e + 1);
    }
  } finally {
    await writer.close();
  }
}

/**
 * Validates the scenario (an object or a path to a JSON file) and writes the cohort into outDir:
 * <subject>.edf, <subject>_scoring.tsv, participants.tsv (paths relative to outDir), truth.json.
 */
export async function writeSimulatedCohort(
  scenarioOrPath: unknown,
  outDir: string,
  options: { onProgress?: (p: SimulateProgress) => void } = {},
): Promise<SimulatedCohortFiles> {
  const scenario = await loadScenario(scenarioOrPath);
  await mkdir(outDir, { recursive: true });
  const subjects = listSubjects(scenario);
  const recordings: string[] = [];
  const truth = truthOf(scenario, []);
  for (const s of subjects) {
    const plan = planNight(scenario, s.index);
    const file = path.join(outDir, recordingName(s.code));
    const progress = (epochsDone: number): void =>
      options.onProgress?.({ subject: s.code, subjectsDone: s.index, subjectsTotal: subjects.length, epochsDone, epochsTotal: plan.nEpochs });
    progress(0);
    await writeNightEdf(file, plan, scenario, progress);
    await writeFile(path.join(outDir, scoringName(s.code)), scoringTsv(plan));
    recordings.push(file);
    truth.subjects.push(plan.truth);
  }
  const participantsPath = path.join(outDir, 'participants.tsv');
  await writeFile(participantsPath, participantsTsv(scenario));
  const truthPath = path.join(outDir, 'truth.json');
  await writeFile(truthPath, JSON.stringify(truth, null, 1) + '\n');
  return { recordings, truthPath, participantsPath };
}
