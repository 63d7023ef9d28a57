// One band grammar for every form, address key and command: `LO-HI`, `name:LO-HI` (Hz) or a preset
// name, parsed by src/core/spectrum/bands.ts parseBand; the address always holds `name:LO-HI`.
import { DEFAULT_BANDS, SIGMA_PRESETS, checkBand, parseBand, type Band } from '../../core/spectrum/bands.ts';
import { DEFAULT_BAND } from './defaults.ts';

/** Named bands offered as presets (edges stay editable). */
export const BAND_PRESETS: readonly Band[] = [...DEFAULT_BANDS.filter((b) => b.name !== 'broadband'), ...SIGMA_PRESETS];

/** A band with these edges: named after its preset when the edges match one, else plain "band". */
export function withEdges(loHz: number, hiHz: number): Band {
  const preset = BAND_PRESETS.find((b) => b.loHz === loHz && b.hiHz === hiHz);
  return checkBand(preset ? { ...preset } : { name: 'band', loHz, hiHz });
}

/** Parses a band with the commands' one grammar (src/core/spectrum/bands.ts parseBand); throws naming the text. */
export function parseBandText(text: string): Band {
  const band = parseBand(text);
  // plain edges that are a preset's take the preset's name, as a preset chosen from the list would
  const preset = /:/.test(text) ? undefined : BAND_PRESETS.find((b) => b.loHz === band.loHz && b.hiHz === band.hiHz);
  return preset ? { ...preset } : band;
}

/** The address form of a band: `name:LO-HI`. */
export function bandText(band: Band): string {
  checkBand(band);
  return `${band.name}:${band.loHz}-${band.hiHz}`;
}

/** The band of the address bar (`band=…`), the default band when absent. */
export function bandFromParams(params: Readonly<Record<string, string>>): Band {
  const text = params.band;
  return text === undefined || text === '' ? { ...DEFAULT_BAND } : parseBandText(text);
}
