// The form parts every analysis view shares (src/dashboard/analysis/), rendered in happy-dom over
// the real router: what each field shows and what it writes to the address bar. Defaults are
// checked against the contrast JSON schema that `bandwise compare` fills in
// (src/core/contrast/spec.ts); band edges against src/core/spectrum/bands.ts (common practice).
import { fireEvent, render, screen } from '@testing-library/svelte';
import { tick } from 'svelte';
import { beforeEach, describe, expect, it, vi } from 'vitest';
import { parseContrast } from '../../src/core/contrast/spec.ts';
import { ledgerEntry } from '../../src/core/report/ledger.ts';
import { DEFAULT_BANDS, SIGMA_PRESETS } from '../../src/core/spectrum/bands.ts';
import AnalysisHead from '../../src/dashboard/analysis/AnalysisHead.svelte';
import { AnalysisForm } from '../../src/dashboard/analysis/analysis-form.svelte.ts';
import { AnalysisRun, type Progress } from '../../src/dashboard/analysis/analysis-run.svelte.ts';
import BandFields from '../../src/dashboard/analysis/BandFields.svelte';
import DesignFields from '../../src/dashboard/analysis/DesignFields.svelte';
import FrequencyRangeField from '../../src/dashboard/analysis/FrequencyRangeField.svelte';
import MeasureField from '../../src/dashboard/analysis/MeasureField.svelte';
import NuisanceFields from '../../src/dashboard/analysis/NuisanceFields.svelte';
import { contrastFromParams } from '../../src/dashboard/analysis/contrast-params.ts';
import type { FormChoices } from '../../src/dashboard/analysis/form-choices.ts';
import RunControls from '../../src/dashboard/analysis/RunControls.svelte';
import StatisticsFields from '../../src/dashboard/analysis/StatisticsFields.svelte';
import { notes } from '../../src/dashboard/db/database-notes.svelte.ts';
import { Router } from '../../src/dashboard/router.svelte.ts';

// the head's split note reads the session, whose module loads duckdb-wasm's engine (a Worker, which
// jsdom has not); the engine is not under test here
vi.mock('../../src/dashboard/db/connection.ts', () => ({ openPickedFile: vi.fn(), openServedDatabase: vi.fn(), preloadEngine: vi.fn() }));

/** What a database like the demo's offers (references sorted as the database lists them: the command line's default is not first). */
const CHOICES: FormChoices = {
  textColumns: new Map([
    ['group', ['control', 'patient']],
    ['site', ['north', 'south', 'west']],
  ]),
  numericColumns: ['age'],
  stages: ['N1', 'N2', 'N3', 'R', 'W'],
  references: ['linked-mastoids', 'recorded'],
  averagings: ['mean', 'median'],
};

/** The command line's defaults: what parseContrast fills in for a minimal contrast. */
const CLI = parseContrast({ design: 'groups', groups: ['control', 'patient'] });

let router: Router;

/** A form over the real router, opened at `hash`, with the database's choices known. */
function formAt(hash: string, choices: FormChoices | null = CHOICES): AnalysisForm {
  history.replaceState(null, '', hash);
  router = new Router();
  const form = new AnalysisForm(router);
  form.choices.value = choices;
  return form;
}

const field = (id: string) => screen.getByTestId(id) as HTMLInputElement | HTMLSelectElement;
const params = () => router.route.params;

describe('NuisanceFields', () => {
  it('offers the participants columns but the group column, writes the picked ones as "nuisance", and parses into the contrast', async () => {
    const form = formAt('#/contrast?design=groups&groups=control,patient&run=1');
    render(NuisanceFields, { form, testPrefix: 'c' });
    expect(screen.queryByTestId('c-nuisance-group')).toBeNull();
    await fireEvent.click(field('c-nuisance-site'));
    await fireEvent.click(field('c-nuisance-age'));
    expect(params()).toMatchObject({ nuisance: 'site,age' });
    expect(params().run).toBeUndefined();
    expect(contrastFromParams(form.values).nuisance).toEqual(['site', 'age']);
    await fireEvent.click(field('c-nuisance-site'));
    expect(params().nuisance).toBe('age');
  });
});

