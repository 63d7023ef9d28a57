// A power simulation in the address bar: the contrast's keys (analysis/contrast-params.ts), the
// planted band as `band=name:LO-HI` (analysis/band-text.ts, as the band check's), and the plan's
// own keys: referenceGroup, effect, plantChannels, n, simulations, alpha. The contrast's seed is
// the simulation's seed (src/core/planning/power.ts derives each simulation's from it).
import type { Contrast } from '../../../core/contrast/spec.ts';
import { measureTakesBand, checkPowerPlan, type PowerPlan } from '../../../core/planning/index.ts';
import { bandFromParams, bandText } from '../../analysis/band-text.ts';
import { contrastFromParams, paramsFromContrast } from '../../analysis/contrast-params.ts';

/** The plan of a new power view (the command line's --simulations default is 200; fewer here, the browser shares the machine). */
export const POWER_DEFAULTS = { effect: '0.1', n: '10,20,30', simulations: '50', alpha: '0.05', plantChannels: 'all' } as const;

const number = (key: string, text: string): number => {
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v)) throw new Error(`address bar: ${key}=${text} is not a number`);
  return v;
};

/** Contrast and plan of the address bar (defaults filled); throws naming a bad key. */
export function powerFromParams(params: Readonly<Record<string, string>>): { contrast: Contrast; plan: PowerPlan } {
  const contrast = contrastFromParams(params);
  const get = (key: keyof typeof POWER_DEFAULTS) => params[key] ?? POWER_DEFAULTS[key];
  const channels = get('plantChannels');
  const plan: PowerPlan = {
    referenceGroup: params.referenceGroup ?? contrast.groups?.[0] ?? '',
    effect: number('effect', get('effect')),
    band: measureTakesBand(contrast.measure) ? bandFromParams(params) : null,
    channels: channels === 'all' ? 'all' : channels.split(',').filter((c) => c !== ''),
    nPerGroup: get('n')
      .split(',')
      .map((n) => number('n', n)),
    simulations: number('simulations', get('simulations')),
    seed: contrast.seed,
    alpha: number('alpha', get('alpha')),
  };
  checkPowerPlan(contrast, plan);
  return { contrast, plan };
}

/** The address bar of a power run (every key, so a link is complete). */
export function paramsFromPower(c: Contrast, plan: PowerPlan): Record<string, string> {
  return {
    ...paramsFromContrast(c),
    ...(plan.band ? { band: bandText(plan.band) } : {}),
    referenceGroup: plan.referenceGroup,
    effect: String(plan.effect),
    plantChannels: plan.channels === 'all' ? 'all' : plan.channels.join(','),
    n: plan.nPerGroup.join(','),
    simulations: String(plan.simulations),
    alpha: String(plan.alpha),
  };
}
