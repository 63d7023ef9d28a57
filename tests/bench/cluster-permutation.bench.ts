/**
 * Cluster-mass permutation test, 1000 permutations, Welch t, clusters over channel × frequency
 * (Delaunay channel graph + neighbouring bins), single thread, for
 *   (a) 40 subjects (20 + 20) × 19 channels × 181 bins and (b) 100 subjects (50 + 50) × 64 channels × 181 bins,
 * and side by side in the same run a plain numpy/scipy implementation of the same test on the
 * same data and the SAME relabellings (loop over permutations, vectorised Welch t per
 * permutation, scipy.sparse.csgraph.connected_components on the supra-threshold subgraph), so
 * the two null distributions must agree; the largest difference is reported.
 *
 * Why ours is fast (src/core/stats/two-group-t.ts, clusters.ts):
 * - per permutation t needs only the group sums of ONE group (the other's are totals minus these);
 *   by the between/within decomposition SS_within = SS_total − (n_A·n_B/n)·Δm², Student's t — and
 *   Welch's t for equal groups, where they coincide — needs only Σx of that group; for unequal
 *   groups Σx² is summed only where a bound on |t| can pass the threshold;
 * - subset-sum tables ("four Russians", Arlazarov et al. 1970): the sums of every subset of each
 *   chunk of g ≤ 6 subjects are tabulated once, so a group sum is ⌈n/g⌉ row additions (20 for
 *   100 subjects at g = 5) instead of one per member, four rows per pass over the accumulators,
 *   in L1-sized blocks of points;
 * - union-find labelling (union by size, path halving) visiting only supra-threshold points with
 *   precomputed adjacency lists; early exit when none passes; no allocation per permutation.
 * Run alone: npx tsx -e "import('./tests/bench/cluster-permutation.bench.ts').then(m=>m.run()).then(r=>console.log(JSON.stringify(r)))"
 */
import { preparePermutationTest, runPermutations } from '../../src/core/stats/index.ts';
import { relabelling } from '../../src/core/stats/relabelling.ts';
import { Random } from '../../src/core/stats/random.ts';
import { gridNoise } from '../stats/grid-noise.ts';
import { runPython } from '../helpers/python.ts';

const CH19 = ['Fp1', 'Fp2', 'F7', 'F3', 'Fz', 'F4', 'F8', 'T7', 'C3', 'Cz', 'C4', 'T8', 'P7', 'P3', 'Pz', 'P4', 'P8', 'O1', 'O2'];
const CH64 = (
  'Fp1 Fpz Fp2 AF7 AF3 AFz AF4 AF8 F7 F5 F3 F1 Fz F2 F4 F6 F8 FT7 FC5 FC3 FC1 FCz FC2 FC4 FC6 FT8 T7 C5 C3 C1 Cz C2 C4 C6 T8 ' +
  'TP7 CP5 CP3 CP1 CPz CP2 CP4 CP6 TP8 P7 P5 P3 P1 Pz P2 P4 P6 P8 PO7 PO3 POz PO4 PO8 O1 Oz O2 FT9 FT10 Iz'
).split(' ');
const PERMUTATIONS = 1000;
const BINS = 181; // 0.5–90.5 Hz in 0.5-Hz steps

const PYTHON = `import time
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components
n, P, m = int(inputs_n), int(inputs_P), int(inputs_m)
X = numpy.fromfile(inputs['data']).reshape(n, P)
L = numpy.fromfile(inputs['labels']).reshape(m, n).astype(bool)
e = numpy.fromfile(inputs['edges']).astype(numpy.int64).reshape(-1, 2)
thr = float(numpy.fromfile(inputs['thr'])[0])
e0, e1 = e[:, 0], e[:, 1]
null = numpy.zeros(m)
t0 = time.perf_counter(); c0 = time.process_time()
for i in range(m):
    g = L[i]
    a, b = X[g], X[~g]
    n1, n0 = a.shape[0], b.shape[0]
    t = (a.mean(0) - b.mean(0)) / numpy.sqrt(a.var(0, ddof=1) / n1 + b.var(0, ddof=1) / n0)
    best = 0.0
    for sign in (1.0, -1.0):
        mask = sign * t > thr
        if not mask.any():
            continue
        keep = mask[e0] & mask[e1]
        graph = coo_matrix((numpy.ones(int(keep.sum())), (e0[keep], e1[keep])), shape=(P, P))
        _, lab = connected_components(graph, directed=False)
        masses = numpy.bincount(lab[mask], weights=t[mask])
        best = max(best, float(numpy.abs(masses).max()))
    null[i] = best
wall = time.perf_counter() - t0; cpu = time.process_time() - c0
print(json.dumps({"wall": wall, "cpu": cpu, "null": null.tolist()}))`;

