import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import path from 'node:path';

/** [onset s, duration s or null, text] */
export type LibedfAnnotation = [onsetS: number, durationS: number | null, text: string];

/**
 * Writes an EDF+ file with Debian's libedf (EDFlib 1.23), an EDF+ implementation independent of
 * ours: one 100-Hz signal "EEG C3-M2" of zeros in `seconds` data records of 1 s, plus the
 * annotations (edflib.h: onset and duration in units of 100 µs, duration −1 = none).
 * Compiles a small C program in `workDir` (gcc, -ledf).
 */
export function writeEdfWithLibedf(workDir: string, out: string, seconds: number, annotations: LibedfAnnotation[]): string {
  const lines = annotations.map(([o, d, t]) => `  if (edfwrite_annotation_utf8(h, ${Math.round(o * 1e4)}LL, ${d === null ? -1 : Math.round(d * 1e4)}LL, ${JSON.stringify(t)}) != 0) return 3;`);
  const src = `#include <edflib.h>
int main(void) {
  int h = edfopen_file_writeonly(${JSON.stringify(out)}, EDFLIB_FILETYPE_EDFPLUS, 1);
  if (h < 0) return 1;
  edf_set_samplefrequency(h, 0, 100);
  edf_set_physical_maximum(h, 0, 500); edf_set_physical_minimum(h, 0, -500);
  edf_set_digital_maximum(h, 0, 32767); edf_set_digital_minimum(h, 0, -32768);
  edf_set_label(h, 0, "EEG C3-M2"); edf_set_physical_dimension(h, 0, "uV");
  static double buf[100];
  for (int r = 0; r < ${seconds}; r++) if (edfwrite_physical_samples(h, buf) != 0) return 2;
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
