/** Quality metrics with flags and plain reasons (pure; no I/O). */
export * from './row.ts';
export * from './rejected-fraction.ts';
export * from './mains-hum.ts';
export * from './narrow-spikes.ts';
export * from './flat-channel.ts';
export * from './clipping.ts';
export * from './cohort-distance.ts';
export * from './aperiodic-quality.ts';
export * from './clean-epochs.ts';
export * from './cell-score.ts';
export * from './outlier-share.ts';
export * from './outlier-limit.ts';
export * from './log-power-spread.ts';
