// Clinical-export derivations through ingest, on recordings written by Debian's libedf (EDFlib,
// an EDF+ writer independent of ours; tests/edf/libedf.ts). Labels as clinical exports write
// them: "EEG C3-M2", "EEG C4-M1" (AASM derivations = the contralateral-mastoid montage, AASM
// Manual v2.x), "EEG Pz-Oz" (scalp to scalp: bipolar) and "EEG Pz-M1" (midline against one
// mastoid); and a monopolar recording ("EEG C3", "EEG M1", … against the amplifier's reference).
// Spectra are checked against scipy.signal.welch of the values given to libedf.
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compareDatabase } from '../../src/analysis/compare-runner.ts';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { runIngest } from '../../ingest/run.ts';
import { databaseFactsOf } from '../../src/analysis/report-facts.ts';
import { methodsReport } from '../../src/core/report/index.ts';
import { processRecording, resolveIngestParams } from '../../ingest/pipeline.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { electrodePosition } from '../../src/core/montage/positions.ts';
import { compileWithLibedf, READER_SOURCE, writerSource, type RefAnnotation, type RefSignal } from '../edf/libedf.ts';
import { makeTmpDir } from '../edf/helpers.ts';
import { maxRel, scipyStageMean } from '../helpers/scipy-stage-mean.ts';

const FS = 128;
const EPOCHS = 14; // 2 W, then 12 N2
const SECONDS = EPOCHS * 30;
const STAGES = Array.from({ length: EPOCHS }, (_, e) => (e < 2 ? 'W' : 'N2'));
const N2_EPOCHS = STAGES.map((s, e) => (s === 'N2' ? e : -1)).filter((e) => e >= 0);
// stage annotations as EDF+ texts (EDF+ 2003 §2.2.4 example "Sleep stage 2"), onsets in 100 µs
const ANNOTATIONS: RefAnnotation[] = STAGES.map((s, e) => ({
  onset100us: e * 30 * 10_000,
  duration100us: 30 * 10_000,
  text: s === 'W' ? 'Sleep stage W' : 'Sleep stage 2',
}));

/** C expression: a pseudo-random value in [−a, a) (fractional part of a scaled sine, a common hash), plus a sine. */
const noise = (seed: number, a: number, sineHz: number, sineUv: number) => {
  const u = `(sin((double)i*12.9898 + ${seed}.0)*43758.5453)`;
  return `${2 * a}.0*(${u} - floor(${u})) - ${a}.0 + ${sineUv}.0*sin(2*M_PI*${sineHz}.0*t)`;
};
const signal = (label: string, expr: string): RefSignal => ({ label, dim: 'uV', pmin: -500, pmax: 500, dmin: -32768, dmax: 32767, fs: FS, expr });

const aasm = (seed: number): RefSignal[] => [
  signal('EEG C3-M2', noise(seed + 1, 60, 11, 20)),
  signal('EEG C4-M1', noise(seed + 2, 50, 13, 15)),
  signal('EEG Pz-Oz', noise(seed + 3, 40, 9, 10)),
  signal('EEG Pz-M1', noise(seed + 4, 45, 7, 10)),
];
const monopolar = (seed: number): RefSignal[] => [
  signal('EEG C3', noise(seed + 1, 60, 11, 20)),
  signal('EEG C4', noise(seed + 2, 50, 13, 15)),
  signal('EEG M1', noise(seed + 3, 20, 3, 5)),
  signal('EEG M2', noise(seed + 4, 20, 3, 5)),
];

let tmp: ReturnType<typeof makeTmpDir>;
const planted = new Map<string, Float64Array[]>();

/** Writes one recording with libedf; keeps the exact values it was given (per signal). */
function write(name: string, signals: RefSignal[]): string {
  const exe = compileWithLibedf(tmp.dir, `writer_${name}`, writerSource(signals, ANNOTATIONS, SECONDS, 'X'));
  const file = path.join(tmp.dir, `${name}.edf`);
  const raw = path.join(tmp.dir, `${name}.raw`);
  execFileSync(exe, [file, raw]);
  const all = new Float64Array(readFileSync(raw).buffer.slice(0));
  planted.set(
    name,
    signals.map((_, k) => all.slice(k * FS * SECONDS, (k + 1) * FS * SECONDS)),
  );
  return file;
}

