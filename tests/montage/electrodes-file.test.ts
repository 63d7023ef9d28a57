/**
 * Electrode positions files: the BIDS `_electrodes.tsv` layout with its `_coordsystem.json`
 * (BIDS specification, EEG, "Electrodes description" and "Coordinate System JSON"; axes of the
 * named systems in the appendix "Coordinate systems"), the head sphere fitted to them and where a
 * recording's channels land. Positions are invented.
 */
import { describe, expect, it } from 'vitest';
import { bidsCoordsystemName, bidsElectrodesFile, parseCoordsystem } from '../../ingest/cohort/positions.ts';
import { headLayout, placeChannel } from '../../src/core/montage/channel-placement.ts';
import { ElectrodesFileError, parseElectrodesTsv } from '../../src/core/montage/electrodes-file.ts';
import { fitSphere } from '../../src/core/montage/head-sphere.ts';
import { electrodePosition } from '../../src/core/montage/positions.ts';
import { Random } from '../../src/core/stats/random.ts';
import { runPython } from '../helpers/python.ts';

// BIDS: columns name, x, y, z first (type, material, impedance optional); n/a for an electrode without a position
const MM = 'name\tx\ty\tz\ttype\nE1\t0\t0\t90\tcup\nE2\t-90\t0\t0\tcup\nE3\t0\t90\t0\tcup\nE4\tn/a\tn/a\tn/a\tcup\nE5\t63.64\t0\t63.64\tcup\n';

