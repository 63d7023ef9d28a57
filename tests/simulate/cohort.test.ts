/**
 * A small simulated cohort written to disk and read back: the EDF+C files through the project's
 * reader (ingest/edf/reader.ts) and checked against the EDF/EDF+ specifications (Kemp et al. 1992;
 * Kemp & Olivan 2003: header bytes 256 + 256·ns, file size = header + records × 2 bytes per
 * sample, the "EDF+C" reserved field, the annotation signal), the scoring TSV through the
 * scoring reader, the cohort table's columns, truth.json, the stamp logic, and scenario errors.
 */
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { NightGenerator, planNight, type Scenario } from '../../src/core/simulate/index.ts';
import { openEdf } from '../../ingest/edf/reader.ts';
import { readScoringTable } from '../../ingest/hypnogram/table.ts';
import { DEMO_DIR, ensureCohort, loadScenario, participantsTsv, ScenarioFileError, writeSimulatedCohort } from '../../src/simulation/index.ts';
import { baseScenario } from './scenarios.ts';

const scenario: Scenario = baseScenario({
  nightMin: 3,
  channels: ['C3', 'Cz', 'O2', 'M1', 'M2'],
  groups: [
    { name: 'control', codePrefix: 'ctl', size: 2, fsHz: 256, covariates: { ageMean: 40, ageSd: 10, femaleFraction: 0.5, scoreMean: 10, scoreSd: 3 } },
    { name: 'patient', codePrefix: 'pat', size: 1, fsHz: 128, covariates: { ageMean: 45, ageSd: 10, femaleFraction: 0.5, scoreMean: 20, scoreSd: 3 } },
  ],
  rhythms: [
    {
      name: 'fast-spindle',
      kind: 'bursts',
      site: 'CPz',
      widthDeg: 40,
      centerHz: 13.5,
      amplitudeUv: 15,
      durationS: [0.5, 2],
      burstFrequencySdHz: 0.3,
      perMinute: { N2: 5 },
    },
  ],
  artifacts: [{ kind: 'flat', subject: 'ctl02', channel: 'O2', valueUv: 0, noiseSdUv: 0 }],
});

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), 'bw-sim-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('writeSimulatedCohort', () => {
  it('writes EDF+C files that read back to the generated samples, stages and header fields', async () => {
    const out = path.join(dir, 'cohort');
    const progress: string[] = [];
    const files = await writeSimulatedCohort(scenario, out, { onProgress: (p) => progress.push(`${p.subject}:${p.epochsDone}`) });
    expect(files.recordings.map((f) => path.basename(f))).toEqual(['ctl01.edf', 'ctl02.edf', 'pat01.edf']);
    expect(progress).toContain('pat01:6');

    for (const [i, file] of files.recordings.entries()) {
      const plan = planNight(scenario, i);
      const edf = await openEdf(file);
      try {
        const h = edf.header;
        const ns = scenario.channels.length + 1; // + "EDF Annotations"
        expect(h.variant).toBe('EDF+C');
        expect(h.startDate).toBe('2023-01-02T23:00:00');
        expect(h.headerBytes).toBe(256 + 256 * ns); // EDF 1992 §2.1
        expect(h.nRecords).toBe(180);
        expect(h.recordDurationS).toBe(1);
        const bytesPerRecord = h.signals.reduce((a, s) => a + 2 * s.samplesPerRecord, 0);
        expect(statSync(file).size).toBe(h.headerBytes + h.nRecords * bytesPerRecord); // EDF 1992 §2.2
        const eeg = h.signals.filter((s) => !s.isAnnotation);
        expect(eeg.map((s) => s.label)).toEqual(scenario.channels.map((c) => `EEG ${c}-REF`));
        expect(eeg.every((s) => s.fsHz === plan.fsHz && s.physicalDimension === 'uV' && s.digitalMin === -32768 && s.digitalMax === 32767)).toBe(true);
        expect(edf.annotations.map((a) => [a.onsetS, a.durationS, a.texts[0]])).toEqual(plan.stages.map((st, e) => [30 * e, 30, `Sleep stage ${st}`]));

        const gen = new NightGenerator(plan);
        const expected = plan.channels.map(() => new Float32Array(plan.epochSamples));
        let epochs = 0;
        let worst = 0;
        for await (const block of edf.readEpochs({ signals: eeg.map((s) => s.index), epochS: 30 })) {
          gen.generate(block.epoch, expected);
          block.data!.forEach((x, c) => {
            for (let t = 0; t < x.length; t++) worst = Math.max(worst, Math.abs(x[t] - expected[c][t]));
          });
          epochs++;
        }
        expect(epochs).toBe(6);
        // 16-bit samples of 0.1 µV: within half a step (plus float rounding)
        expect(worst).toBeLessThan(0.0501);
      } finally {
        await edf.close();
      }
      const scoring = await readScoringTable(path.join(out, `${path.basename(file, '.edf')}_scoring.tsv`));
      expect(scoring.stages).toEqual(plan.stages);
    }

    const table = readFileSync(files.participantsPath, 'utf8')
      .trim()
      .split('\n')
      .map((l) => l.split('\t'));
    expect(table[0]).toEqual(['subject', 'group', 'recording', 'scoring', 'age', 'sex', 'score']);
    expect(table.slice(1).map((r) => [r[0], r[1], r[2], r[3]])).toEqual([
      ['ctl01', 'control', 'ctl01.edf', 'ctl01_scoring.tsv'],
      ['ctl02', 'control', 'ctl02.edf', 'ctl02_scoring.tsv'],
      ['pat01', 'patient', 'pat01.edf', 'pat01_scoring.tsv'],
    ]);
    const truth = JSON.parse(readFileSync(files.truthPath, 'utf8'));
    expect(truth.subjects.map((s: { subject: string }) => s.subject)).toEqual(['ctl01', 'ctl02', 'pat01']);
    expect(truth.subjects[1].artifacts).toEqual([{ kind: 'flat', channel: 'O2', valueUv: 0, noiseSdUv: 0 }]);
  });

  it('ensureCohort regenerates only when the scenario file changed', async () => {
    const file = path.join(dir, 'scenario.json');
    const out = path.join(dir, 'stamped');
    writeFileSync(file, JSON.stringify({ ...scenario, groups: [scenario.groups[1]], artifacts: [] }));
    expect((await ensureCohort(file, out)).generated).toBe(true);
    expect((await ensureCohort(file, out)).generated).toBe(false);
    writeFileSync(file, JSON.stringify({ ...scenario, seed: 12, groups: [scenario.groups[1]], artifacts: [] }));
    expect((await ensureCohort(file, out)).generated).toBe(true);
  });

  it('rejects bad scenarios with the file and the field named', async () => {
    const file = path.join(dir, 'bad.json');
    writeFileSync(file, JSON.stringify({ ...scenario, epochS: -30 }));
    await expect(writeSimulatedCohort(file, path.join(dir, 'x'))).rejects.toThrow(ScenarioFileError);
    await expect(writeSimulatedCohort(file, path.join(dir, 'x'))).rejects.toThrow(/bad\.json[\s\S]*field 'epochS'/);
    await expect(writeSimulatedCohort({ ...scenario, channels: ['C3', 'Q7'] }, path.join(dir, 'x'))).rejects.toThrow(/channels\[1\].*Q7/);
    await expect(writeSimulatedCohort({ ...scenario, extra: 1 }, path.join(dir, 'x'))).rejects.toThrow(/extra/);
    writeFileSync(file, '{ not json');
    await expect(writeSimulatedCohort(file, path.join(dir, 'x'))).rejects.toThrow(/not valid JSON/);
  });
});

