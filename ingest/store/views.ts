/**
 * Tidy views for R, Python and DuckDB users: one row per observation, the subject beside every
 * row, and column names that need no quoting (`offset` is an SQL keyword: tidy_aperiodic names it
 * aperiodic_offset; the tables keep their names). Created with the tables (schema.ts schemaSql);
 * like the tables, their names and columns are a public interface (README "Tidy tables").
 */
import { DEFAULT_BANDS } from '../../src/core/spectrum/bands.ts';

export interface ViewDef {
  name: string;
  doc: string;
  sql: string;
}

const bandRows = DEFAULT_BANDS.map((b) => `('${b.name}', ${b.loHz.toFixed(2)}, ${b.hiHz.toFixed(2)})`).join(', ');

export const VIEWS: readonly ViewDef[] = [
  {
    name: 'tidy_band_power',
    doc:
      'Band power per recording × channel × stage × reference × averaging × band from the stored stage spectra: the mean density ' +
      '(µV²/Hz) over the bins with lo_hz ≤ f ≤ hi_hz (the default bands of src/core/spectrum/bands.ts), and its log10.',
    // bin k lies at freq_start_hz + k·freq_step_hz; list_slice counts from 1 and includes both ends
    sql: `WITH bands(band, lo_hz, hi_hz) AS (VALUES ${bandRows}),
  bins AS (
    SELECT s.recording_id, s.channel, s.stage, s.reference, s.averaging, s.n_epochs, s.flagged, s.power, b.band, b.lo_hz, b.hi_hz,
      greatest(0, ceil((b.lo_hz - s.freq_start_hz) / s.freq_step_hz - 1e-9))::INTEGER AS first_bin,
      least(s.n_bins - 1, floor((b.hi_hz - s.freq_start_hz) / s.freq_step_hz + 1e-9))::INTEGER AS last_bin
    FROM spectra s CROSS JOIN bands b)
SELECT r.run_id, x.recording_id, r.subject, r.session, x.channel, x.stage, x.reference, x.averaging, x.band, x.lo_hz, x.hi_hz,
  x.n_epochs, x.flagged, list_avg(list_slice(x.power, x.first_bin + 1, x.last_bin + 1)) AS power,
  log10(list_avg(list_slice(x.power, x.first_bin + 1, x.last_bin + 1))) AS log10_power
FROM bins x JOIN recordings r USING (recording_id)
WHERE x.last_bin >= x.first_bin`,
  },
  {
    name: 'tidy_aperiodic',
    doc: "Aperiodic fits with the subject: aperiodic_offset (log10 µV²/Hz; the aperiodic table's offset), exponent, knee, r2, rmse.",
    sql: `SELECT r.run_id, a.recording_id, r.subject, r.session, a.channel, a.stage, a.reference, a.averaging, a.method, a.fit_lo_hz, a.fit_hi_hz,
  a."offset" AS aperiodic_offset, a.exponent, a.knee, a.r2, a.rmse, a.n_peaks
FROM aperiodic a JOIN recordings r USING (recording_id)`,
  },
  {
    name: 'tidy_peaks',
    doc: 'Fitted peaks with the subject: center_hz, height (log10 above the aperiodic fit), bandwidth_hz.',
    sql: `SELECT r.run_id, p.recording_id, r.subject, r.session, p.channel, p.stage, p.reference, p.averaging, p.method, p.center_hz, p.height, p.bandwidth_hz
FROM peaks p JOIN recordings r USING (recording_id)`,
  },
  {
    name: 'tidy_sleep_architecture',
    doc:
      'Sleep architecture per recording (AASM; minutes and %), with clean_n2_min: minutes of N2 kept after epoch rejection, the median over ' +
      "the recording's channels (recorded reference, n_epochs × epoch length).",
    sql: `SELECT r.run_id, r.recording_id, r.subject, r.session, r.trt_min, r.tst_min, r.se_pct, r.sol_min, r.waso_min, r.rem_latency_min,
  r.w_min, r.n1_min, r.n2_min, r.n3_min, r.r_min, r.unscored_min,
  (SELECT median(s.n_epochs * r.epoch_length_s / 60) FROM spectra s
     WHERE s.recording_id = r.recording_id AND s.stage = 'N2' AND s.reference = 'recorded' AND s.averaging = 'mean') AS clean_n2_min
FROM recordings r`,
  },
];

export function createViewSql(v: ViewDef): string {
  return `CREATE OR REPLACE VIEW ${v.name} AS\n${v.sql}`;
}
