// The night's pixels (night-charts.ts) as a PNG image address, drawn on a canvas by the browser.
import type { NightRaster } from './night-charts.ts';

export function rasterDataUrl(raster: NightRaster): string {
  const canvas = document.createElement('canvas');
  canvas.width = raster.width;
  canvas.height = raster.height;
  const ctx = canvas.getContext('2d');
  if (ctx === null) throw new Error('no 2D canvas available to draw the spectrogram');
  const image = ctx.createImageData(raster.width, raster.height);
  image.data.set(raster.rgba);
  ctx.putImageData(image, 0, 0);
  return canvas.toDataURL('image/png');
}
