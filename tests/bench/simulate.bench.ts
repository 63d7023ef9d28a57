/**
 * Speed of the synthetic-EEG generator: one hour-long night of the demo scenario (13 channels,
 * 256 Hz, 120 epochs) generated in memory, and the same night written as EDF+C.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { NightGenerator, planNight } from '../../src/core/simulate/index.ts';
import { DEMO_SCENARIO, loadScenario, writeNightEdf } from '../../src/simulation/index.ts';

function timed(fn: () => void): { wallS: number; cpuS: number } {
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  fn();
  const c = process.cpuUsage(c0);
  return { wallS: (performance.now() - t0) / 1000, cpuS: (c.user + c.system) / 1e6 };
}

export async function run(): Promise<Record<string, unknown>> {
  const scenario = await loadScenario(DEMO_SCENARIO);
  const plan = planNight(scenario, 0); // ctl01: 256 Hz
  const out = plan.channels.map(() => new Float32Array(plan.epochSamples));
  const generateNight = (): void => {
    const gen = new NightGenerator(plan);
    for (let e = 0; e < plan.nEpochs; e++) gen.generate(e, out);
  };
  generateNight(); // warm-up
  const gen = timed(generateNight);
  const channelSamples = plan.channels.length * plan.epochSamples * plan.nEpochs;

  const dir = mkdtempSync(path.join(tmpdir(), 'bw-bench-sim-'));
  let write: { wallS: number; cpuS: number };
  try {
    const t0 = performance.now();
    const c0 = process.cpuUsage();
    await writeNightEdf(path.join(dir, 'night.edf'), plan, scenario);
    const c = process.cpuUsage(c0);
    write = { wallS: (performance.now() - t0) / 1000, cpuS: (c.user + c.system) / 1e6 };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return {
    night: { channels: plan.channels.length, fsHz: plan.fsHz, epochs: plan.nEpochs, hours: (plan.nEpochs * plan.epochS) / 3600 },
    generateWallS: Number(gen.wallS.toFixed(3)),
    generateCpuS: Number(gen.cpuS.toFixed(3)),
    generateChannelSamplesPerS: Math.round(channelSamples / gen.wallS),
    generateAndWriteEdfWallS: Number(write.wallS.toFixed(3)),
    generateAndWriteEdfCpuS: Number(write.cpuS.toFixed(3)),
  };
}
