// The recording's whole night (src/dashboard/views/quality/RecordingNight.svelte) rendered in
// happy-dom over a small synthetic store (night-store.ts) read through the Node client: the
// spectrogram has one column per epoch and one row per stored bin, gap epochs stay empty, the
// planted peak takes the top colour of the scale, the rejected epochs are marked, the colour bar
// names its unit; without epoch spectra the band-power view says how to get the picture.
// happy-dom has no 2D canvas: the canvas the browser draws the raster on is replaced by a recorder.
import { fireEvent, render, screen, waitFor } from '@testing-library/svelte';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { openStore, type Store } from '../../ingest/store/index.ts';
import { storeClient } from '../../src/analysis/store-client.ts';
import RecordingNight from '../../src/dashboard/views/quality/RecordingNight.svelte';
import type { SqlClient } from '../../src/queries/client.ts';
import { cohortSchema, type CohortSchema } from '../../src/queries/schema.ts';
import { GAP, NIGHT_RECORDING, N_BINS, N_EPOCHS, PEAK_BIN, PEAK_EPOCHS, REJECTED, nightEpochs, writeNightStore } from './night-store.ts';

interface Drawn {
  width: number;
  height: number;
  data: Uint8ClampedArray;
}

describe('the whole night of a recording', () => {
  let dir: string;
  let store: Store;
  let db: SqlClient;
  let schema: CohortSchema;
  const drawn: Drawn[] = [];

  beforeAll(async () => {
    dir = mkdtempSync(path.join(tmpdir(), 'bw-night-dom-'));
    store = await openStore(await writeNightStore(dir), { readOnly: true });
    db = storeClient(store);
    schema = await cohortSchema(db);
    // the figure draws once its container has a width (Svelte's clientWidth binding)
    vi.spyOn(HTMLElement.prototype, 'clientWidth', 'get').mockReturnValue(800);
    const context = {
      createImageData: (width: number, height: number) => ({ width, height, data: new Uint8ClampedArray(width * height * 4) }),
      putImageData: (image: Drawn) => drawn.push(image),
      // Plot's colour bar paints its ramp cell by cell
      fillStyle: '',
      fillRect: () => undefined,
    };
    vi.spyOn(HTMLCanvasElement.prototype, 'getContext').mockReturnValue(context as never);
    vi.spyOn(HTMLCanvasElement.prototype, 'toDataURL').mockReturnValue('data:image/png;base64,AAAA');
  });

  afterAll(async () => {
    vi.restoreAllMocks();
    await store?.close();
    rmSync(dir, { recursive: true, force: true });
  });

  const props = (channel: string) => ({
    db,
    schema,
    subject: 'sub-01',
    recordingId: NIGHT_RECORDING,
    channel,
    epochs: nightEpochs(),
    bandPower: [],
    reference: 'recorded',
    epochS: 30,
  });

  it('draws one column per epoch and one row per bin, marks the rejected epochs, and shows the colour bar with its unit', async () => {
    const { container } = render(RecordingNight, props('C3'));
    const figure = await screen.findByTestId('night-spectrogram');
    await waitFor(() => expect(figure.querySelector('image[aria-label="spectrogram"]')).not.toBeNull());
    const image = figure.querySelector('image[aria-label="spectrogram"]')!;
    expect(image.getAttribute('data-epochs')).toBe(String(N_EPOCHS));
    expect(image.getAttribute('data-bins')).toBe(String(N_BINS));
    expect(image.getAttribute('href')).toBe('data:image/png;base64,AAAA');
    const raster = drawn.at(-1)!;
    expect([raster.width, raster.height]).toEqual([N_EPOCHS, N_BINS]);
    const pixel = (e: number, b: number) => Array.from(raster.data.subarray(((N_BINS - 1 - b) * N_EPOCHS + e) * 4, ((N_BINS - 1 - b) * N_EPOCHS + e) * 4 + 4));
    for (let e = 0; e < N_EPOCHS; e++) {
      const alpha = Array.from({ length: N_BINS }, (_, b) => pixel(e, b)[3]);
      expect(
        alpha.every((a) => a === (GAP.includes(e) ? 0 : 255)),
        `epoch ${e}`,
      ).toBe(true);
    }
    // the peak (10,000 × the background, above the night's 99th percentile) takes viridis's top colour,
    // #fde725 (matplotlib's viridis colour map ends there; from memory)
    for (const e of PEAK_EPOCHS) expect(pixel(e, PEAK_BIN)).toEqual([0xfd, 0xe7, 0x25, 255]);
    expect(pixel(0, PEAK_BIN)).not.toEqual([0xfd, 0xe7, 0x25, 255]);
    // the image spans the plot's time axis: 20 epochs of 30 s = 1/6 h
    expect(Number(image.getAttribute('width'))).toBeGreaterThan(600);
    const marks = figure.querySelectorAll('g.rejected-epochs rect');
    expect(marks).toHaveLength(REJECTED.size);
    expect(Array.from(marks, (m) => m.querySelector('title')?.textContent)).toEqual([...REJECTED.values()]);
    expect(figure.textContent).toContain('log10 power (log10 µV²/Hz)');
    expect(figure.textContent).toContain('time from recording start (h)');
    expect(figure.querySelectorAll('svg').length).toBeGreaterThanOrEqual(4); // colour bar, spectrogram, strip, hypnogram
    expect(container.querySelector('[data-testid="night-hint"]')).toBeNull();
    // the SVG export holds the whole picture: colour bar, raster image, strip and hypnogram in one SVG
    const blobs: Blob[] = [];
    vi.spyOn(URL, 'createObjectURL').mockImplementation((b) => {
      blobs.push(b as Blob);
      return 'blob:test';
    });
    vi.spyOn(URL, 'revokeObjectURL').mockImplementation(() => undefined);
    await fireEvent.click(screen.getByTestId('night-spectrogram-svg'));
    expect(blobs[0].type).toBe('image/svg+xml');
    const svg = await blobs[0].text();
    expect(svg).toContain('href="data:image/png;base64,AAAA"');
    expect(svg).toContain('log10 power (log10 µV²/Hz)');
    expect(svg.match(/class="rejected-epochs"/g)).toHaveLength(1);
  });

  it('without epoch spectra shows the band-power night and says how to get the full picture', async () => {
    render(RecordingNight, props('O1'));
    const hint = await screen.findByTestId('night-hint');
    expect(hint.textContent).toContain('bandwise ingest --epoch-spectra');
    expect(screen.getByTestId('cell-hypnogram')).toBeTruthy();
    expect(screen.queryByTestId('night-spectrogram')).toBeNull();
  });
});
