import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fileSha256 } from '../../ingest/file-sha256.ts';
import { processRecording, resolveIngestParams } from '../../ingest/pipeline.ts';
import type { CohortRecording } from '../../ingest/cohort/types.ts';
import { openEdf } from '../../ingest/edf/reader.ts';
import { openStore } from '../../ingest/store/database.ts';
import { runPython } from '../helpers/python.ts';
import { FIXTURE_LABELS, writeFixtureEdf } from './fixture.ts';

// One invented recording: 9 channels (8 EEG incl. mastoids + EOG), 128 Hz, 48 epochs of 30 s,
// a 900-µV spike on C3 in epochs 5 and 21, and 13.5-Hz spindles in N2.
const dir = mkdtempSync(path.join(tmpdir(), 'bw-pipe-'));
const file = path.join(dir, 'rec.edf');
const rec: CohortRecording = { row: 1, subject: 's1', session: null, group: null, recordingPath: file, scoringPath: null, covariates: {} };
let stages: string[] = [];
type Bundle = Awaited<ReturnType<typeof processRecording>>;
let bundle: Bundle;
let ref: { spectra: Float64Array; nBins: number; nEpochs: number; labels: string[] };

beforeAll(async () => {
  stages = await writeFixtureEdf(file, { seed: 5, fsHz: 128, nEpochs: 48, artifactEpochs: [5, 21] });
  bundle = await processRecording(
    rec,
    resolveIngestParams({ references: ['recorded', 'linked-mastoids', 'average', 'bipolar'], bipolarPairs: ['F3-C3'], fit: null, epochSpectra: { maxHz: 30 } }),
  );
  // outside reference: numpy memmap decode of the EDF (Kemp et al. 1992) + scipy.signal.welch per epoch
  const out = path.join(dir, 'ref.f64');
  const summary = JSON.parse(
    execFileSync('python3', [path.join(import.meta.dirname, 'scipy_pipeline.py'), file, '30', '4', '45', out], { encoding: 'utf8' })
      .trim()
      .split('\n')
      .pop()!,
  );
  ref = { spectra: new Float64Array(readFileSync(out).buffer.slice(0)), nBins: summary.n_bins, nEpochs: summary.n_epochs, labels: summary.labels };
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const refEpoch = (e: number, label: string) => {
  const c = ref.labels.indexOf(label);
  return ref.spectra.subarray((e * ref.labels.length + c) * ref.nBins, (e * ref.labels.length + c + 1) * ref.nBins);
};
const maxRel = (a: ArrayLike<number>, b: ArrayLike<number>, from = 1) => {
  let m = 0;
  for (let k = from; k < b.length; k++) m = Math.max(m, Math.abs(a[k] - b[k]) / Math.abs(b[k]));
  return m;
};

describe('processRecording', () => {
  it('stores stage-mean spectra equal to scipy.signal.welch averaged over the same clean epochs', () => {
    expect(ref.nEpochs).toBe(48);
    const spectra = bundle.spectra.filter((s) => s.reference === 'recorded' && s.averaging === 'mean');
    expect(spectra.length).toBe(8 * 5); // 8 EEG channels × 5 stages (EOG not selected)
    for (const s of spectra) {
      const rejected = new Set(bundle.rejections.filter((r) => r.channel === s.channel && r.reference === 'recorded').map((r) => r.epoch));
      const rows = stages.map((st, e) => (st === s.stage && !rejected.has(e) ? e : -1)).filter((e) => e >= 0);
      expect(s.nEpochs).toBe(rows.length);
      expect(s.nSegments).toBe(rows.length * 14); // (30 − 4)/2 + 1 segments per epoch
      expect(s.freqStepHz).toBe(0.25);
      expect(s.power.length).toBe(181); // 0 … 45 Hz
      const mean = new Float64Array(ref.nBins);
      for (const e of rows) refEpoch(e, `EEG ${s.channel}`).forEach((v, k) => (mean[k] += v / rows.length));
      expect(maxRel(s.power, mean)).toBeLessThan(1e-4); // Float32 storage
    }
  });

  it('rejects the planted spikes by amplitude and keeps rejections rare elsewhere', () => {
    const recorded = bundle.rejections.filter((r) => r.reference === 'recorded');
    const c3 = recorded.filter((r) => r.channel === 'C3' && r.reason === 'amplitude').map((r) => r.epoch);
    expect(c3).toEqual([5, 21]);
    const others = recorded.filter((r) => r.reason === 'amplitude' && r.channel !== 'C3');
    expect(others).toEqual([]);
    // the spike is C3's own, so C3 against the linked mastoids is rejected in the same epochs
    expect(bundle.rejections.filter((r) => r.reference === 'linked-mastoids' && r.channel === 'C3' && r.reason === 'amplitude').map((r) => r.epoch)).toEqual([
      5, 21,
    ]);
    // modified z > 3.5 on Gaussian-like log powers: expect only a few percent of epochs
    const outliers = recorded.filter((r) => r.reason.endsWith('outlier'));
    expect(outliers.length / (48 * 8)).toBeLessThan(0.06);
  });

  it('stores the rejections of every reference: each spectrum averages the stage epochs minus those rejected for its channel and reference', () => {
    const refs = new Set(bundle.rejections.map((r) => r.reference));
    expect([...refs].sort()).toEqual(['average', 'bipolar', 'linked-mastoids', 'recorded']);
    for (const s of bundle.spectra) {
      const rejected = new Set(bundle.rejections.filter((r) => r.channel === s.channel && r.reference === s.reference).map((r) => r.epoch));
      const expected = stages.filter((st, e) => st === s.stage && !rejected.has(e)).length;
      expect(s.nEpochs, `${s.reference} ${s.channel} ${s.stage}`).toBe(expected);
    }
  });

  it('re-references before the spectrum: linked mastoids and bipolar equal scipy on the derived signals', async () => {
    // outlier rule off, so the clean epochs are known: W epochs minus the C3 spike epoch 5
    const b2 = await processRecording(
      rec,
      resolveIngestParams({
        references: ['linked-mastoids', 'bipolar'],
        bipolarPairs: ['F3-C3'],
        rejection: { ...resolveIngestParams().rejection, outlierZ: 1e9 },
        fit: null,
      }),
    );
    const rows = stages.map((st, e) => (st === 'W' && e !== 5 ? e : -1)).filter((e) => e >= 0);
    const lm = b2.spectra.find((s) => s.reference === 'linked-mastoids' && s.channel === 'C3' && s.stage === 'W' && s.averaging === 'mean')!;
    const bp = b2.spectra.find((s) => s.reference === 'bipolar' && s.channel === 'F3-C3' && s.stage === 'W' && s.averaging === 'mean')!;
    expect([lm.nEpochs, bp.nEpochs]).toEqual([rows.length, rows.length]);
    const edf = await openEdf(file);
    const x = new Float64Array(9 * 48 * 3840);
    for await (const blk of edf.readEpochs({ signals: [0, 1, 2, 3, 4, 5, 6, 7, 8], epochS: 30 })) {
      blk.data!.forEach((d, c) => x.set(d, c * 48 * 3840 + blk.epoch * 3840));
    }
    await edf.close();
    // outside reference: scipy.signal.welch on C3 − (M1+M2)/2 and F3 − C3, mean over the same epochs
    const expected = runPython<number[][]>(
      `from scipy.signal import welch
x = numpy.fromfile(inputs['x']).reshape(9, -1)
lab = ${JSON.stringify(FIXTURE_LABELS.map((l) => l.split(' ')[1]))}
i = {l: k for k, l in enumerate(lab)}
sigs = [x[i['C3']] - (x[i['M1']] + x[i['M2']]) / 2, x[i['F3']] - x[i['C3']]]
out = []
for sig in sigs:
    ps = [welch(sig[e * 3840:(e + 1) * 3840], 128, nperseg=512, noverlap=256)[1][:181] for e in ${JSON.stringify(rows)}]
    out.append(numpy.mean(ps, axis=0).tolist())
print(json.dumps(out))`,
      { x },
    );
    expect(maxRel(lm.power, expected[0])).toBeLessThan(1e-4);
    expect(maxRel(bp.power, expected[1])).toBeLessThan(1e-4);
    expect(bundle.spectra.some((s) => s.reference === 'average' && s.channel === 'M1')).toBe(false); // mastoids out of the average
    expect(bundle.referenceSkips).toEqual([]);
  });

  it("stores each epoch's spectrum (--epoch-spectra) to 30 Hz, log10 power within half a quantisation step of scipy's", async () => {
    expect(bundle.epochSpectra!.map((b) => b.channel)).toEqual(['F3', 'F4', 'C3', 'C4', 'O1', 'O2', 'M1', 'M2']);
    let worst = 0;
    for (const b of bundle.epochSpectra!) {
      expect(b.reference).toBe('recorded');
      expect(b.nBins).toBe(121); // 0 … 30 Hz at 0.25 Hz
      expect(Array.from(b.epoch)).toEqual(Array.from({ length: 48 }, (_, e) => e)); // rejected epochs keep their row
      for (let i = 0; i < b.epoch.length; i++) {
        const p = refEpoch(b.epoch[i], `EEG ${b.channel}`);
        for (let k = 0; k < b.nBins; k++) {
          const stored = b.log10Min[i] + b.levels[i * b.nBins + k] * b.log10Step[i];
          // uniform quantisation: at most half a step (common practice), plus the 32-bit spectrum (1e-4 relative → 4.4e-5 log10)
          worst = Math.max(worst, Math.abs(stored - Math.log10(p[k])) / (b.log10Step[i] / 2 + 4.4e-5));
        }
      }
    }
    expect(worst).toBeLessThanOrEqual(1);
    // written and read back through DuckDB: the levels list (USMALLINT[]) and the row's lo and step
    const store = await openStore(path.join(dir, 'es.duckdb'), { create: true });
    const { runId } = await store.beginRun('0.1.0', {});
    const id = await store.writeRecording({ ...bundle, runId });
    const rows = await store.exclusive(async () =>
      (
        await store.connection.runAndReadAll(
          "SELECT epoch, log10_min, log10_step, levels FROM epoch_spectra WHERE recording_id = $1 AND channel = 'C4' ORDER BY epoch",
          [id],
        )
      ).getRowObjectsJS(),
    );
    await store.close();
    const c4 = bundle.epochSpectra!.find((b) => b.channel === 'C4')!;
    expect(rows.length).toBe(48);
    expect(rows[7].log10_min).toBe(c4.log10Min[7]);
    expect(rows[7].log10_step).toBe(c4.log10Step[7]);
    expect(rows[7].levels).toEqual(Array.from(c4.levels.subarray(7 * 121, 8 * 121)));
  });

  it('stores epoch band powers equal to the mean density of scipy bins, and the file SHA-256', async () => {
    const block = bundle.bandPowers.find((b) => b.reference === 'recorded')!;
    expect(block.bands).toEqual(['delta', 'theta', 'alpha', 'sigma', 'beta', 'broadband']);
    const c = block.channels.indexOf('O2');
    const sigma = block.bands.indexOf('sigma');
    const e = 20;
    let row = -1;
    for (let i = 0; i < block.power.length; i++) if (block.channelIdx[i] === c && block.epoch[i] === e && block.bandIdx[i] === sigma) row = i;
    const p = refEpoch(e, 'EEG O2');
    let s = 0;
    for (let k = 48; k <= 64; k++) s += p[k]; // 12–16 Hz at 0.25 Hz, both ends included
    expect(Math.abs(block.power[row] - s / 17) / (s / 17)).toBeLessThan(1e-4);
    // outside reference: sha256sum (coreutils)
    const sum = execFileSync('sha256sum', [file], { encoding: 'utf8' }).split(' ')[0];
    expect(bundle.recording.fileSha256).toBe(sum);
    expect(await fileSha256(file)).toBe(sum);
    expect(bundle.recording.nEpochs).toBe(48);
    expect(bundle.recording.stageMin).toMatchObject({ N2: 8 * 2 * 0.5 });
  });
});