const rec = (subject: string, file: string): CohortRecording => ({
  row: 1,
  subject,
  session: null,
  group: null,
  recordingPath: file,
  scoringPath: null,
  covariates: {},
});

let aasmFile = '';
type Bundle = Awaited<ReturnType<typeof processRecording>>;
let bundle: Bundle;

beforeAll(async () => {
  tmp = makeTmpDir('derivations');
  // if gcc or libedf is missing this throws and every test fails (no skip)
  aasmFile = write('aasm', aasm(0));
  bundle = await processRecording(
    rec('aasm', aasmFile),
    resolveIngestParams({ references: ['recorded', 'contralateral-mastoid', 'linked-mastoids', 'average', 'bipolar'], fit: null }),
  );
}, 120_000);
afterAll(() => tmp?.cleanup());

describe('an AASM-style export (C3-M2, C4-M1, Pz-Oz, Pz-M1) through ingest', () => {
  it('stores each derivation under its own name and reference electrode, the scalp pair at its midpoint', () => {
    expect(bundle.channels.map((c) => [c.label, c.channel, c.referenceElectrode])).toEqual([
      ['EEG C3-M2', 'C3', 'M2'],
      ['EEG C4-M1', 'C4', 'M1'],
      ['EEG Pz-Oz', 'Pz-Oz', 'Oz'], // never "Pz": that is Pz-M1's name
      ['EEG Pz-M1', 'Pz', 'M1'],
    ]);
    const at = (ch: string) => bundle.channels.find((c) => c.channel === ch)!;
    const c3 = electrodePosition('C3')!;
    expect([at('C3').x, at('C3').y, at('C3').z]).toEqual([c3.x, c3.y, c3.z]);
    // Pz and Oz are 22.5° apart on the midline arc; POz lies halfway between them (10-10 spacing)
    const poz = electrodePosition('POz')!;
    expect(at('Pz-Oz').x).toBeCloseTo(poz.x, 12);
    expect(at('Pz-Oz').y).toBeCloseTo(poz.y, 12);
    expect(at('Pz-Oz').z).toBeCloseTo(poz.z, 12);
  });

  it('stores the AASM derivations also as contralateral-mastoid, the pair as bipolar, and skips what cannot be computed', () => {
    const channelsOf = (reference: string) => [...new Set(bundle.spectra.filter((s) => s.reference === reference).map((s) => s.channel))].sort();
    expect(channelsOf('recorded')).toEqual(['C3', 'C4', 'Pz', 'Pz-Oz']);
    expect(channelsOf('contralateral-mastoid')).toEqual(['C3', 'C4']);
    expect(channelsOf('bipolar')).toEqual(['Pz-Oz']);
    expect(channelsOf('linked-mastoids')).toEqual([]);
    expect(channelsOf('average')).toEqual([]);
    const skipped = Object.fromEntries(bundle.referenceSkips.map((s) => [s.reference, s.reason]));
    expect(Object.keys(skipped).sort()).toEqual(['average', 'linked-mastoids']);
    expect(skipped['linked-mastoids']).toMatch(/different references \(M2, M1, Oz\)/);
  });

  it('the contralateral-mastoid C3 spectrum equals scipy.signal.welch of the planted C3-M2 signal over the scored N2 epochs', () => {
    const rejected = new Set(bundle.rejections.filter((r) => r.channel === 'C3' && r.reference === 'contralateral-mastoid').map((r) => r.epoch));
    const epochs = N2_EPOCHS.filter((e) => !rejected.has(e));
    expect(epochs.length).toBeGreaterThanOrEqual(10); // white-like noise: few or no outlier epochs
    const stored = bundle.spectra.find((s) => s.channel === 'C3' && s.reference === 'contralateral-mastoid' && s.stage === 'N2' && s.averaging === 'mean')!;
    expect(stored.nEpochs).toBe(epochs.length);
    expect(stored.power.length).toBe(181);
    // the planted values: the file holds them as 16-bit samples, libedf truncating to a digital
    // step of 1000/65535 ≈ 0.015 µV, 4·10⁻⁴ of the signal's RMS (≈ 37 µV): differences of that order
    expect(maxRel(stored.power, scipyStageMean(planted.get('aasm')![0], FS, epochs))).toBeLessThan(2e-3);
    // the same samples as libedf reads them back: equal up to float32 storage
    const reader = compileWithLibedf(tmp.dir, 'reader', READER_SOURCE);
    const back = path.join(tmp.dir, 'aasm.back');
    execFileSync(reader, [aasmFile, back]);
    const decoded = new Float64Array(readFileSync(back).buffer.slice(0, FS * SECONDS * 8));
    expect(maxRel(stored.power, scipyStageMean(decoded, FS, epochs))).toBeLessThan(1e-4);
    const recorded = bundle.spectra.find((s) => s.channel === 'C3' && s.reference === 'recorded' && s.stage === 'N2' && s.averaging === 'mean')!;
    expect(Array.from(recorded.power)).toEqual(Array.from(stored.power));
  });
});

