/**
 * A recording with channels at very different sampling rates, written by an independent writer
 * (Debian's libedf, EDFlib, through tests/edf/libedf.ts): EEG C3 and C4 at 256 Hz, and EMG at
 * 1, 20, 64 (stored in mV) and 512 Hz, 1-s data records, EDF+ stage annotations every 30 s.
 * Signals are sines plus deterministic pseudo-random noise (a C expression of the sample index),
 * so the content is planted; libedf also reads the file back, giving the physical samples as
 * stored (the planted signal after 16-bit quantisation) for the scipy reference.
 */
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { compileWithLibedf, parseReaderOutput, READER_SOURCE, writerSource, type RefAnnotation, type RefSignal } from '../edf/libedf.ts';

export const MIXED_EPOCHS = 12;
const SECONDS = MIXED_EPOCHS * 30;
/** Uniform pseudo-random value in [−0.5, 0.5) from the sample index (a linear congruential step), times amp. */
const noise = (amp: number, salt: number) => `${amp.toFixed(3)}*((double)((((unsigned)i*1103515245u + ${salt}u) >> 16) & 0x7fff)/32768.0 - 0.5)`;

/** The signals of one recording; seed shifts every noise stream and scales the EEG (another invented subject). */
export function mixedSignals(seed = 0): RefSignal[] {
  const g = (1 + 0.1 * seed).toFixed(3);
  return [
    {
      label: 'EEG C3',
      dim: 'uV',
      pmin: -400,
      pmax: 400,
      dmin: -32768,
      dmax: 32767,
      fs: 256,
      expr: `${g}*(30.0*sin(2*M_PI*10.0*t) + 12.0*sin(2*M_PI*13.5*t)) + ${noise(40, 12345 + seed)}`,
    },
    {
      label: 'EEG C4',
      dim: 'uV',
      pmin: -400,
      pmax: 400,
      dmin: -32768,
      dmax: 32767,
      fs: 256,
      expr: `${g}*(25.0*sin(2*M_PI*6.0*t) + 8.0*sin(2*M_PI*31.0*t)) + ${noise(30, 777 + seed)}`,
    },
    { label: 'EMG Slow', dim: 'uV', pmin: -200, pmax: 200, dmin: -32768, dmax: 32767, fs: 1, expr: `20.0*sin(2*M_PI*0.05*t) + ${noise(10, 31 + seed)}` },
    { label: 'EMG Chin', dim: 'uV', pmin: -200, pmax: 200, dmin: -32768, dmax: 32767, fs: 20, expr: `15.0*sin(2*M_PI*3.0*t) + ${noise(20, 4242 + seed)}` },
    { label: 'EMG Leg', dim: 'mV', pmin: -0.2, pmax: 0.2, dmin: -32768, dmax: 32767, fs: 64, expr: `0.01*sin(2*M_PI*20.0*t) + ${noise(0.02, 99 + seed)}` },
    { label: 'EMG Fast', dim: 'uV', pmin: -200, pmax: 200, dmin: -32768, dmax: 32767, fs: 512, expr: `10.0*sin(2*M_PI*40.0*t) + ${noise(25, 5150 + seed)}` },
  ];
}

export const MIXED_SIGNALS = mixedSignals(0);

/** Stages of the 12 epochs: 4 W then 8 N2, as annotated. */
export const MIXED_STAGES = ['W', 'W', 'W', 'W', 'N2', 'N2', 'N2', 'N2', 'N2', 'N2', 'N2', 'N2'] as const;

const ANNOTATIONS: RefAnnotation[] = MIXED_STAGES.map((s, e) => ({
  onset100us: e * 300000,
  duration100us: 300000,
  text: s === 'W' ? 'Sleep stage W' : 'Sleep stage 2',
}));

/**
 * Writes the recording (mixedSignals(seed)) to dir/name.edf with libedf and reads it back with libedf. Returns the file
 * and, per signal (MIXED_SIGNALS order), the physical samples libedf reads (µV for the uV
 * channels, mV for EMG Leg).
 */
export function writeMixedRates(dir: string, name = 'mixed', seed = 0): { file: string; samples: Float64Array[] } {
  const writer = compileWithLibedf(dir, `${name}_writer`, writerSource(mixedSignals(seed), ANNOTATIONS, SECONDS, 'X'));
  const reader = compileWithLibedf(dir, `${name}_reader`, READER_SOURCE);
  const file = join(dir, `${name}.edf`);
  execFileSync(writer, [file, join(dir, `${name}.planted.f64`)]);
  const read = parseReaderOutput(execFileSync(reader, [file, join(dir, `${name}.read.f64`)], { encoding: 'utf8' }));
  const buf = readFileSync(join(dir, `${name}.read.f64`));
  const all = new Float64Array(buf.buffer, buf.byteOffset, buf.byteLength / 8);
  const samples: Float64Array[] = [];
  let o = 0;
  for (const s of read.signals) {
    samples.push(all.slice(o, o + s.samples));
    o += s.samples;
  }
  return { file, samples };
}
