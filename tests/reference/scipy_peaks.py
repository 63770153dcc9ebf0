#!/usr/bin/env python3
"""Reference peak detection computed with scipy.signal, for detectPeaks in src/lib/processing/cycles.ts.

Usage:  python3 tests/reference/scipy_peaks.py --out tests/fixtures/processing/scipy-peaks.json

Needs numpy and scipy. Random numbers come from numpy.random.default_rng(20261203); signals are rounded to 12
significant digits (or quantised, for plateaus) before the peaks are found, so the committed inputs are exactly
what scipy saw.

Contents, per signal (sampled at `sampleHz`, time = i / sampleHz):
  * peaks: scipy.signal.find_peaks(x) (every local maximum; a plateau at its middle sample) and
    prominences: scipy.signal.peak_prominences(x, peaks) (wlen None);
  * byProminence: find_peaks(x, prominence=p) for several p;
  * byDistance: find_peaks(x, distance=d) for several d (samples); only for signals without equal peak heights,
    where scipy's order among equal heights is not defined.
"""


import numpy as np
import scipy
import scipy.signal as ss

from reference_io import out_path, round12, write_fixture

SEED = 20261203



def main():
    out_file = out_path()
    rng = np.random.default_rng(SEED)
    signals = []

    def add(name, fs, x, prominences, distances):
        peaks, _ = ss.find_peaks(x)
        entry = {
            "name": name,
            "sampleHz": fs,
            "x": x.tolist(),
            "peaks": peaks.tolist(),
            "prominences": ss.peak_prominences(x, peaks)[0].tolist(),
            "byProminence": [{"prominence": p, "peaks": ss.find_peaks(x, prominence=p)[0].tolist()} for p in prominences],
            "byDistance": [{"distance": d, "peaks": ss.find_peaks(x, distance=d)[0].tolist()} for d in distances],
        }
        signals.append(entry)

    # a knee-angle-like movement (degrees): repeated flexion with noise
    fs = 100
    t = np.arange(12 * fs) / fs
    x = round12(45 - 40 * np.cos(2 * np.pi * 0.6 * t) + 6 * np.sin(2 * np.pi * 1.7 * t + 0.4) + rng.normal(0, 0.8, t.size))
    add("noisy repeated flexion", fs, x, [0.5, 2, 10, 30], [5, 20, 80, 150])

    # a chirp with noise: peaks closer and closer together
    fs = 200
    t = np.arange(8 * fs) / fs
    x = round12(20 * ss.chirp(t, f0=0.5, t1=8, f1=4) + rng.normal(0, 0.5, t.size))
    add("noisy chirp", fs, x, [1, 5, 20], [10, 40, 100])

    # quantised to 0.5 degrees: plateaus and equal heights (prominence only)
    fs = 50
    t = np.arange(10 * fs) / fs
    x = np.round(2 * (30 * np.sin(2 * np.pi * 0.8 * t) + rng.normal(0, 0.6, t.size))) / 2
    add("quantised sine with plateaus", fs, x, [0.5, 1, 5, 20], [])

    fixture = {"source": f"scipy {scipy.__version__}, numpy {np.__version__}: tests/reference/scipy_peaks.py", "signals": signals}
    write_fixture(out_file, fixture)


if __name__ == "__main__":
    main()