describe('electrodes TSV', () => {
  it('reads name, x, y, z in the unit its coordsystem states, skipping n/a rows', () => {
    const mm = parseElectrodesTsv(MM, { file: 'e.tsv', unit: 'mm', coordinateSystem: 'CapTrak' });
    expect(mm.electrodes.map((e) => e.name)).toEqual(['E1', 'E2', 'E3', 'E5']);
    // 1 mm = 0.001 m (SI)
    expect(mm.electrodes[0]).toEqual({ name: 'E1', x: 0, y: 0, z: 0.09 });
    expect(mm.electrodes[3].x).toBeCloseTo(0.06364, 12);
    expect(mm.notes).toEqual([]);
    const cm = parseElectrodesTsv(MM.replace(/\t90\t/g, '\t9\t'), { file: 'e.tsv', unit: 'cm', coordinateSystem: 'CapTrak' });
    expect(cm.electrodes[2]).toEqual({ name: 'E3', x: 0, y: 0.09, z: 0 });
  });

  it('turns the ALS systems into RAS (x right = −y, y front = x) and notes a system that names no axes', () => {
    // BIDS appendix "Coordinate systems": CTF is ALS (x to the nasion, y to the left ear, z up)
    const als = parseElectrodesTsv('name\tx\ty\tz\nNz\t0.1\t0\t0\nLPA\t0\t0.08\t0\n', { file: 'a.tsv', unit: 'm', coordinateSystem: 'CTF' });
    expect(als.electrodes).toEqual([
      { name: 'Nz', x: -0, y: 0.1, z: 0 },
      { name: 'LPA', x: -0.08, y: 0, z: 0 },
    ]);
    const other = parseElectrodesTsv('name\tx\ty\tz\nA\t1\t2\t3\n', { file: 'o.tsv', unit: 'm', coordinateSystem: 'Other' });
    expect(other.notes).toEqual(["o.tsv: coordinate system 'Other' does not name its axes; taken as x right, y front, z up (RAS)"]);
  });

  it('reads the axes of an unnamed system from the 10-10 names of its electrodes', () => {
    // ALS frame (x to the nose, y to the left): Fp1 front-left, O2 back-right (10-10 naming, common practice)
    const alsText =
      'name\tx\ty\tz\nFp1\t0.08\t0.03\t0.02\nFp2\t0.08\t-0.03\t0.02\nO1\t-0.08\t0.03\t0.02\nO2\t-0.08\t-0.03\t0.02\nC3\t0\t0.06\t0.06\nC4\t0\t-0.06\t0.06\n';
    const als = parseElectrodesTsv(alsText, { file: 'n.tsv', unit: 'm', coordinateSystem: 'Other' });
    expect(als.notes).toEqual(["n.tsv: coordinate system 'Other' does not name its axes; read as ALS from the 10-10 names of its electrodes"]);
    expect(als.electrodes.find((e) => e.name === 'Fp1')).toEqual({ name: 'Fp1', x: -0.03, y: 0.08, z: 0.02 });
    expect(als.electrodes.find((e) => e.name === 'C4')).toEqual({ name: 'C4', x: 0.06, y: 0, z: 0.06 });
    // the same head already in RAS is kept as it is
    const rasText = 'name\tx\ty\tz\nFp1\t-0.03\t0.08\t0.02\nO2\t0.03\t-0.08\t0.02\nC3\t-0.06\t0\t0.06\nC4\t0.06\t0\t0.06\n';
    const ras = parseElectrodesTsv(rasText, { file: 'r.tsv', unit: 'm', coordinateSystem: 'Other' });
    expect(ras.notes).toEqual(["r.tsv: coordinate system 'Other' does not name its axes; read as RAS from the 10-10 names of its electrodes"]);
    expect(ras.electrodes[0]).toEqual({ name: 'Fp1', x: -0.03, y: 0.08, z: 0.02 });
  });

  it('names the file, the line and the bad value', () => {
    const opts = { file: 'e.tsv', unit: 'mm' as const, coordinateSystem: null };
    expect(() => parseElectrodesTsv('name\tx\ty\nA\t1\t2\n', opts)).toThrow('e.tsv: the header needs the columns name, x, y, z (missing: z)');
    expect(() => parseElectrodesTsv('name\tx\ty\tz\nA\t1\tabc\t3\n', opts)).toThrow('e.tsv: line 2, electrode "A": y = "abc" is not a number');
    expect(() => parseElectrodesTsv('name\tx\ty\tz\nA\t1\t2\t3\na\t1\t2\t3\n', opts)).toThrow('e.tsv: electrode "a" is on lines 2 and 3');
    expect(() => parseElectrodesTsv('name\tx\ty\tz\nA\tn/a\tn/a\tn/a\n', opts)).toThrow(ElectrodesFileError);
  });

  it('reads the unit and system of a coordsystem JSON and finds the files BIDS names go together', () => {
    expect(parseCoordsystem('{"EEGCoordinateSystem":"CapTrak","EEGCoordinateUnits":"mm"}', 'c.json')).toEqual({ unit: 'mm', system: 'CapTrak' });
    expect(() => parseCoordsystem('{"EEGCoordinateUnits":"inch"}', 'c.json')).toThrow('c.json: coordinate unit "inch" is not one of m, cm, mm');
    expect(() => parseCoordsystem('{}', 'c.json')).toThrow(/EEGCoordinateUnits is missing/);
    // BIDS: sub-<label>[_ses-<label>][_acq-<label>][_run-<index>][_space-<label>]_electrodes.tsv; no task entity
    const rec = new Map([
      ['sub', '01'],
      ['ses', 'night'],
      ['task', 'sleep'],
      ['acq', 'hd'],
    ]);
    const files = [
      'sub-01_ses-night_electrodes.tsv',
      'sub-01_ses-night_acq-hd_electrodes.tsv',
      'sub-01_ses-night_acq-lo_electrodes.tsv',
      'sub-02_ses-night_electrodes.tsv',
      'sub-01_ses-night_task-sleep_eeg.edf',
    ];
    expect(bidsElectrodesFile(files, rec)).toBe('sub-01_ses-night_acq-hd_electrodes.tsv');
    expect(bidsElectrodesFile(['sub-01_ses-night_space-CapTrak_electrodes.tsv', 'sub-01_ses-night_space-Other_electrodes.tsv'], rec)).toEqual({
      ambiguous: ['sub-01_ses-night_space-CapTrak_electrodes.tsv', 'sub-01_ses-night_space-Other_electrodes.tsv'],
    });
    expect(bidsElectrodesFile(['sub-01_electrodes.tsv'], rec)).toBeNull();
    expect(bidsCoordsystemName('sub-01_ses-night_acq-hd_run-2_space-CapTrak_electrodes.tsv')).toBe('sub-01_ses-night_acq-hd_space-CapTrak_coordsystem.json');
  });
});

