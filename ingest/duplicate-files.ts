/**
 * One recording, one subject. Before any work, the rows of a cohort that hold the same recording
 * — one file listed twice, or byte-identical copies under other names — are found and refused,
 * every one of them, with one message naming them all: which row would win is never left to the
 * workers' timing. A recording is its content (SHA-256), as the database identifies it; only
 * files that share a size with another are read to hash them, since files of different sizes
 * cannot be equal.
 */
import { stat } from 'node:fs/promises';
import type { CohortRecording } from './cohort/types.ts';
import { fileSha256 } from './file-sha256.ts';

/** "1", "1 and 3", "1, 3 and 5" */
function listed(items: readonly string[]): string {
  return items.length <= 1 ? items.join('') : `${items.slice(0, -1).join(', ')} and ${items[items.length - 1]}`;
}

/**
 * Sets `problem` (column 'recording') on every row, not already refused, whose recording has the
 * same content as another such row's. `shown` names a row's file in messages.
 */
export async function refuseSharedRecordings(recordings: readonly CohortRecording[], shown: (r: CohortRecording) => string): Promise<void> {
  const bySize = new Map<number, { rec: CohortRecording; inode: string }[]>();
  for (const rec of recordings) {
    if (rec.problem) continue;
    const st = await stat(rec.recordingPath).catch(() => null);
    if (!st) continue; // gone since the table was read: the worker reports it
    const group = bySize.get(st.size) ?? [];
    group.push({ rec, inode: `${st.dev}:${st.ino}` });
    bySize.set(st.size, group);
  }
  const byContent = new Map<string, CohortRecording[]>();
  for (const group of bySize.values()) {
    if (group.length < 2) continue;
    const hashOf = new Map<string, string>(); // one read per file, however often it is listed
    for (const { rec, inode } of group) {
      let sha = hashOf.get(inode);
      if (sha === undefined) {
        sha = await fileSha256(rec.recordingPath).catch(() => '');
        hashOf.set(inode, sha);
      }
      if (sha === '') continue; // unreadable: the worker reports it
      byContent.set(sha, [...(byContent.get(sha) ?? []), rec]);
    }
  }
  for (const [sha, rows] of byContent) {
    if (rows.length < 2) continue;
    rows.sort((a, b) => a.row - b.row);
    const all =
      `rows ${listed(rows.map((r) => String(r.row)))} (subjects ${listed(rows.map((r) => r.subject + (r.session ? ` session ${r.session}` : '')))}) hold the same recording ` +
      `(files ${listed(rows.map(shown))}, SHA-256 ${sha.slice(0, 12)}…); it is refused for all of them: give each subject its own recording`;
    // each row's own message (its ingest_errors row), naming all of them
    for (const r of rows)
      r.problem = { column: 'recording', message: `row ${r.row} (subject ${r.subject}${r.session ? ` session ${r.session}` : ''}): ${all}` };
  }
}
