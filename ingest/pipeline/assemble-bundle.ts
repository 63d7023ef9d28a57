/** The RecordingBundle of one processed recording, as the store's single writer takes it. */
import path from 'node:path';
import { sleepArchitecture } from '../../src/core/hypnogram/architecture.ts';
import type { ChannelPlacement } from '../../src/core/montage/channel-placement.ts';
import type { ReferenceSkip } from '../../src/core/montage/reference.ts';
import type { Stage } from '../../src/core/stages.ts';
import type { CohortRecording } from '../cohort/types.ts';
import type { RecordingScoring } from '../hypnogram/index.ts';
import type { BandPowerBlock, ChannelRow, RecordingBundle, WarningRow } from '../store/bundle.ts';
import type { Selected } from './channels.ts';
import type { OpenedRecording } from './open.ts';
import type { ChannelMeasures } from './recording-quality.ts';
import type { RecordingStatus } from './warnings.ts';
import type { FinishWork } from './stage-pass.ts';

/**
 * The channels rows: every selected channel in µV like its samples (physical limits scaled too), with
 * the unit as recorded, and where it sits (unit sphere; the file's metres when from a file).
 */
export function channelRows(selected: readonly Selected[], placements: readonly ChannelPlacement[]): ChannelRow[] {
  return selected.map((s, i) => {
    const { position: pos, metres, source } = placements[i];
    return {
      channel: s.name,
      type: s.montage.type,
      unit: 'µV',
      fsHz: s.signal.fsHz,
      prefilter: s.signal.prefilter.trim() || null,
      x: pos?.x ?? null,
      y: pos?.y ?? null,
      z: pos?.z ?? null,
      positionSource: source,
      xM: metres?.x ?? null,
      yM: metres?.y ?? null,
      zM: metres?.z ?? null,
      label: s.signal.label.trim(),
      referenceElectrode: s.montage.reference,
      physicalMin: s.signal.physicalMin * s.toUv,
      physicalMax: s.signal.physicalMax * s.toUv,
      recordedUnit: s.signal.physicalDimension.trim() || null,
      digitalMin: s.signal.digitalMin,
      digitalMax: s.signal.digitalMax,
    };
  });
}

/** What the passes produced for one recording, put together. */
export interface RecordingParts {
  runId: string;
  rec: CohortRecording;
  opened: OpenedRecording;
  scoring: RecordingScoring;
  status: RecordingStatus;
  epochS: number;
  stages: Stage[];
  onsetS: Float64Array;
  dropReason: (string | null)[];
  channels: ChannelRow[];
  rows: FinishWork;
  bandPowers: BandPowerBlock[];
  referenceSkips: ReferenceSkip[];
  measures: ChannelMeasures[];
  warnings: WarningRow[];
}

export function assembleBundle(p: RecordingParts): RecordingBundle & { measures: ChannelMeasures[] } {
  const { edf } = p.opened;
  const arch = sleepArchitecture(p.stages, p.epochS, p.scoring.lights);
  const nDropped = p.dropReason.filter((d) => d !== null).length;
  return {
    runId: p.runId,
    recording: {
      subject: p.rec.subject,
      session: p.rec.session,
      fileName: path.basename(p.rec.recordingPath),
      fileSha256: p.opened.sha256,
      durationS: edf.durationS,
      status: p.status,
      edfVariant: edf.header.variant,
      scoringSource: p.scoring.hypnogram.source,
      epochLengthS: p.epochS,
      nEpochs: p.stages.length,
      nEpochsDropped: nDropped,
      tstMin: arch.totalSleepTimeMin,
      sePct: arch.sleepEfficiencyPct,
      solMin: arch.sleepOnsetLatencyMin,
      stageMin: arch.minutesPerStage,
      scoringShiftS: p.scoring.shiftS,
      lightsOffS: p.scoring.lights.offS,
      lightsOnS: p.scoring.lights.onS,
      lightsSource: p.scoring.lights.source,
      trtMin: arch.totalRecordingTimeMin,
      wasoMin: arch.wasoMin,
      remLatencyMin: arch.remLatencyMin,
    },
    channels: p.channels,
    epochs: { onsetS: p.onsetS, stage: p.stages, dropReason: p.dropReason },
    rejections: p.rows.rejections,
    spectra: p.rows.spectra,
    bandPowers: p.bandPowers,
    aperiodic: p.rows.aperiodic,
    peaks: p.rows.peaks,
    quality: p.rows.quality,
    referenceSkips: p.referenceSkips,
    warnings: p.warnings,
    measures: p.measures,
  };
}

/** The ArrayBuffers of a bundle's typed arrays, for a zero-copy postMessage transfer. */
export function bundleTransferList(bundle: RecordingBundle & { measures?: ChannelMeasures[] }): ArrayBuffer[] {
  const buffers = new Set<ArrayBuffer>();
  const add = (a: { buffer: ArrayBufferLike }) => {
    if (a.buffer instanceof ArrayBuffer) buffers.add(a.buffer);
  };
  add(bundle.epochs.onsetS);
  for (const s of bundle.spectra) add(s.power);
  for (const b of bundle.bandPowers) [b.channelIdx, b.epoch, b.bandIdx, b.power].forEach(add);
  for (const m of bundle.measures ?? []) add(m.fullSpectrum);
  for (const b of bundle.epochSpectra ?? []) [b.epoch, b.log10Min, b.log10Step, b.levels].forEach(add);
  return [...buffers];
}
