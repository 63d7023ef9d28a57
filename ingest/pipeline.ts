/**
 * One recording end to end (Node), in the order of the data flow:
 * open → scoring → channels (and where they sit) → references → frequency grids → epoch pass → stage pass (fits) →
 * IRASA (on request) → quality → warnings and status → bundle.
 *
 * Streaming: the EDF is read epoch by epoch into the reader's reused buffers; per epoch and
 * channel only the stored-range spectrum (default 0–45 Hz, Float32) and a few numbers are kept,
 * so memory grows with epochs × channels × bins, not with samples. The steps live in
 * ingest/pipeline/ (one purpose each), the computation itself in src/core (Welch, reference,
 * epoch-rejection, bands, stage-average, aperiodic-fit, quality).
 */
import { planReferences } from '../src/core/montage/reference.ts';
import { SCORED_STAGES, type Stage } from '../src/core/stages.ts';
import type { CohortRecording } from './cohort/types.ts';
import type { RecordingBundle, WarningRow } from './store/bundle.ts';
import { runIdentity } from './store/identity.ts';
import { assembleBundle, channelRows } from './pipeline/assemble-bundle.ts';
import { selectChannels } from './pipeline/channels.ts';
import { epochPass, planStates } from './pipeline/epoch-pass.ts';
import { epochSpectraBlocks } from './pipeline/epoch-spectra.ts';
import type { PipelineProgress } from './pipeline/error.ts';
import { channelNote, evenlySpaced, frequencyGrid, type FrequencyGrid } from './pipeline/grid.ts';
import { irasaPass } from './pipeline/irasa-pass.ts';
import { placeChannels } from './pipeline/positions.ts';
import { openRecording, type OpenedRecording } from './pipeline/open.ts';
import type { IngestParams } from './pipeline/params.ts';
import { channelMeasures, recordingQuality, type ChannelMeasures } from './pipeline/recording-quality.ts';
import { readHypnogram } from './pipeline/scoring.ts';
import { stagePass, type FinishWork } from './pipeline/stage-pass.ts';
import { readWarnings, recordingStatus, scoringWarnings, unitWarnings } from './pipeline/warnings.ts';

export { bundleTransferList } from './pipeline/assemble-bundle.ts';
export { toMicrovolts } from '../src/core/montage/channel-selection.ts';
export { PipelineError, type PipelineProgress } from './pipeline/error.ts';
export { openRecording, type OpenedRecording } from './pipeline/open.ts';
export { DEFAULT_INGEST_PARAMS, resolveIngestParams, type IngestParams, type QualityParams } from './pipeline/params.ts';
export type { ChannelMeasures } from './pipeline/recording-quality.ts';

/**
 * Processes one recording into the bundle the store writes. `runId` defaults to the identity of
 * `params` (the store derives the same from the same parameters in beginRun).
 */
export async function processRecording(
  rec: CohortRecording,
  params: IngestParams,
  onProgress?: (p: PipelineProgress) => void,
  runId: string = runIdentity(params).runId,
): Promise<RecordingBundle & { measures: ChannelMeasures[] }> {
  return processOpened(rec, await openRecording(rec), params, onProgress, runId);
}

/** The same for a recording opened by openRecording; closes its EDF. */
export async function processOpened(
  rec: CohortRecording,
  opened: OpenedRecording,
  params: IngestParams,
  onProgress?: (p: PipelineProgress) => void,
  runId: string = runIdentity(params).runId,
): Promise<RecordingBundle & { measures: ChannelMeasures[] }> {
  const file = rec.recordingPath;
  const edf = opened.edf;
  try {
    const scoring = await readHypnogram(edf, rec, params);
    const hyp = scoring.hypnogram;
    const epochS = hyp.epochS;
    const selected = selectChannels(edf, rec, params);
    const { plans, skips } = planReferences(
      selected.map((s) => s.montage),
      { references: params.references, bipolarPairs: params.bipolarPairs },
    );
    const recordedNames = selected.map((s) => s.name);
    const nGrid = Math.max(0, Math.ceil(edf.durationS / epochS - 1e-6));
    const placed = placeChannels(selected, rec.positions);
    const warnings: WarningRow[] = [...readWarnings(edf), ...scoringWarnings(hyp), ...unitWarnings(selected), ...placed.warnings];

    // ---- each sampling rate's frequency grid (stored range, bands, rules, fit range up to its Nyquist) ----
    const grids = new Map<number, FrequencyGrid>();
    const gridOf = (fs: number) => {
      let g = grids.get(fs);
      if (!g) grids.set(fs, (g = frequencyGrid(fs, params, file)));
      return g;
    };
    for (const s of selected) for (const note of gridOf(s.signal.fsHz).notes) warnings.push(channelNote(s.name, s.signal.fsHz, note));

    // ---- one read: per epoch, plan and output, spectra and rejection measures ----
    const states = planStates(plans, selected, recordedNames, gridOf, nGrid, epochS);
    const stages: Stage[] = new Array(nGrid);
    for (let e = 0; e < nGrid; e++) stages[e] = hyp.stages[e] ?? 'unscored';
    const onsetS = evenlySpaced(nGrid, epochS);
    const read = await epochPass(edf, selected, states, nGrid, epochS, onProgress ? (done: number) => onProgress({ step: 'read', done, total: nGrid }) : null);
    onProgress?.({ step: 'read', done: nGrid, total: nGrid });

    // ---- per reference and channel: outliers within stage, stage averages, fits ----
    const stageIdx = Int32Array.from(stages, (s) => SCORED_STAGES.indexOf(s as (typeof SCORED_STAGES)[number]));
    const rows: FinishWork = { params, stageIdx, nGrid, rejections: [], spectra: [], aperiodic: [], peaks: [], quality: [] };
    const bandPowers = stagePass(
      states,
      rows,
      params.bands.map((b) => b.name),
      (done, total) => onProgress?.({ step: 'spectra', done, total }),
    );
    if (params.irasa) {
      onProgress?.({ step: 'irasa', done: 0, total: nGrid });
      const irasa = await irasaPass(
        edf,
        selected.map((s) => s.signal.index),
        selected.map((s) => s.toUv),
        states,
        stageIdx,
        epochS,
        params,
        nGrid,
        (d) => onProgress?.({ step: 'irasa', done: d, total: nGrid }),
      );
      rows.aperiodic.push(...irasa.rows);
      warnings.push(...irasa.notes);
    }

    // ---- per recorded channel: clipping, flat channel, mains hum, narrow spikes ----
    const measures = channelMeasures(selected, states, read, 1 / params.segmentS, epochS);
    rows.quality.push(...recordingQuality(measures, selected, rec, params, read.epochsSeen, epochS));

    const bundle = assembleBundle({
      runId,
      rec,
      opened,
      scoring,
      status: recordingStatus(edf, hyp, warnings),
      epochS,
      stages,
      onsetS,
      dropReason: read.dropReason,
      channels: channelRows(selected, placed.placements),
      rows,
      bandPowers,
      referenceSkips: skips,
      measures,
      warnings,
    });
    // each epoch's spectrum, compact, on request (--epoch-spectra)
    if (params.epochSpectra) bundle.epochSpectra = epochSpectraBlocks(states, params.epochSpectra.maxHz);
    return bundle;
  } finally {
    await edf.close();
  }
}