describe('a cohort mixing AASM exports and monopolar recordings', () => {
  let db = '';
  beforeAll(async () => {
    const dir = tmp.dir;
    const table = path.join(dir, 'cohort.tsv');
    // two of each kind, one of each kind per group
    writeFileSync(
      table,
      ['subject\tgroup\trecording', 'aasm1\tcontrol\taasm.edf', 'mono1\tcontrol\tmono.edf', 'aasm2\tpatient\taasm2.edf', 'mono2\tpatient\tmono2.edf'].join(
        '\n',
      ) + '\n',
    );
    write('aasm2', aasm(10));
    write('mono', monopolar(20));
    write('mono2', monopolar(30));
    db = path.join(dir, 'mixed.duckdb');
    const summary = await runIngest(table, db, { jobs: 1, params: { references: ['recorded', 'contralateral-mastoid'], fit: null, minEpochs: 5 } });
    expect(summary.failed).toEqual([]);
  }, 120_000);

  const contrast = (reference: string) =>
    parseContrast({
      design: 'groups',
      groups: ['control', 'patient'],
      stage: 'N2',
      reference,
      channels: ['C3', 'C4'],
      fminHz: 1,
      fmaxHz: 20,
      permutations: 10,
    });

  it("refuses to pool 'recorded' C3 and C4, naming the recordings and their references", async () => {
    const run = compareDatabase(db, contrast('recorded'), [], undefined, undefined, { threads: 1 });
    await expect(run).rejects.toThrow(/channel C3 .*different references/);
    const message = await run.catch((e: Error) => e.message);
    expect(message).toMatch(/M2 \(aasm1, aasm2\)/);
    expect(message).toMatch(/common reference.*\(mono1, mono2\)/);
    expect(message).toMatch(/channel C4 .*M1 \(aasm1, aasm2\)/);
  });

  it('runs on contralateral-mastoid: C3-M2 as recorded in the exports, C3 − M2 computed in the monopolar files', async () => {
    const r = await compareDatabase(db, contrast('contralateral-mastoid'), [], undefined, undefined, { threads: 1 });
    expect(r.n).toEqual({ control: 2, patient: 2 });
    expect(r.exclusions).toEqual([]);
    // the methods text states what each channel was recorded against, from the labels written above
    const facts = await databaseFactsOf(db, r.contrast);
    expect(facts.recordedDerivations).toEqual([
      { channel: 'C3', referenceElectrode: null, recordings: 2 },
      { channel: 'C3', referenceElectrode: 'M2', recordings: 2 },
      { channel: 'C4', referenceElectrode: null, recordings: 2 },
      { channel: 'C4', referenceElectrode: 'M1', recordings: 2 },
      { channel: 'M1', referenceElectrode: null, recordings: 2 },
      { channel: 'M2', referenceElectrode: null, recordings: 2 },
      { channel: 'Pz', referenceElectrode: 'M1', recordings: 2 },
      { channel: 'Pz-Oz', referenceElectrode: 'Oz', recordings: 2 },
    ]);
    expect(methodsReport(r, facts, null).markdown).toContain(
      'C3 against the common reference (none named in the label) in 2 recordings and M2 in 2 recordings; C4 against the common reference (none named in the label) in 2 recordings and M1 in 2 recordings. A channel recorded against the contralateral mastoid',
    );
  });
});
