/** The command line's contrast options carry the estimator and the individual band rule into the contrast JSON (docs/design.md keys). */
import { describe, expect, it } from 'vitest';
import { contrastFromFlags } from '../../src/cli/contrast-options.ts';
import { parseContrast } from '../../src/core/contrast/spec.ts';

describe('contrast options', () => {
  it('--estimator, --band-definition, --peak-search and --half-width set their keys; the defaults are Welch and fixed bands', () => {
    const c = parseContrast(
      contrastFromFlags({
        out: 'r.json',
        groups: ['a', 'b'],
        measure: 'band-power',
        band: ['fast:12-15'],
        estimator: 'multitaper',
        bandDefinition: 'individual',
        peakSearch: ['11.8', '16'],
        halfWidth: 1.5,
      }),
    );
    expect([c.estimator, c.bandDefinition, c.peakSearchHz, c.halfWidthHz]).toEqual(['multitaper', 'individual', [11.8, 16], 1.5]);
    const d = parseContrast(contrastFromFlags({ out: 'r.json', groups: ['a', 'b'] }));
    expect([d.estimator, d.bandDefinition, d.peakSearchHz, d.halfWidthHz]).toEqual(['welch', 'fixed', undefined, undefined]);
    expect(() => parseContrast(contrastFromFlags({ out: 'r.json', groups: ['a', 'b'], estimator: 'periodogram' }))).toThrow(/estimator/);
  });
});
