// One band grammar for every form and address key: `LO-HI` or `name:LO-HI` in Hz (as
// `bandwise band-check --band`). Edges without a name take the name of the preset with those edges,
// else the plain name "band"; the address always holds `name:LO-HI`.
import { DEFAULT_BANDS, SIGMA_PRESETS, BandError, checkBand, type Band } from '../../core/spectrum/bands.ts';
import { DEFAULT_BAND } from './defaults.ts';

/** Named bands offered as presets (edges stay editable). */
export const BAND_PRESETS: readonly Band[] = [...DEFAULT_BANDS.filter((b) => b.name !== 'broadband'), ...SIGMA_PRESETS];

/** A band with these edges: named after its preset when the edges match one, else plain "band". */
export function withEdges(loHz: number, hiHz: number): Band {
  const preset = BAND_PRESETS.find((b) => b.loHz === loHz && b.hiHz === hiHz);
  return checkBand(preset ? { ...preset } : { name: 'band', loHz, hiHz });
}

/** Parses `LO-HI` or `name:LO-HI` (Hz); throws naming the text. */
export function parseBandText(text: string): Band {
  const m = /^\s*(?:([A-Za-z][\w-]*)\s*:)?\s*(\d+(?:\.\d+)?)\s*-\s*(\d+(?:\.\d+)?)\s*$/.exec(text);
  if (!m) throw new BandError(`invalid band '${text}' (expected LO-HI or name:LO-HI in Hz, e.g. 12-16 or sigma:12-16)`);
  const loHz = Number(m[2]);
  const hiHz = Number(m[3]);
  return m[1] === undefined ? withEdges(loHz, hiHz) : checkBand({ name: m[1], loHz, hiHz });
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