describe('DesignFields', () => {
  it('opens a new analysis on the command line’s defaults: two groups of `group`, N2, the recorded reference, mean over epochs, all channels', () => {
    const form = formAt('#/contrast');
    render(DesignFields, { form, testPrefix: 'c' });
    expect(field('c-design').value).toBe('groups');
    expect(field('c-group-column').value).toBe('group');
    expect([field('c-group-0').value, field('c-group-1').value]).toEqual(CLI.groups);
    expect(field('c-stage').value).toBe(CLI.stage);
    // the reference stored first is linked-mastoids; the form still opens on the command line's default
    expect(field('c-reference').value).toBe(CLI.reference);
    expect(field('c-reference').value).toBe('recorded');
    expect(field('c-averaging').value).toBe(CLI.averaging);
    expect(field('c-channels').value).toBe(CLI.channels);
    expect(screen.getByText(/Differences are the second group minus the first/)).toBeTruthy();
  });

  it('falls back to a stored reference when the database lacks the command line’s default', () => {
    const form = formAt('#/contrast', { ...CHOICES, references: ['average', 'linked-mastoids'] });
    render(DesignFields, { form, testPrefix: 'c' });
    expect(field('c-reference').value).toBe('average');
  });

  it('writes each choice to the address and drops run=1', async () => {
    const form = formAt('#/contrast?run=1&statistic=welch-t');
    render(DesignFields, { form, testPrefix: 'c' });
    await fireEvent.change(field('c-group-column'), { target: { value: 'site' } });
    expect(params()).toMatchObject({ groupColumn: 'site', groups: 'north,south' });
    expect(params().run).toBeUndefined();
    await fireEvent.change(field('c-group-1'), { target: { value: 'west' } });
    expect(params().groups).toBe('north,west');
    await fireEvent.change(field('c-channels'), { target: { value: ' C3, Cz ' } });
    expect(params().channels).toBe('C3,Cz');
    await fireEvent.change(field('c-channels'), { target: { value: '  ' } });
    expect(params().channels).toBe('all');
    await fireEvent.click(field('c-channel-average'));
    expect(params().channelAverage).toBe('true');
    await fireEvent.change(field('c-reference'), { target: { value: 'linked-mastoids' } });
    expect(params().reference).toBe('linked-mastoids');
  });

  it('paired stages: picks N2 and N3 and clears the statistic; a covariate picks the first numeric column', async () => {
    const form = formAt('#/contrast?statistic=welch-t');
    render(DesignFields, { form, testPrefix: 'c' });
    await fireEvent.change(field('c-design'), { target: { value: 'paired' } });
    expect(params()).toMatchObject({ design: 'paired', stages: 'N2,N3' });
    expect(params().statistic).toBeUndefined();
    expect(screen.queryByTestId('c-stage')).toBeNull();
    expect([field('c-paired-0').value, field('c-paired-1').value]).toEqual(['N2', 'N3']);
    await fireEvent.change(field('c-paired-1'), { target: { value: 'R' } });
    expect(params().stages).toBe('N2,R');
    await fireEvent.change(field('c-design'), { target: { value: 'covariate' } });
    expect(params()).toMatchObject({ design: 'covariate', covariate: 'age' });
    expect(screen.getByText(/Differences are the correlation with the covariate/)).toBeTruthy();
  });

  it('a robustness form: no paired design, no reference or averaging (they are varied), channels always averaged', () => {
    const form = formAt('#/robustness');
    render(DesignFields, { form, allowPaired: false, chooseReference: false, channelsAveraged: true, testPrefix: 'rb' });
    expect([...(field('rb-design') as HTMLSelectElement).options].map((o) => o.value)).toEqual(['groups', 'covariate']);
    expect(screen.queryByTestId('rb-reference')).toBeNull();
    expect(screen.queryByTestId('rb-averaging')).toBeNull();
    expect(screen.queryByTestId('rb-channel-average')).toBeNull();
    expect(screen.getByText('Channels (averaged)')).toBeTruthy();
  });
});