describe('the demo cohort', () => {
  it('its committed participants.tsv is the one the scenario generates (paths under recordings/)', async () => {
    const demo = await loadScenario(path.join(DEMO_DIR, 'scenario.json'));
    expect(readFileSync(path.join(DEMO_DIR, 'participants.tsv'), 'utf8')).toBe(participantsTsv(demo, 'recordings/'));
  });

  it('plants what its description says: 18 + 18 subjects, 13 channels, five at 128 Hz, the effects and artifacts', async () => {
    const demo = await loadScenario(path.join(DEMO_DIR, 'scenario.json'));
    expect(demo.groups.map((g) => g.size)).toEqual([18, 18]);
    expect(demo.channels).toHaveLength(13);
    expect(demo.channels).toEqual(expect.arrayContaining(['M1', 'M2']));
    expect(Object.values(demo.subjects ?? {}).filter((s) => s.fsHz === 128)).toHaveLength(5);
    expect(demo.effects).toEqual([
      { kind: 'offset', group: 'patient', deltaLog10: 0.15 },
      { kind: 'rhythm-amplitude', group: 'patient', rhythm: 'fast-spindle', factor: 0.5 },
    ]);
    expect(demo.artifacts.map((a) => a.kind).sort()).toEqual(['flat', 'mains', 'movement']);
    for (const word of ['+0.15', 'half the amplitude', '50 Hz', 'flat O2', '25 %']) expect(demo.description).toContain(word);
  });
});
