// The contrast view's paper-figure export rendered in happy-dom: the file it hands to the
// browser's download is the SVG of src/core/figure for the chosen settings (the text
// `bandwise figure` writes for them, tests/figure/figure.test.ts), with its size in mm.
import { fireEvent, render, screen } from '@testing-library/svelte';
import { afterEach, describe, expect, it, vi } from 'vitest';
import PaperFigureExport from '../../src/dashboard/components/PaperFigureExport.svelte';
import { contrastFigureSvg, figureOptions } from '../../src/core/figure/index.ts';
import { figureResult } from '../figure/fixture.ts';

describe('paper figure export', () => {
  afterEach(() => vi.restoreAllMocks());

  it('downloads the shared SVG at the size typed in mm', async () => {
    const blobs: Blob[] = [];
    vi.spyOn(URL, 'createObjectURL').mockImplementation((b) => {
      blobs.push(b as Blob);
      return 'blob:test';
    });
    vi.spyOn(URL, 'revokeObjectURL').mockImplementation(() => undefined);
    const result = figureResult();
    render(PaperFigureExport, { result });
    await fireEvent.input(screen.getByTestId('pf-width'), { target: { value: '88' } });
    await fireEvent.input(screen.getByTestId('pf-height'), { target: { value: '110' } });
    await fireEvent.click(screen.getByTestId('pf-export'));
    await vi.waitFor(() => expect(blobs).toHaveLength(1));
    expect(blobs[0].type).toBe('image/svg+xml');
    const text = await blobs[0].text();
    expect(text).toBe(contrastFigureSvg(result, figureOptions({ widthMm: 88, heightMm: 110 })));
    expect(text).toContain('width="88mm" height="110mm" viewBox="0 0 88 110"');
  });
});
