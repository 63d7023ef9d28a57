"""Plain numpy/scipy reference pipeline for one EDF (outside reference for the ingest tests, and
the side-by-side baseline of tests/bench/ingest.bench.ts).

EDF decoding follows Kemp et al. 1992: 256-byte fixed header, 256 bytes per signal, data records
of int16 little-endian samples per signal in turn; phys = pmin + (dig - dmin)*(pmax - pmin)/(dmax - dmin).
Per 30-s epoch: scipy.signal.welch(x, fs, nperseg=seg*fs, noverlap=nperseg//2) on all channels at once.

With NW and K after OUT: the multitaper estimate instead (Thomson 1982) on the same segments,
each segment's mean removed, the equally weighted mean of the eigenspectra of the K
scipy.signal.windows.dpss(nperseg, NW, K) tapers (unit energy), one-sided, averaged over segments.

usage: python3 scipy_pipeline.py EDF EPOCH_S SEGMENT_S MAXFREQ_HZ OUT.f64|- [NW K]
writes float64 [n_epochs, n_channels, n_bins] (if OUT is not '-') and prints a JSON summary line.
"""
import json, sys, time
import numpy as np
from scipy.signal import welch

path, epoch_s, seg_s, fmax = sys.argv[1], float(sys.argv[2]), float(sys.argv[3]), float(sys.argv[4])
out = sys.argv[5]
nw_k = None
if len(sys.argv) > 7:
    from scipy.signal.windows import dpss
    nw_k = float(sys.argv[6]), int(sys.argv[7])
t0 = time.perf_counter()
c0 = time.process_time()
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
o += 80 * ns
spr = np.array(field(o, 8), int)
ordinary = [i for i in range(ns) if labels[i] != 'EDF Annotations']
rec_words = int(spr.sum())
raw = np.memmap(path, dtype='<i2', mode='r', offset=256 + 256 * ns, shape=(n_records, rec_words))
offsets = np.concatenate([[0], np.cumsum(spr)[:-1]])
fs = spr[ordinary[0]] / rec_dur
assert all(spr[i] == spr[ordinary[0]] for i in ordinary), 'one sampling rate expected'
gain = (pmax - pmin) / (dmax - dmin)
n_ep_samples = int(round(epoch_s * fs))
nper = int(round(seg_s * fs))
total = n_records * spr[ordinary[0]]
n_epochs = total // n_ep_samples
rec_per_epoch = n_ep_samples // spr[ordinary[0]]
spectra = None
for e in range(n_epochs):
    block = raw[e * rec_per_epoch:(e + 1) * rec_per_epoch]
    x = np.stack([(pmin[i] + (block[:, offsets[i]:offsets[i] + spr[i]].reshape(-1) - dmin[i]) * gain[i]) for i in ordinary])
    if nw_k is None:
        f, p = welch(x, fs, nperseg=nper, noverlap=nper // 2)
    else:
        v = dpss(nper, nw_k[0], nw_k[1])  # (K, nper), each of unit energy
        starts = range(0, x.shape[1] - nper + 1, nper // 2)
        segs = np.stack([x[:, s0:s0 + nper] for s0 in starts], axis=1)  # (channels, segments, nper)
        segs = segs - segs.mean(axis=2, keepdims=True)
        eig = np.abs(np.fft.rfft(segs[:, :, None, :] * v[None, None], axis=3)) ** 2 / fs
        p = eig.mean(axis=2).mean(axis=1)
        p[:, 1:] *= 2
        if nper % 2 == 0:
            p[:, -1] /= 2
        f = np.fft.rfftfreq(nper, 1 / fs)
    keep = f <= fmax + 1e-9
    if spectra is None:
        spectra = np.empty((n_epochs, len(ordinary), int(keep.sum())))
    spectra[e] = p[:, keep]
means = spectra.mean(axis=0)  # a per-channel night mean, so the work is not optimised away
elapsed = time.perf_counter() - t0
cpu = time.process_time() - c0
if out != '-':
    spectra.tofile(out)
print(json.dumps({'labels': [labels[i] for i in ordinary], 'fs': fs, 'n_epochs': int(n_epochs), 'n_bins': int(spectra.shape[2]),
                  'seconds': elapsed, 'cpu_seconds': cpu, 'check': float(means.sum())}))
