import { beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { openStore, type Store } from '../../ingest/store/index.ts';
import { demoDatabase, demoTruthPath } from '../helpers/demo-db.ts';

// The demo plants three problem recordings (demo-cohort/scenario.json, "artifacts"; the generated
// truth.json lists them): mains hum, a flat channel, movement bursts. The quality screen must flag
// each with the right reason, and flag few of the clean channels (issue 4: at most 5 %).
let store: Store;
let rows: { subject: string; channel: string; stage: string | null; metric: string; flagged: boolean; reason: string | null }[];

beforeAll(async () => {
  store = await openStore(await demoDatabase(), { readOnly: true });
  const r = await store.connection.runAndReadAll(
    `SELECT r.subject, q.channel, q.stage, q.metric, q.flagged, q.reason
       FROM quality q JOIN recordings r USING (recording_id)
      WHERE q.reference IS NULL OR q.reference = 'recorded'`,
  );
  rows = r.getRowObjectsJS() as typeof rows;
  return () => store.close();
}, 1_800_000);

describe('quality screen on the demo cohort', () => {
  it('knows the planted artifacts from the ground truth', () => {
    const truth = JSON.parse(readFileSync(demoTruthPath(), 'utf8')) as unknown;
    const text = JSON.stringify(truth);
    for (const s of ['pat07', 'ctl09', 'ctl14']) expect(text).toContain(s);
  });

  it('flags the mains hum of pat07 at 50 Hz on every channel', () => {
    const hum = rows.filter((q) => q.subject === 'pat07' && q.metric === 'mains-hum');
    expect(hum.length).toBeGreaterThanOrEqual(11);
    for (const q of hum) {
      expect(q.flagged, q.channel).toBe(true);
      expect(q.reason).toMatch(/50 Hz/);
    }
    // nobody else has a mains line
    const others = rows.filter((q) => q.subject !== 'pat07' && q.metric === 'mains-hum' && q.flagged);
    expect(others).toEqual([]);
  });

  it('flags the flat O2 channel of ctl09 as flat', () => {
    const flat = rows.filter((q) => q.subject === 'ctl09' && q.channel === 'O2' && q.flagged);
    expect(flat.map((q) => q.metric)).toContain('flat-channel');
    const otherFlat = rows.filter((q) => q.metric === 'flat-channel' && q.flagged && !(q.subject === 'ctl09' && q.channel === 'O2'));
    expect(otherFlat).toEqual([]);
  });

  it('flags the movement epochs of ctl14 through its rejected fraction', () => {
    const rej = rows.filter((q) => q.subject === 'ctl14' && q.metric === 'rejected-fraction' && q.flagged);
    expect(rej.length).toBeGreaterThanOrEqual(11);
    for (const q of rej) expect(q.reason).toMatch(/amplitude/);
  });

  it('flags at most 5 % of the clean channels', () => {
    const planted = (q: { subject: string }) => ['pat07', 'ctl09', 'ctl14'].includes(q.subject);
    const cells = new Set(rows.filter((q) => !planted(q)).map((q) => `${q.subject}/${q.channel}`));
    const flaggedCells = new Set(rows.filter((q) => !planted(q) && q.flagged).map((q) => `${q.subject}/${q.channel}`));
    console.log(
      `clean channels flagged: ${flaggedCells.size} of ${cells.size}`,
      [...new Set(rows.filter((q) => !planted(q) && q.flagged).map((q) => `${q.subject}/${q.channel}: ${q.metric}`))].slice(0, 10),
    );
    expect(cells.size).toBeGreaterThan(300);
    expect(flaggedCells.size / cells.size).toBeLessThanOrEqual(0.05);
  });
});