describe('head sphere', () => {
  it('recovers a known sphere from a cap of points and equals numpy least squares with noise', () => {
    // 40 points on the upper part of a sphere of radius 0.09 m centred at (0.004, −0.012, 0.035)
    const rng = new Random(7);
    const centre = { x: 0.004, y: -0.012, z: 0.035 };
    const exact = Array.from({ length: 40 }, () => {
      const polar = Math.acos(1 - 1.2 * rng.uniform());
      const az = 2 * Math.PI * rng.uniform();
      return { x: centre.x + 0.09 * Math.sin(polar) * Math.cos(az), y: centre.y + 0.09 * Math.sin(polar) * Math.sin(az), z: centre.z + 0.09 * Math.cos(polar) };
    });
    const s = fitSphere(exact)!;
    expect(s.radius).toBeCloseTo(0.09, 10);
    expect(s.centre.x).toBeCloseTo(centre.x, 10);
    expect(s.centre.z).toBeCloseTo(centre.z, 10);
    const noisy = exact.map((p) => ({ x: p.x + 0.002 * rng.normal(), y: p.y + 0.002 * rng.normal(), z: p.z + 0.002 * rng.normal() }));
    // outside reference: numpy.linalg.lstsq on the algebraic sphere x²+y²+z² = 2ax + 2by + 2cz + d
    const ref = runPython<number[]>(
      `p = numpy.fromfile(inputs['p']).reshape(-1, 3)
A = numpy.column_stack([2 * p, numpy.ones(len(p))])
u = numpy.linalg.lstsq(A, (p ** 2).sum(1), rcond=None)[0]
print(json.dumps([u[0], u[1], u[2], float(numpy.sqrt(u[3] + (u[:3] ** 2).sum()))]))`,
      { p: noisy.flatMap((p) => [p.x, p.y, p.z]) },
    );
    const n = fitSphere(noisy)!;
    expect(n.centre.x).toBeCloseTo(ref[0], 9);
    expect(n.centre.y).toBeCloseTo(ref[1], 9);
    expect(n.centre.z).toBeCloseTo(ref[2], 9);
    expect(n.radius).toBeCloseTo(ref[3], 9);
    // three points, or points on one plane, fix no sphere
    expect(fitSphere(exact.slice(0, 3))).toBeNull();
    expect(fitSphere(exact.map((p) => ({ ...p, z: 0 })))).toBeNull();
  });

  it('places channels by the file, a scalp pair halfway, 10-10 names by the template, others nowhere', () => {
    const layout = headLayout(
      parseElectrodesTsv(MM.replace('E5\t63.64\t0\t63.64', 'E5\t0\t-90\t0').replace('n/a\tn/a\tn/a', '90\t0\t0'), {
        file: 'e.tsv',
        unit: 'mm',
        coordinateSystem: 'CapTrak',
      }),
    );
    // five points of a 90-mm sphere about the origin: the fit is the origin, directions the unit axes
    expect(layout.sphere!.radius).toBeCloseTo(0.09, 10);
    const e3 = placeChannel('E3', 'E3', layout);
    expect(e3.source).toBe('file');
    expect(e3.position!.y).toBeCloseTo(1, 12);
    expect(e3.metres).toEqual({ x: 0, y: 0.09, z: 0 });
    // E1 (vertex) – E3 (nose): 45° up the midline
    const pair = placeChannel('E1-E3', 'E1', layout).position!;
    expect(pair.y).toBeCloseTo(Math.SQRT1_2, 12);
    expect(pair.z).toBeCloseTo(Math.SQRT1_2, 12);
    // against a mastoid the channel sits at its electrode (as on the template: C3-M2 at C3)
    const withMastoid = headLayout(
      parseElectrodesTsv(`${MM.replace('n/a\tn/a\tn/a', '90\t0\t0')}M2\t60\t-30\t-60\n`, { file: 'e.tsv', unit: 'mm', coordinateSystem: 'CapTrak' }),
    );
    expect(placeChannel('E3-M2', 'E3', withMastoid).position!.y).toBeCloseTo(1, 9);
    expect(placeChannel('C3', 'C3', layout)).toEqual({ position: electrodePosition('C3'), metres: null, source: 'template' });
    expect(placeChannel('E99', 'E99', layout)).toEqual({ position: null, metres: null, source: 'none' });
    // a file in mm read as metres: a 90-m head is flagged (adult head radii 5–15 cm, common practice)
    const wrong = headLayout(parseElectrodesTsv(MM.replace('n/a\tn/a\tn/a', '90\t0\t0'), { file: 'e.tsv', unit: 'm', coordinateSystem: null }));
    expect(wrong.notes.join()).toMatch(/fitted head radius is 90\.0 m with coordinates in m; check the unit/);
  });
});
