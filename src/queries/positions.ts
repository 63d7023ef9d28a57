// Named query over where the stored channels sit (channels.x, y, z): the positions a contrast's
// channel neighbours come from (src/core/contrast/channel-layout.ts).
import type { ChannelPositionRow } from '../core/contrast/data.ts';
import { COHORT, literal, numbers, texts, textsOrNull, type SqlClient } from './client.ts';

/** Where each stored channel of a run sits (unit sphere, x right, y front, z up), rows with a position only. */
export async function channelPositions(db: SqlClient, runId: string): Promise<ChannelPositionRow[]> {
  const t = await db.query(
    `SELECT r.subject::VARCHAR AS subject, r.session::VARCHAR AS session, c.channel::VARCHAR AS channel, c.x::DOUBLE AS x, c.y::DOUBLE AS y, c.z::DOUBLE AS z
     FROM ${COHORT}.channels c JOIN ${COHORT}.recordings r USING (recording_id)
     WHERE r.run_id = ${literal(runId)} AND c.x IS NOT NULL AND c.y IS NOT NULL AND c.z IS NOT NULL
     ORDER BY r.subject, r.session NULLS FIRST, c.recording_id, c.channel`,
  );
  const session = textsOrNull(t, 'session');
  const channel = texts(t, 'channel');
  const [x, y, z] = ['x', 'y', 'z'].map((k) => numbers(t, k));
  return texts(t, 'subject').map((s, i) => ({ subject: s, session: session[i], channel: channel[i], x: x[i], y: y[i], z: z[i] }));
}
