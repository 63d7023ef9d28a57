// Small C programs built on Debian's libedf (EDFlib 1.23, header edflib.h, `-ledf`), the
// independent reference for EDF/EDF+ round trips. Compiled in the test set-up; a compile
// failure throws, so the tests fail rather than skip.
import { execFileSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';

export interface RefSignal {
  label: string;
  dim: string;
  pmin: number;
  pmax: number;
  dmin: number;
  dmax: number;
  /** Sampling rate, Hz; fs·record duration samples per record. */
  fs: number;
  /** C expression of the sample value, in terms of the sample index `i` (int) and time `t` (s). */
  expr: string;
}

export interface RefAnnotation {
  onset100us: number;
  /** −1: no duration. */
  duration100us: number;
  text: string;
}

function cString(s: string): string {
  // Every UTF-8 byte as an octal escape, so the C compiler sees the exact bytes.
  return `"${[...Buffer.from(s, 'utf8')].map((b) => `\\${b.toString(8).padStart(3, '0')}`).join('')}"`;
}

export interface WriterOptions {
  /** edflib.h EDFLIB_FILETYPE_EDFPLUS (16-bit, default) or EDFLIB_FILETYPE_BDFPLUS (24-bit). */
  fileType?: 'EDFLIB_FILETYPE_EDFPLUS' | 'EDFLIB_FILETYPE_BDFPLUS';
  /** Data record duration in seconds (default 1, libedf's default); set with edf_set_datarecord_duration in units of 10 µs. */
  recordS?: number;
}

/**
 * C source of a writer: EDF+ (or BDF+) file at argv[1], the exact double values at argv[2] (per
 * signal, all samples, float64 LE). `seconds` must be a whole number of records.
 */
export function writerSource(signals: RefSignal[], annotations: RefAnnotation[], seconds: number, patientName: string, options: WriterOptions = {}): string {
  const n = signals.length;
  const recordS = options.recordS ?? 1;
  const nRecords = Math.round(seconds / recordS);
  const spr = signals.map((s) => s.fs * recordS);
  if (!spr.every(Number.isInteger) || Math.abs(nRecords * recordS - seconds) > 1e-9) throw new Error('fs·recordS and seconds/recordS must be whole numbers');
  const setup = signals
    .map(
      (s, k) => `
  if (edf_set_samplefrequency(h, ${k}, ${spr[k]}) || edf_set_physical_maximum(h, ${k}, ${s.pmax}) ||
      edf_set_physical_minimum(h, ${k}, ${s.pmin}) || edf_set_digital_maximum(h, ${k}, ${s.dmax}) ||
      edf_set_digital_minimum(h, ${k}, ${s.dmin}) || edf_set_label(h, ${k}, ${cString(s.label)}) ||
      edf_set_physical_dimension(h, ${k}, ${cString(s.dim)})) { fprintf(stderr, "set signal ${k}\\n"); return 3; }`,
    )
    .join('');
  const fsList = signals.map((s) => s.fs).join(', ');
  const sprList = spr.join(', ');
  const exprs = signals.map((s, k) => `    case ${k}: return ${s.expr};`).join('\n');
  const annots = annotations
    .map(
      (a) => `  if (edfwrite_annotation_utf8(h, ${a.onset100us}LL, ${a.duration100us}LL, ${cString(a.text)})) { fprintf(stderr, "annotation\\n"); return 5; }`,
    )
    .join('\n');
  return `#include <stdio.h>
#include <math.h>
#include <edflib.h>
static double value(int k, int i, double t) {
  switch (k) {
${exprs}
  }
  return 0;
}
int main(int argc, char **argv) {
  const int fs[${n}] = { ${fsList} };
  const int spr[${n}] = { ${sprList} };
  int h = edfopen_file_writeonly(argv[1], ${options.fileType ?? 'EDFLIB_FILETYPE_EDFPLUS'}, ${n});
  if (h < 0) { fprintf(stderr, "open %d\\n", h); return 2; }
  if (${Math.round(recordS * 1e5)} != 100000 && edf_set_datarecord_duration(h, ${Math.round(recordS * 1e5)})) return 3;
  if (edf_set_startdatetime(h, 2003, 4, 5, 22, 30, 15)) return 3;
  if (edf_set_patientname(h, ${cString(patientName)})) return 3;
  if (edf_set_birthdate(h, 1952, 2, 29)) return 3;${setup}
  FILE *raw = fopen(argv[2], "wb");
  if (!raw) return 4;
  static double buf[${Math.max(...spr)}];
  for (int k = 0; k < ${n}; k++)
    for (int i = 0; i < fs[k] * ${seconds}; i++) { double v = value(k, i, (double)i / fs[k]); fwrite(&v, sizeof v, 1, raw); }
  fclose(raw);
  for (int r = 0; r < ${nRecords}; r++)
    for (int k = 0; k < ${n}; k++) {
      for (int j = 0; j < spr[k]; j++) { int i = r * spr[k] + j; buf[j] = value(k, i, (double)i / fs[k]); }
      if (edfwrite_physical_samples(h, buf)) { fprintf(stderr, "write\\n"); return 5; }
    }
${annots}
  if (edfclose_file(h)) return 6;
  return 0;
}
`;
}

/**
 * C source of a reader: opens argv[1] with libedf, prints the header and annotations as text
 * lines on stdout, and writes every signal's physical samples (float64 LE, signal after signal)
 * to argv[2]. Annotation texts are printed hex-encoded so any UTF-8 survives.
 */
export const READER_SOURCE = `#include <stdio.h>
#include <stdlib.h>
#include <edflib.h>
int main(int argc, char **argv) {
  struct edf_hdr_struct hdr;
  if (edfopen_file_readonly(argv[1], &hdr, EDFLIB_READ_ALL_ANNOTATIONS)) { printf("ERROR %d\\n", hdr.filetype); return 2; }
  printf("FILETYPE %d\\nSIGNALS %d\\nRECORDS %lld\\nRECORD_DURATION %lld\\n", hdr.filetype, hdr.edfsignals, hdr.datarecords_in_file, hdr.datarecord_duration);
  printf("START %04d-%02d-%02dT%02d:%02d:%02d\\n", hdr.startdate_year, hdr.startdate_month, hdr.startdate_day, hdr.starttime_hour, hdr.starttime_minute, hdr.starttime_second);
  FILE *raw = fopen(argv[2], "wb");
  if (!raw) return 4;
  for (int k = 0; k < hdr.edfsignals; k++) {
    struct edf_param_struct *p = &hdr.signalparam[k];
    printf("SIGNAL %d|%s|%lld|%d|%.10g|%.10g|%d|%d|%s\\n", k, p->label, p->smp_in_file, p->smp_in_datarecord, p->phys_min, p->phys_max, p->dig_min, p->dig_max, p->physdimension);
    double *buf = malloc(sizeof(double) * (size_t)p->smp_in_file);
    int got = edfread_physical_samples(hdr.handle, k, (int)p->smp_in_file, buf);
    if (got != p->smp_in_file) { printf("SHORT %d %d\\n", k, got); return 5; }
    fwrite(buf, sizeof(double), (size_t)got, raw);
    free(buf);
  }
  fclose(raw);
  for (long long n = 0; n < hdr.annotations_in_file; n++) {
    struct edf_annotation_struct a;
    if (edf_get_annotation(hdr.handle, (int)n, &a)) return 6;
    printf("ANNOTATION %lld|%lld|", a.onset, a.duration_l);
    for (const unsigned char *c = (const unsigned char *)a.annotation; *c; c++) printf("%02x", *c);
    printf("\\n");
  }
  edfclose_file(hdr.handle);
  return 0;
}
`;

/** Writes `source` to dir/name.c and compiles it against libedf; throws (test failure) if gcc fails. */
export function compileWithLibedf(dir: string, name: string, source: string): string {
  const src = join(dir, `${name}.c`);
  const exe = join(dir, name);
  writeFileSync(src, source);
  execFileSync('gcc', ['-O1', '-o', exe, src, '-ledf', '-lm'], { stdio: 'pipe' });
  return exe;
}

export interface RefRead {
  filetype: number;
  records: number;
  recordDuration100ns: number;
  start: string;
  signals: { label: string; samples: number; spr: number; pmin: number; pmax: number; dmin: number; dmax: number; dim: string }[];
  annotations: { onset100ns: number; duration100ns: number; text: string }[];
}

export function parseReaderOutput(stdout: string): RefRead {
  const out: RefRead = { filetype: -99, records: 0, recordDuration100ns: 0, start: '', signals: [], annotations: [] };
  for (const line of stdout.split('\n')) {
    const [key, ...restParts] = line.split(' ');
    const rest = restParts.join(' ');
    if (key === 'ERROR') throw new Error(`libedf could not open the file: error ${rest}`);
    if (key === 'FILETYPE') out.filetype = Number(rest);
    if (key === 'RECORDS') out.records = Number(rest);
    if (key === 'RECORD_DURATION') out.recordDuration100ns = Number(rest);
    if (key === 'START') out.start = rest;
    if (key === 'SIGNAL') {
      const [, label, samples, spr, pmin, pmax, dmin, dmax, dim] = rest.split('|');
      out.signals.push({
        label: label.trim(),
        samples: Number(samples),
        spr: Number(spr),
        pmin: Number(pmin),
        pmax: Number(pmax),
        dmin: Number(dmin),
        dmax: Number(dmax),
        dim: dim.trim(),
      });
    }
    if (key === 'ANNOTATION') {
      const [onset, duration, hex] = rest.split('|');
      out.annotations.push({ onset100ns: Number(onset), duration100ns: Number(duration), text: Buffer.from(hex, 'hex').toString('utf8') });
    }
  }
  return out;
}
