/**
 * What the database keeps of each recording's path (recordings.file_name, and ingest_errors' file
 * and message). Folder names often name people (a patient's name on the folder of their nights),
 * so the default keeps only the file's own name:
 * - name (default): the file name without its folders, e.g. night1.edf;
 * - relative: the path relative to the cohort table's folder (the BIDS root), e.g. Smith/night1.edf;
 * - as-given: the path as the cohort table writes it (possibly absolute; BIDS: relative to the root);
 * - hash: only the content hash, the first 16 hex digits of the file's SHA-256 plus its extension
 *   (e.g. 3fa9c1d2e4b5a6f7.edf); a row that fails is named by its row ("row 12").
 * Whatever the form, recordings.file_sha256 holds the full hash.
 */
import path from 'node:path';
import type { CohortRecording } from './cohort/types.ts';

export const FILE_NAME_FORMS = ['name', 'relative', 'as-given', 'hash'] as const;
export type FileNameForm = (typeof FILE_NAME_FORMS)[number];
export const DEFAULT_FILE_NAME_FORM: FileNameForm = 'name';

export interface FileNamer {
  /** recordings.file_name of a stored recording */
  stored(rec: CohortRecording, sha256: string): string;
  /** ingest_errors.file of a row that failed (and the name in progress lines) */
  failed(rec: CohortRecording): string;
  /** a message with every spelling of the row's paths replaced by the form's names */
  message(rec: CohortRecording, text: string): string;
  /** recordings.scoring_source ("annotations:night1.edf", "table:night1.tsv"): the hash form keeps the kind alone */
  scoringSource(text: string | null | undefined): string | null;
}

export function fileNamer(form: FileNameForm, root: string): FileNamer {
  const relative = (p: string) => path.relative(root, p) || path.basename(p);
  const shown = (rec: CohortRecording, p: string, what: string): string => {
    if (form === 'name') return path.basename(p);
    if (form === 'relative') return relative(p);
    if (form === 'as-given') return (p === rec.recordingPath ? rec.recordingAsGiven : undefined) ?? relative(p);
    return `${what} of row ${rec.row}`;
  };
  return {
    stored: (rec, sha256) => (form === 'hash' ? `${sha256.slice(0, 16)}${path.extname(rec.recordingPath).toLowerCase()}` : shown(rec, rec.recordingPath, '')),
    failed: (rec) => (form === 'hash' ? `row ${rec.row}` : shown(rec, rec.recordingPath, '')),
    scoringSource: (text) => (text == null ? null : form === 'hash' ? text.split(':')[0] : text),
    message: (rec, text) => {
      let out = text;
      for (const [p, what] of [
        [rec.recordingPath, 'file'],
        [rec.scoringPath, 'scoring file'],
      ] as const) {
        if (!p) continue;
        const name = shown(rec, p, what);
        // every spelling of the path, longest first: absolute, as given, relative to the root, the bare name
        const spellings = [p, p === rec.recordingPath ? rec.recordingAsGiven : undefined, relative(p), form === 'hash' ? path.basename(p) : undefined]
          .filter((s): s is string => !!s && s !== name)
          .sort((a, b) => b.length - a.length);
        for (const s of spellings) out = out.split(s).join(name);
        out = out.split(`'${name}' (${name})`).join(`'${name}'`);
      }
      return out;
    },
  };
}
