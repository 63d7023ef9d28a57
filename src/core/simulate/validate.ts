/**
 * Checks of a scenario that a type schema cannot express (names that must exist, ranges that
 * depend on each other). Throws a ScenarioError naming the field and the bad value.
 */
import { electrodePosition } from '../montage/positions.ts';
import { SCORED_STAGES } from '../stages.ts';
import { ScenarioError, type Scenario } from './scenario.ts';
import { listSubjects } from './subjects.ts';

function fail(field: string, value: unknown, message: string): never {
  throw new ScenarioError(field, value, message);
}

export function checkScenario(s: Scenario): void {
  if (!(s.epochS > 0)) fail('epochS', s.epochS, 'must be a positive number of seconds');
  const nEpochs = (s.nightMin * 60) / s.epochS;
  if (!Number.isInteger(nEpochs) || nEpochs < 1) fail('nightMin', s.nightMin, `must be a whole number of ${s.epochS}-s epochs`);
  if (s.stages) {
    if (s.stages.length !== nEpochs) fail('stages', s.stages.length, `must list one stage per epoch (${nEpochs})`);
    s.stages.forEach((st, i) => {
      if (!(SCORED_STAGES as readonly string[]).includes(st)) fail(`stages[${i}]`, st, 'not one of W, N1, N2, N3, R');
    });
  }
  if (!(s.highPassHz > 0)) fail('highPassHz', s.highPassHz, 'must be > 0 Hz');
  if (s.channels.length === 0) fail('channels', s.channels, 'needs at least one channel');
  const seen = new Set<string>();
  s.channels.forEach((c, i) => {
    if (!electrodePosition(c)) fail(`channels[${i}]`, c, 'not a 10-10 electrode name with a known position');
    if (seen.has(c.toUpperCase())) fail(`channels[${i}]`, c, 'listed twice');
    seen.add(c.toUpperCase());
  });
  if (!electrodePosition(s.reference.site)) fail('reference.site', s.reference.site, 'not a 10-10 electrode name with a known position');
  if (seen.has(s.reference.site.toUpperCase())) fail('reference.site', s.reference.site, 'is also a recorded channel');
  if (!/^[A-Za-z0-9]+$/.test(s.reference.label)) fail('reference.label', s.reference.label, 'must be letters and digits');
  for (const st of SCORED_STAGES) {
    const a = s.aperiodic[st];
    if (!a) fail(`aperiodic.${st}`, a, 'missing');
    if (!(a.knee >= 0)) fail(`aperiodic.${st}.knee`, a.knee, 'must be ≥ 0');
  }
  s.background.sources.forEach((src, i) => {
    if (!electrodePosition(src.site)) fail(`background.sources[${i}].site`, src.site, 'not a 10-10 electrode name');
    if (!(src.widthDeg > 0)) fail(`background.sources[${i}].widthDeg`, src.widthDeg, 'must be > 0');
    if (!(src.weight >= 0)) fail(`background.sources[${i}].weight`, src.weight, 'must be ≥ 0');
  });
  if (!(s.background.electrodeWeight > 0)) fail('background.electrodeWeight', s.background.electrodeWeight, 'must be > 0');
  const rhythmNames = new Set<string>();
  s.rhythms.forEach((r, i) => {
    const f = `rhythms[${i}]`;
    if (rhythmNames.has(r.name)) fail(`${f}.name`, r.name, 'listed twice');
    rhythmNames.add(r.name);
    if (!electrodePosition(r.site)) fail(`${f}.site`, r.site, 'not a 10-10 electrode name');
    if (!(r.widthDeg > 0)) fail(`${f}.widthDeg`, r.widthDeg, 'must be > 0');
    if (!(r.centerHz > 0)) fail(`${f}.centerHz`, r.centerHz, 'must be > 0 Hz');
    if (r.kind === 'bursts') {
      const [lo, hi] = r.durationS;
      if (!(lo > 0 && hi >= lo && hi <= s.epochS)) fail(`${f}.durationS`, r.durationS, `needs 0 < min ≤ max ≤ ${s.epochS} s`);
    } else if (!(r.bandwidthHz > 0)) fail(`${f}.bandwidthHz`, r.bandwidthHz, 'must be > 0 Hz');
  });
  const groupNames = new Set<string>();
  const prefixes = new Set<string>();
  s.groups.forEach((g, i) => {
    if (groupNames.has(g.name)) fail(`groups[${i}].name`, g.name, 'listed twice');
    if (prefixes.has(g.codePrefix)) fail(`groups[${i}].codePrefix`, g.codePrefix, 'used by two groups');
    if (!/^[A-Za-z0-9]+$/.test(g.codePrefix)) fail(`groups[${i}].codePrefix`, g.codePrefix, 'must be letters and digits');
    groupNames.add(g.name);
    prefixes.add(g.codePrefix);
  });
  const subjects = listSubjects(s);
  if (subjects.length === 0) fail('groups', s.groups.length, 'no subjects');
  const codes = new Set(subjects.map((x) => x.code));
  for (const code of Object.keys(s.subjects ?? {})) if (!codes.has(code)) fail(`subjects.${code}`, code, 'no such subject');
  for (const subj of subjects) {
    const fs = subj.fsHz;
    const field = s.subjects?.[subj.code]?.fsHz !== undefined ? `subjects.${subj.code}.fsHz` : `groups (${subj.group}).fsHz`;
    if (!Number.isInteger(fs) || fs < 64 || fs > 2048) fail(field, fs, 'must be a whole number of Hz in 64 … 2048');
    if (!Number.isInteger(fs * s.epochS)) fail(field, fs, `an epoch of ${s.epochS} s is not a whole number of samples`);
  }
  s.effects.forEach((e, i) => {
    if (!groupNames.has(e.group)) fail(`effects[${i}].group`, e.group, 'no such group');
    if (e.kind === 'rhythm-amplitude') {
      if (!rhythmNames.has(e.rhythm)) fail(`effects[${i}].rhythm`, e.rhythm, 'no such rhythm');
      if (!(e.factor >= 0)) fail(`effects[${i}].factor`, e.factor, 'must be ≥ 0');
    } else if (e.kind === 'rhythm-frequency') {
      const r = s.rhythms.find((x) => x.name === e.rhythm);
      if (!r) fail(`effects[${i}].rhythm`, e.rhythm, 'no such rhythm');
      if (!(Number.isFinite(e.shiftHz) && r.centerHz + e.shiftHz > 0))
        fail(`effects[${i}].shiftHz`, e.shiftHz, `the shifted centre ${r.centerHz} + shiftHz must be > 0 Hz`);
    }
  });
  s.artifacts.forEach((a, i) => {
    const subj = subjects.find((x) => x.code === a.subject);
    if (!subj) fail(`artifacts[${i}].subject`, a.subject, 'no such subject');
    if (a.kind === 'mains') {
      if (a.frequencyHz >= subj.fsHz / 2) fail(`artifacts[${i}].frequencyHz`, a.frequencyHz, `not below the Nyquist frequency (${subj.fsHz / 2} Hz)`);
      if (a.channels !== 'all') for (const c of a.channels) if (!seen.has(c.toUpperCase())) fail(`artifacts[${i}].channels`, c, 'not a recorded channel');
    } else if (a.kind === 'flat') {
      if (!seen.has(a.channel.toUpperCase())) fail(`artifacts[${i}].channel`, a.channel, 'not a recorded channel');
    } else {
      if (!(a.epochFraction >= 0 && a.epochFraction <= 1)) fail(`artifacts[${i}].epochFraction`, a.epochFraction, 'must be in [0, 1]');
      const [lo, hi] = a.durationS;
      if (!(lo > 0 && hi >= lo && hi <= s.epochS)) fail(`artifacts[${i}].durationS`, a.durationS, `needs 0 < min ≤ max ≤ ${s.epochS} s`);
    }
  });
  if (!/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d$/.test(s.startDate)) fail('startDate', s.startDate, "must be 'YYYY-MM-DDTHH:MM:SS'");
}
