import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import path from 'node:path';

/** [onset s, duration s or null, text] */
export type LibedfAnnotation = [onsetS: number, durationS: number | null, text: string];

/** Every UTF-8 byte as an octal escape, so the C compiler sees the exact bytes. */
function cString(s: string): string {
  return `"${[...Buffer.from(s, 'utf8')].map((b) => `\\${b.toString(8).padStart(3, '0')}`).join('')}"`;
}

export interface LibedfSpec {
  /** Header start date and time [year, month, day, hour, minute, second] (default 2020-01-01 22:00:00). */
  start?: [number, number, number, number, number, number];
  /** Sub-second start offset in s (edf_set_subsecond_starttime, units of 100 ns); 0 by default. */
  subsecondS?: number;
  /** Seconds of signal in 1-s data records; ignored for an annotation-only file. */
  seconds: number;
  /**
   * C expression of the one 100-Hz signal "EEG C3-M2" in µV, in terms of the time `t` (s, double)
   * from the first sample; null writes an annotation-only file (no ordinary signal).
   */
  signal: string | null;
  annotations: LibedfAnnotation[];
  /** Patient name in the header (EDF+ patient field). */
  patientName?: string;
}

/**
 * Writes an EDF+ file with Debian's libedf (EDFlib 1.23), an EDF+ implementation independent of
 * ours. edflib.h: annotation onset and duration in units of 100 µs, duration −1 = none, onsets
 * counted from the first sample (EDFlib adds the sub-second start offset itself when writing
 * the TALs); with no ordinary signal EDFlib writes 1-s records holding only annotations.
 * Compiles a small C program in `workDir` (gcc, -ledf).
 */
export function writeLibedf(workDir: string, out: string, spec: LibedfSpec): string {
  const [y, mo, d, hh, mi, s] = spec.start ?? [2020, 1, 1, 22, 0, 0];
  const lines = spec.annotations.map(
    ([o, du, t]) => `  if (edfwrite_annotation_utf8(h, ${Math.round(o * 1e4)}LL, ${du === null ? -1 : Math.round(du * 1e4)}LL, ${cString(t)}) != 0) return 3;`,
  );
  const signal =
    spec.signal === null
      ? ''
      : `
  edf_set_samplefrequency(h, 0, 100);
  edf_set_physical_maximum(h, 0, 500); edf_set_physical_minimum(h, 0, -500);
  edf_set_digital_maximum(h, 0, 32767); edf_set_digital_minimum(h, 0, -32768);
  edf_set_label(h, 0, "EEG C3-M2"); edf_set_physical_dimension(h, 0, "uV");
  static double buf[100];
  for (int r = 0; r < ${spec.seconds}; r++) {
    for (int j = 0; j < 100; j++) { double t = r + j / 100.0; buf[j] = ${spec.signal}; }
    if (edfwrite_physical_samples(h, buf) != 0) return 2;
  }`;
  const src = `#include <math.h>
#include <edflib.h>
int main(void) {
  int h = edfopen_file_writeonly(${JSON.stringify(out)}, EDFLIB_FILETYPE_EDFPLUS, ${spec.signal === null ? 0 : 1});
  if (h < 0) return 1;
  if (edf_set_startdatetime(h, ${y}, ${mo}, ${d}, ${hh}, ${mi}, ${s}) != 0) return 5;
  if (edf_set_subsecond_starttime(h, ${Math.round((spec.subsecondS ?? 0) * 1e7)}) != 0) return 6;
  ${spec.patientName ? `if (edf_set_patientname(h, ${cString(spec.patientName)}) != 0) return 7;` : ''}${signal}
${lines.join('\n')}
  return edfclose_file(h) == 0 ? 0 : 4;
}
`;
  const base = path.join(workDir, `libedf-${path.basename(out).replace(/[^A-Za-z0-9]/g, '_')}`);
  writeFileSync(`${base}.c`, src);
  execFileSync('gcc', ['-O0', '-o', `${base}.bin`, `${base}.c`, '-ledf', '-lm']);
  execFileSync(`${base}.bin`);
  return out;
}

/**
 * Writes an EDF+ file with libedf: one 100-Hz signal "EEG C3-M2" of zeros in `seconds` data
 * records of 1 s, plus the annotations; start 2020-01-01 22:00:00.
 */
export function writeEdfWithLibedf(workDir: string, out: string, seconds: number, annotations: LibedfAnnotation[]): string {
  return writeLibedf(workDir, out, { seconds, signal: '0', annotations });
}
