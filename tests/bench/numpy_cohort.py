"""The plain numpy/scipy pipeline of tests/bench/ingest-process.bench.ts: one Python process that
decodes each EDF of a cohort and runs Welch per 30-s epoch, the baseline bandwise's whole-process
ingest is timed against.

What it does, per file: reads the EDF header (Kemp et al. 1992: 256-byte fixed part, 256 bytes per
signal), maps the data records with numpy.memmap (int16 little-endian), scales each ordinary signal
to physical units (phys = pmin + (dig - dmin)*(pmax - pmin)/(dmax - dmin)), and per 30-s epoch runs
scipy.signal.welch(x, fs, nperseg=4 s, noverlap=half, Hann window, mean of segments, constant
detrend) on all channels at once, keeping the bins up to 45 Hz, then a per-channel mean over the
night (so the work is not optimised away).

What it does not do (and bandwise does): hash the file, read annotations or the scoring file,
reject epochs (amplitude, flat, outlier rules), average per stage (mean and median), re-reference,
band powers, aperiodic and peak fits, quality metrics, the cohort-wide pass, or store anything.

usage: python3 numpy_cohort.py EDF [EDF ...]
prints one JSON line: seconds (wall, from the first file opened), cpu_seconds, files, check.
"""
import json, sys, time
import numpy as np
from scipy.signal import welch

EPOCH_S, SEG_S, FMAX_HZ = 30.0, 4.0, 45.0


def night_mean(path):
    with open(path, 'rb') as f:
        fixed = f.read(256)
        ns = int(fixed[252:256])
        hdr = f.read(256 * ns)
    n_records = int(fixed[236:244])
    rec_dur = float(fixed[244:252])

    def field(offset, width):
        return [hdr[offset + i * width: offset + (i + 1) * width].decode('ascii').strip() for i in range(ns)]
    o = 0
    labels = field(o, 16); o += 16 * ns
    o += 80 * ns + 8 * ns  # transducer, physical dimension
    pmin = np.array(field(o, 8), float); o += 8 * ns
    pmax = np.array(field(o, 8), float); o += 8 * ns
    dmin = np.array(field(o, 8), float); o += 8 * ns
    dmax = np.array(field(o, 8), float); o += 8 * ns
    o += 80 * ns  # prefiltering
    spr = np.array(field(o, 8), int)
    ordinary = [i for i in range(ns) if labels[i] != 'EDF Annotations']
    assert all(spr[i] == spr[ordinary[0]] for i in ordinary), 'one sampling rate expected'
    raw = np.memmap(path, dtype='<i2', mode='r', offset=256 + 256 * ns, shape=(n_records, int(spr.sum())))
    offsets = np.concatenate([[0], np.cumsum(spr)[:-1]])
    fs = spr[ordinary[0]] / rec_dur
    gain = (pmax - pmin) / (dmax - dmin)
    n_ep = int(round(EPOCH_S * fs))
    nper = int(round(SEG_S * fs))
    n_epochs = n_records * spr[ordinary[0]] // n_ep
    rec_per_epoch = n_ep // spr[ordinary[0]]
    total = None
    for e in range(n_epochs):
        block = raw[e * rec_per_epoch:(e + 1) * rec_per_epoch]
        x = np.stack([pmin[i] + (block[:, offsets[i]:offsets[i] + spr[i]].reshape(-1) - dmin[i]) * gain[i] for i in ordinary])
        f, p = welch(x, fs, nperseg=nper, noverlap=nper // 2)
        p = p[:, f <= FMAX_HZ + 1e-9]
        total = p if total is None else total + p
    return total / n_epochs


t0 = time.perf_counter()
c0 = time.process_time()
check = sum(float(night_mean(p).sum()) for p in sys.argv[1:])
print(json.dumps({'seconds': time.perf_counter() - t0, 'cpu_seconds': time.process_time() - c0, 'files': len(sys.argv) - 1, 'check': check}))