describe('BandFields', () => {
  const sigma = DEFAULT_BANDS.find((b) => b.name === 'sigma')!;

  it('opens on sigma 12–16 Hz and offers the named bands without broadband', () => {
    const form = formAt('#/band-check');
    render(BandFields, { form, testPrefix: 'bc' });
    expect(field('bc-band-preset').value).toBe('sigma');
    expect(field('bc-band').value).toBe(`sigma:${sigma.loHz}-${sigma.hiHz}`);
    const offered = [...(field('bc-band-preset') as HTMLSelectElement).options].map((o) => o.value).filter(Boolean);
    expect(offered).toEqual([...DEFAULT_BANDS.filter((b) => b.name !== 'broadband'), ...SIGMA_PRESETS].map((b) => b.name));
  });

  it('takes LO-HI or name:LO-HI; edges of a preset take its name; a preset name is its band; anything else is refused with the text named', async () => {
    const form = formAt('#/band-check?band=theta:4-8&run=1');
    render(BandFields, { form, testPrefix: 'bc' });
    expect(field('bc-band-preset').value).toBe('theta');
    await fireEvent.change(field('bc-band'), { target: { value: '11-15' } });
    expect(params().band).toBe('11–15 Hz:11-15'); // named as the commands name plain edges (bands.ts parseBand)
    expect(params().run).toBeUndefined();
    expect(field('bc-band-preset').value).toBe('');
    await fireEvent.change(field('bc-band'), { target: { value: '13-15' } });
    expect(params().band).toBe('fast-sigma:13-15');
    await fireEvent.change(field('bc-band'), { target: { value: 'spindle:11.5-15.5' } });
    expect(params().band).toBe('spindle:11.5-15.5');
    await fireEvent.change(field('bc-band'), { target: { value: '16-12' } });
    expect(screen.getByTestId('bc-band-error').textContent).toMatch(/invalid edges 16–12 Hz/);
    await fireEvent.change(field('bc-band'), { target: { value: 'theta 4-8' } });
    expect(screen.getByTestId('bc-band-error').textContent).toMatch(/invalid band 'theta 4-8': expected LO-HI/);
    expect(params().band).toBe('spindle:11.5-15.5');
    await fireEvent.change(field('bc-band-preset'), { target: { value: 'alpha' } });
    expect(params().band).toBe('alpha:8-12');
    expect(screen.queryByTestId('bc-band-error')).toBeNull();
  });
});

describe('FrequencyRangeField and MeasureField', () => {
  it('show the command line’s frequency range and measure, and write what is picked into the contrast', async () => {
    const form = formAt('#/contrast?design=groups&groups=control,patient');
    render(FrequencyRangeField, { form, testPrefix: 'c' });
    render(MeasureField, { form, measures: ['log-psd', 'residual', 'offset'], testPrefix: 'c' });
    expect(Number(field('c-fmin').value)).toBe(CLI.fminHz);
    expect(Number(field('c-fmax').value)).toBe(CLI.fmaxHz);
    expect(field('c-measure').value).toBe(CLI.measure);
    expect([...(field('c-measure') as HTMLSelectElement).options].map((o) => o.value)).toEqual(['log-psd', 'residual', 'offset']);
    await fireEvent.change(field('c-fmin'), { target: { value: '0.5' } });
    await fireEvent.change(field('c-fmax'), { target: { value: '20' } });
    await fireEvent.change(field('c-measure'), { target: { value: 'residual' } });
    expect(params()).toMatchObject({ fminHz: '0.5', fmaxHz: '20', measure: 'residual' });
    const c = contrastFromParams(params());
    expect([c.fminHz, c.fmaxHz, c.measure]).toEqual([0.5, 20, 'residual']);
  });
});

describe('StatisticsFields', () => {
  it('shows the command line’s defaults and the statistics each design offers', async () => {
    const form = formAt('#/contrast');
    render(StatisticsFields, { form, statistic: true, correction: true, clusterP: true, testPrefix: 'c' });
    expect(field('c-correction').value).toBe(CLI.correction);
    expect(Number(field('c-cluster-p').value)).toBe(CLI.clusterP);
    expect(Number(field('c-permutations').value)).toBe(CLI.permutations);
    expect(Number(field('c-seed').value)).toBe(CLI.seed);
    const offered = () => [...(field('c-statistic') as HTMLSelectElement).options].map((o) => o.value);
    expect(offered()).toEqual(['', 'welch-t', 'student-t', 'linear-model-t']);
    router.setParam('design', 'paired');
    await tick();
    expect(offered()).toEqual(['', 'paired-t']);
    router.setParam('design', 'covariate');
    await tick();
    expect(offered()).toEqual(['', 'pearson', 'spearman', 'linear-model-t']);
    await fireEvent.change(field('c-statistic'), { target: { value: 'spearman' } });
    await fireEvent.change(field('c-permutations'), { target: { value: '5000' } });
    await fireEvent.change(field('c-seed'), { target: { value: '42' } });
    await fireEvent.change(field('c-correction'), { target: { value: 'tfce' } });
    expect(params()).toMatchObject({ statistic: 'spearman', permutations: '5000', seed: '42', correction: 'tfce' });
  });

  it('offers only permutations and seed where the analysis has no cluster test settings', () => {
    const form = formAt('#/robustness?permutations=200');
    render(StatisticsFields, { form, permutationsLabel: 'Permutations per path', testPrefix: 'rb' });
    expect(screen.queryByTestId('rb-statistic')).toBeNull();
    expect(screen.queryByTestId('rb-correction')).toBeNull();
    expect(screen.queryByTestId('rb-cluster-p')).toBeNull();
    expect(field('rb-permutations').value).toBe('200');
    expect(screen.getByText('Permutations per path')).toBeTruthy();
  });
});

