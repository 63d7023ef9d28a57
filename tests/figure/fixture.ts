/**
 * A compare result for the figure tests: 7 channels with 10-10 names, 2 × 14 subjects with 1/f
 * spectra and noise, group "patient" with 1.8× power at 12–15 Hz over the central and parietal
 * channels (invented values), 200 permutations, seed 5. Written to a JSON file as
 * `bandwise compare --out` writes it.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { compare, type CompareResult } from '../../src/core/contrast/run.ts';
import type { ContrastData, SpectrumRow } from '../../src/core/contrast/data.ts';
import { Random } from '../../src/core/stats/random.ts';

export const CHANNELS = ['Fz', 'F3', 'Cz', 'C3', 'C4', 'Pz', 'P3'];
const STEP = 0.5;
const NBINS = 61; // 0 … 30 Hz

function cohort(nPerGroup: number, seed: number): ContrastData {
  const rng = new Random(seed);
  const rows: SpectrumRow[] = [];
  const participants: ContrastData['participants'] = [];
  for (let s = 0; s < 2 * nPerGroup; s++) {
    const subject = `sub-${String(s + 1).padStart(2, '0')}`;
    const group = s < nPerGroup ? 'control' : 'patient';
    participants.push({ subject, group, age: 30 + s });
    const level = Math.exp(0.2 * rng.normal());
    for (const channel of CHANNELS) {
      const power = new Float32Array(NBINS);
      for (let k = 0; k < NBINS; k++) {
        const f = Math.max(k * STEP, 0.5);
        const boost = group === 'patient' && !channel.startsWith('F') && f >= 12 && f <= 15 ? 1.8 : 1;
        power[k] = ((100 * level) / f) * boost * Math.exp(0.1 * rng.normal());
      }
      rows.push({ subject, session: null, channel, stage: 'N2', nEpochs: 60, flagged: false, flagReason: null, power });
    }
  }
  return { spectra: { freqStartHz: 0, freqStepHz: STEP, nBins: NBINS, rows }, aperiodic: [], peaks: [], participants, exclusions: [] };
}

export function figureResult(): CompareResult {
  const c = parseContrast({
    design: 'groups',
    groupColumn: 'group',
    groups: ['control', 'patient'],
    stage: 'N2',
    fminHz: 1,
    fmaxHz: 30,
    permutations: 200,
    seed: 5,
  });
  return compare(c, cohort(14, 11));
}

/** The result written as a JSON file in a new temporary folder; returns the folder and the file. */
export function writeResultFile(result: CompareResult): { dir: string; file: string } {
  const dir = mkdtempSync(path.join(tmpdir(), 'bw-figure-'));
  const file = path.join(dir, 'result.json');
  writeFileSync(file, JSON.stringify(result));
  return { dir, file };
}
