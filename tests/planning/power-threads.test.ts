// Simulations spread over threads give the same curve as one thread (each simulation depends only
// on (seed, n, k)): 2 worker threads against this thread, 2 × 8 simulations of a small contrast.
import { describe, expect, it } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { preparePower } from '../../src/core/planning/index.ts';
import { simulateOnThreads } from '../../src/analysis/power-threads.ts';
import { syntheticCohort } from './synthetic-cohort.ts';

describe('power simulations on threads', () => {
  it('two threads give the outcomes of one', async () => {
    const { data } = syntheticCohort(40, 3, 4);
    const contrast = parseContrast({
      design: 'groups',
      groups: ['control', 'patient'],
      stage: 'N2',
      fminHz: 10,
      fmaxHz: 16,
      permutations: 99,
      measure: 'residual',
    });
    const p = preparePower(
      contrast,
      {
        referenceGroup: 'control',
        effect: 0.002,
        band: { name: 'b', loHz: 12, hiHz: 15 },
        channels: 'all',
        nPerGroup: [5, 10],
        simulations: 8,
        seed: 2,
        alpha: 0.05,
      },
      data,
    );
    const seen: number[] = [];
    const one = await simulateOnThreads(p, 1);
    const two = await simulateOnThreads(p, 2, (done) => seen.push(done));
    expect(two).toEqual(one);
    expect(seen).toEqual(Array.from({ length: 16 }, (_, i) => i + 1));
    // not all alike, so the comparison says something
    expect(new Set(one.map((o) => o.found)).size).toBe(2);
  });
});