describe('AnalysisHead', () => {
  beforeEach(() => {
    notes.ledger = [];
  });

  it('shows one count of distinct analyses for every view, significant below p 0.05, and which ledger holds it', async () => {
    render(AnalysisHead, { title: 'Band check' });
    expect(screen.getByRole('heading').textContent).toBe('Band check');
    const entry = (kind: string, seed: number, p: number | null) => ledgerEntry({ kind, contrast: { seed }, p }, 'cohort.duckdb', 'd', '2026-01-01T00:00:00Z');
    notes.name = 'cohort.duckdb';
    // a reload ran the first contrast again: one analysis
    notes.ledger = [
      entry('compare', 1, 0.01),
      entry('compare', 1, 0.01),
      entry('compare', 2, 0.2),
      entry('band-check', 1, 0.049),
      entry('band-check', 2, null),
    ];
    notes.shared = true;
    await tick();
    expect(screen.getByTestId('ledger-count').textContent).toBe(
      'Distinct analyses run on this database: 4 (2 compare, 2 band-check), significant: 2 (ledger beside the database, shared with the command line)',
    );
    notes.shared = false;
    await tick();
    expect(screen.getByTestId('ledger-count').textContent).toContain("(this browser's own ledger: the one beside the database cannot be reached)");
  });
});

describe('RunControls', () => {
  const settle = () => new Promise((r) => setTimeout(r, 0));

  it('follows a run: reading, progress with its step, cancel; then the error of a failed read', async () => {
    let failRead = false;
    let report!: (p: Progress) => void;
    let cancelled = 0;
    let answer!: (v: string) => void;
    const run = new AnalysisRun<string, string, string>({
      key: (i) => i,
      read: () => (failRead ? Promise.reject(new Error('no N2 spectra with reference average')) : new Promise<string>((r) => (answer = r))),
      start: (_i, _d, progress) => {
        report = progress;
        return { result: new Promise(() => undefined), cancel: () => cancelled++ };
      },
    });
    render(RunControls, { run, name: 'band-check', label: 'Run band check', unit: 'tests', ready: true, settingsError: null });
    const button = screen.getByTestId('run-band-check') as HTMLButtonElement;
    expect(button.disabled).toBe(false);
    void run.run('a');
    await tick();
    expect(screen.getByTestId('band-check-reading').textContent).toBe('reading the spectra…');
    expect(button.disabled).toBe(true);
    answer('rows');
    await settle();
    report({ step: 'offset', done: 3, total: 11 });
    await tick();
    const bar = screen.getByTestId('band-check-progress') as HTMLProgressElement;
    expect([bar.value, bar.max]).toEqual([3, 11]);
    expect(screen.getByText('3 / 11 tests (offset)')).toBeTruthy();
    await fireEvent.click(screen.getByTestId('cancel-band-check'));
    expect(cancelled).toBe(1);
    expect(screen.queryByTestId('band-check-progress')).toBeNull();
    expect(screen.queryByTestId('band-check-error')).toBeNull();
    expect(button.disabled).toBe(false);
    failRead = true;
    await run.run('b');
    await tick();
    expect(screen.getByTestId('band-check-error').textContent).toBe('no N2 spectra with reference average');
  });

  it('cannot run settings that do not parse, and says why', () => {
    const run = new AnalysisRun<string, string, string>({
      key: (i) => i,
      read: async () => '',
      start: () => ({ result: new Promise(() => undefined), cancel: () => undefined }),
    });
    render(RunControls, {
      run,
      name: 'contrast',
      label: 'Run contrast',
      unit: 'permutations',
      ready: false,
      settingsError: 'invalid contrast:\n  fmaxHz: fmaxHz (1) must exceed fminHz (30)',
    });
    expect((screen.getByTestId('run-contrast') as HTMLButtonElement).disabled).toBe(true);
    expect(screen.getByRole('alert').textContent).toContain('fmaxHz (1) must exceed fminHz (30)');
  });
});