async function one(label: string, channels: string[], nSubjects: number): Promise<Record<string, unknown>> {
  const rng = new Random(20260101);
  const P = channels.length * BINS;
  const freqsHz = Array.from({ length: BINS }, (_, i) => 0.5 + 0.5 * i);
  // the input builds its own Delaunay graph; the noise generator uses the same graph
  const probe = preparePermutationTest(
    { channels, freqsHz, data: new Float64Array(3 * P).map(() => rng.normal()), design: { kind: 'one-sample' } },
    { permutations: 1 },
  );
  const data = gridNoise(nSubjects, channels.length, BINS, probe.channelNeighbours!, rng);
  const half = nSubjects / 2;
  // a modest planted effect (group 1 + 0.6 at 11–16 Hz on the first four channels) so clusters exist
  for (let s = half; s < nSubjects; s++) for (let c = 0; c < 4; c++) for (let f = 21; f <= 31; f++) data[s * P + c * BINS + f] += 0.6;
  const input = { channels, freqsHz, data, design: { kind: 'groups' as const, group: Array.from({ length: nSubjects }, (_, s) => (s < half ? 0 : 1)) } };
  const options = { permutations: PERMUTATIONS, seed: 1, statistic: 'welch-t' as const };

  const p0 = performance.now();
  const prepared = preparePermutationTest(input, options);
  const prepareS = (performance.now() - p0) / 1000;
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const nulls = runPermutations(prepared.test, { from: 0, to: PERMUTATIONS });
  const oursS = (performance.now() - t0) / 1000;
  const cpu = process.cpuUsage(c0);
  const oursCpuS = (cpu.user + cpu.system) / 1e6;

  // the same relabellings for numpy/scipy
  const labels = new Float64Array(PERMUTATIONS * nSubjects);
  const out = new Int32Array(nSubjects);
  const work = new Int32Array(nSubjects);
  for (let i = 0; i < PERMUTATIONS; i++) {
    relabelling(prepared.test.scheme, i, out, work);
    labels.set(out, i * nSubjects);
  }
  const script = PYTHON.replace('int(inputs_n), int(inputs_P), int(inputs_m)', `${nSubjects}, ${P}, ${PERMUTATIONS}`);
  process.env.OMP_NUM_THREADS = '1';
  process.env.OPENBLAS_NUM_THREADS = '1';
  const py = runPython<{ wall: number; cpu: number; null: number[] }>(script, { data, labels, edges: prepared.test.edges, thr: [prepared.test.threshold] });
  let maxDiff = 0;
  for (let i = 0; i < PERMUTATIONS; i++) maxDiff = Math.max(maxDiff, Math.abs(nulls.cluster![i] - py.null[i]));
  const result = {
    size: `${nSubjects} subjects × ${channels.length} channels × ${BINS} bins, ${PERMUTATIONS} permutations`,
    oursSeconds: +oursS.toFixed(4),
    oursCpuSeconds: +oursCpuS.toFixed(4),
    prepareSeconds: +prepareS.toFixed(4),
    numpyScipySeconds: +py.wall.toFixed(3),
    numpyScipyCpuSeconds: +py.cpu.toFixed(3),
    ratioWall: +(py.wall / oursS).toFixed(1),
    ratioCpu: +(py.cpu / oursCpuS).toFixed(1),
    nullMaxAbsDifference: maxDiff,
    observedClusters: prepared.observedClusters.length,
  };
  process.stderr.write(`${label}: ${JSON.stringify(result)}\n`);
  return result;
}

export async function run(): Promise<Record<string, unknown>> {
  const a = await one('a', CH19, 40);
  const b = await one('b', CH64, 100);
  return {
    a_40x19x181: a,
    b_100x64x181: b,
    targets: { a_underSeconds: 0.3, b_underSeconds: 3, ratioAtLeast: 5 },
  };
}
