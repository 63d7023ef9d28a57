// The workflow end to end from the command line on the demo cohort (18 controls, 18 patients):
// split --blind, blinded exploration (compare, band-check, report), lock, confirm, report, a
// repeated confirmation, and a replaced split with a plan locked after its confirmation part had
// been looked at. Blinding is checked on every output of the blinded session: stdout and stderr of
// each command, the result JSONs and TSVs, the methods texts and their JSON, and the ledger hold
// neither group name nor a number per coded group. The plan's hash is checked with Python's
// hashlib (SHA-256, FIPS 180-4) over the plan JSON stored in the database.
import { spawnSync } from 'node:child_process';
import { copyFileSync, existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoDatabase } from '../helpers/demo-db.ts';
import { runPython } from '../helpers/python.ts';
import { countsIn, perGroupNumbers, realNames } from './leaks.ts';

const repo = path.resolve(import.meta.dirname, '../..');
const dir = mkdtempSync(path.join(tmpdir(), 'bw-workflow-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const db = path.join(dir, 'cohort.duckdb');
const ledger = `${db}.ledger.jsonl`;
const file = (name: string) => path.join(dir, name);
const REAL = ['control', 'patient'];
const CODES = ['group A', 'group B'];

/** Every output of the session so far: what each command printed, and the files it wrote. */
const printed: { command: string; text: string }[] = [];
function cli(args: string[]): { status: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [path.join(repo, 'bin/run-ts.mjs'), path.join(repo, 'src/cli/main.ts'), ...args], { encoding: 'utf8', cwd: dir });
  printed.push({ command: args.join(' '), text: r.stdout + r.stderr });
  return r;
}
const json = (name: string) => JSON.parse(readFileSync(file(name), 'utf8'));

async function sql(query: string): Promise<Record<string, unknown>[]> {
  const inst = await DuckDBInstance.create(':memory:');
  const c = await inst.connect();
  try {
    await c.run(`ATTACH '${db}' AS d (READ_ONLY)`);
    await c.run('USE d');
    return (await c.runAndReadAll(query)).getRowObjectsJS();
  } finally {
    c.closeSync();
    inst.closeSync();
  }
}

beforeAll(async () => {
  copyFileSync(await demoDatabase(), db);
}, 600_000);

const CODED = ['--groups', 'group A,group B', '--permutations', '200', '--quiet'];
let planId = '';

describe('split, blinded exploration, lock, confirm and report on the demo cohort', () => {
  it('split --blind: stratified halves, the codes named, the subject labels flagged; a second split refused', async () => {
    const r = cli(['split', db, '--seed', '11', '--blind']);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/^split [0-9a-f]{12}: exploration 18 subjects, confirmation 18 \(fraction 0\.5, seed 11, stratified by group \(2 strata\)\)/);
    expect(r.stdout).toContain('shown as group A, group B');
    expect(r.stdout).toContain('the subject labels tell the blinded groups apart');
    const parts = await sql(
      `SELECT p.group AS g, s.part, count(*)::INTEGER AS n FROM subject_split s JOIN participants p USING (subject) GROUP BY ALL ORDER BY ALL`,
    );
    expect(parts).toEqual([
      { g: 'control', part: 'confirmation', n: 9 },
      { g: 'control', part: 'exploration', n: 9 },
      { g: 'patient', part: 'confirmation', n: 9 },
      { g: 'patient', part: 'exploration', n: 9 },
    ]);
    const again = cli(['split', db, '--seed', '12']);
    expect(again.status).toBe(1);
    expect(again.stderr).toContain('a second split is refused');
  });

  it('exploration reads the exploration part with coded groups; real group names are refused', () => {
    const e1 = cli([
      'compare',
      db,
      ...CODED,
      '--stage',
      'N2',
      '--measure',
      'residual',
      '--out',
      file('e1.json'),
      '--tsv',
      file('e1.tsv'),
      '--points-tsv',
      file('e1-points.tsv'),
    ]);
    expect(e1.status, e1.stderr).toBe(0);
    // 18 explored subjects; ctl09 (a flat O2 channel, no clean epoch) is left out when it explores
    const [, n, left] = /n: both groups (\d+); excluded: (\d+)/.exec(e1.stdout)!.map(Number);
    expect(n + left).toBe(18);
    expect(e1.stdout).toMatch(/exploration part of split [0-9a-f]{12} \(18 of 36 subjects\); groups blinded, group sizes pooled/);
    const r = json('e1.json');
    expect(r.part).toBe('exploration');
    expect(r.blinded).toBe(true);
    expect(r.subjects.length + r.exclusions.length).toBe(18);
    const e2 = cli(['compare', db, ...CODED, '--stage', 'N2', '--measure', 'peak-center', '--band', 'sigma', '--out', file('e2.json')]);
    expect(e2.status, e2.stderr).toBe(0);
    const bc = cli(['band-check', db, ...CODED, '--stage', 'N2', '--band', 'sigma', '--channels', 'C3,C4,Cz,P3,P4,Pz', '--out', file('b.json')]);
    expect(bc.status, bc.stderr).toBe(0);
    expect(json('b.json').verdict).toBe('band-specific');
    for (const name of ['e1', 'b']) expect(cli(['report', file(`${name}.json`), '--out', file(`${name}-methods.md`), '--database', db]).status).toBe(0);
    expect(readFileSync(file('e1-methods.md'), 'utf8')).toContain('It is exploratory');
    const refused = cli(['compare', db, '--groups', 'control,patient', '--out', file('x.json')]);
    expect(refused.status).toBe(1);
    expect(refused.stderr).toBe('bandwise compare: the groups of "group" are blinded while exploring: name them by their codes (group A, group B)\n');
    printed.pop(); // the refused command line itself named the real groups
  });

  it('lock prints the plan id; the stored hash is the SHA-256 of the stored plan JSON (hashlib)', async () => {
    writeFileSync(file('plan.json'), JSON.stringify({ design: 'groups', groups: ['group A', 'group B'], stage: 'N2', measure: 'residual', permutations: 500 }));
    writeFileSync(file('exclusions.tsv'), 'subject\tchannel\treason\nctl09\tall\tflat O2 channel\n');
    const r = cli(['lock', db, '--contrast', file('plan.json'), '--exclusions', file('exclusions.tsv')]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/^plan [0-9a-f]{12}\n$/);
    planId = r.stdout.trim().split(' ')[1];
    const [row] = await sql(`SELECT plan_id, sha256, plan::VARCHAR AS plan FROM analysis_plans`);
    expect(row.plan_id).toBe(planId);
    const digest = runPython<string>(`import hashlib\nprint(json.dumps(hashlib.sha256(${JSON.stringify(String(row.plan))}.encode('utf-8')).hexdigest()))`);
    expect(row.sha256).toBe(digest);
    expect(digest.slice(0, 12)).toBe(planId);
    // the same plan again: the same id, nothing new stored
    expect(cli(['lock', db, '--contrast', file('plan.json'), '--exclusions', file('exclusions.tsv')]).stdout).toBe(`plan ${planId}\n`);
    expect((await sql('SELECT count(*)::INTEGER AS n FROM analysis_plans'))[0].n).toBe(1);
  });

  it('nothing printed or written while blinded names a real group or counts a coded group', () => {
    const files = ['e1.json', 'e1.tsv', 'e1-points.tsv', 'e2.json', 'b.json', 'e1-methods.md', 'e1-methods.json', 'b-methods.md', 'b-methods.json'].map((f) =>
      file(f),
    );
    const texts = [
      ...printed.map((p) => ({ what: `output of bandwise ${p.command}`, text: p.text })),
      ...files.map((f) => ({ what: f, text: readFileSync(f, 'utf8') })),
      { what: 'ledger', text: readFileSync(ledger, 'utf8') },
    ];
    for (const { what, text } of texts) {
      expect(realNames(text, REAL), what).toEqual([]);
      expect(countsIn(text, CODES), what).toEqual([]);
    }
    for (const f of ['e1.json', 'e2.json', 'b.json']) expect(perGroupNumbers(json(f), CODES), f).toEqual([]);
    for (const line of readFileSync(ledger, 'utf8').trim().split('\n')) expect(perGroupNumbers(JSON.parse(line), CODES)).toEqual([]);
    // the peak-centre contrast left points out: its notes pool the counts
    expect(json('e2.json').notes.join(' ')).toMatch(/both groups \d+/);
  });

  it('confirm runs the plan on the held-out part, unblinded; the report names the plan and its hash', () => {
    const r = cli(['confirm', db, '--plan', planId, '--out', file('conf.json'), '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain(`plan ${planId}`);
    expect(r.stdout).toContain('confirmation 1 on 18 held-out subjects');
    const c = json('conf.json');
    expect(c.part).toBe('confirmation');
    expect(c.blinded).toBe(false);
    expect(c.plan).toMatchObject({ id: planId, confirmationRun: 1, contrasts: 1, alpha: 0.05 });
    expect(c.plan.hash).toMatch(/^[0-9a-f]{64}$/);
    expect(c.plan.lockedAt).toMatch(/^\d{4}-\d\d-\d\dT/);
    expect(c.plan.analysedBeforeLock).toEqual({ wholeCohort: 0, earlierSplits: 0, confirmations: 0 });
    expect(Object.keys(c.n).sort()).toEqual(REAL);
    // disjoint from the explored subjects; ctl09, excluded by the plan, is left out if it is held out
    const explored = new Set(json('e1.json').subjects.map((s: { subject: string }) => s.subject));
    expect(c.subjects.filter((s: { subject: string }) => explored.has(s.subject))).toEqual([]);
    expect(c.subjects.length + c.exclusions.length).toBe(18);
    expect(cli(['report', file('conf.json'), '--out', file('conf-methods.md'), '--database', db]).status).toBe(0);
    const md = readFileSync(file('conf-methods.md'), 'utf8');
    expect(md).toContain(
      `This is the confirmatory analysis of plan ${planId}, locked at ${c.plan.lockedAt} (SHA-256 of the plan's canonical JSON: ${c.plan.hash})`,
    );
    expect(md).toContain('before this analysis of the confirmation part');
    expect(md).toContain('records no analysis that included confirmation-part subjects before the plan was locked');
    expect(md).not.toContain('not the first confirmation');
  });

  it('a second confirmation is numbered 2, and the report says it is not the first', () => {
    const r = cli(['confirm', db, '--plan', planId, '--out', file('conf2.json'), '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain('warning: not the first confirmation of this plan');
    expect(json('conf2.json').plan.confirmationRun).toBe(2);
    cli(['report', file('conf2.json'), '--out', file('conf2-methods.md'), '--database', db]);
    expect(readFileSync(file('conf2-methods.md'), 'utf8')).toContain('**This is not the first confirmation of this plan** but confirmation 2');
    const lines = readFileSync(ledger, 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    expect(lines.filter((l) => l.kind === 'compare' && l.part === 'confirmation').map((l) => l.confirmationRun)).toEqual([1, 2]);
    expect(lines.filter((l) => l.kind === 'lock')).toHaveLength(1);
  });

  it('a replaced split lists what ran on the old one; its plan can no longer be confirmed; a plan locked on the new split after those looks says so', () => {
    const r = cli(['split', db, '--seed', '12', '--blind', '--replace']);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain('the ledger records 3 analyses on its exploration part and 2 on its confirmation part');
    expect(r.stdout).toContain(`plans locked on it, which can no longer be confirmed: ${planId} (2 confirmations)`);
    const stale = cli(['confirm', db, '--plan', planId, '--out', file('stale.json')]);
    expect(stale.status).toBe(1);
    expect(stale.stderr).toContain('no longer the current split');
    const lock = cli(['lock', db, '--contrast', file('plan.json')]);
    expect(lock.status, lock.stderr).toBe(0);
    expect(lock.stderr).toMatch(
      /warning: the ledger shows \d+ analyses that included confirmation-part subjects before the plan was locked \(\d+ on an earlier split that shares subjects with this confirmation part\)/,
    );
    const late = lock.stdout.trim().split(' ')[1];
    expect(cli(['confirm', db, '--plan', late, '--out', file('late.json'), '--quiet']).status).toBe(0);
    expect(json('late.json').plan.analysedBeforeLock.earlierSplits).toBeGreaterThan(0);
    cli(['report', file('late.json'), '--out', file('late-methods.md'), '--database', db]);
    expect(readFileSync(file('late-methods.md'), 'utf8')).toContain('**The plan was locked after data of the confirmation part had been analysed:**');
    expect(existsSync(ledger)).toBe(true);
  });
});
