#!/usr/bin/env python3
"""Reference resampling of force-plate signals computed with scipy.signal, for src/lib/processing/forces/resample.ts.

Usage:  python3 tests/reference/scipy_force_resample.py --out tests/fixtures/processing/scipy-force-resample.json

Needs numpy and scipy. Random numbers come from numpy.random.default_rng(20260420); signals are rounded to 12
significant digits before filtering (the committed inputs are exactly what was filtered).

Each case: a force signal at fs = k * angle rate (walking-like half-sine contacts plus white noise), the cutoff asked
for and the cutoff used (min(asked, 0.4 * angle rate / 2) when k > 1), scipy.signal.butter(2, Wn) designed with the
double-pass correction (C = (2^(1/2) - 1)^(1/4) dividing the pre-warped tan(pi fc / fs), as in scipy_filter.py),
y = scipy.signal.filtfilt(b, a, x) (default padtype 'odd', padlen 9), and the kept samples y[::k][:m].
"""

import math

import numpy as np
import scipy
import scipy.signal as ss

from reference_io import out_path, round12, write_fixture

SEED = 20260420
C = (2 ** 0.5 - 1) ** 0.25


def design(fc, fs):
    fd = fs / math.pi * math.atan(math.tan(math.pi * fc / fs) / C)
    return ss.butter(2, fd / (fs / 2))


def force(fs, n, rng):
    t = np.arange(n) / fs
    x = np.zeros(n)
    for t0, dur, peak in ((0.15, 0.6, 800.0), (0.95, 0.55, 650.0), (1.7, 0.3, 400.0)):
        inside = (t >= t0) & (t <= t0 + dur)
        x[inside] += peak * np.sin(np.pi * (t[inside] - t0) / dur)
    return round12(x + rng.normal(0.0, 3.0, n))


def main():
    out_file = out_path()
    rng = np.random.default_rng(SEED)
    cases = []
    for angle_hz, k, asked, n, m in (
        (200, 5, 6.0, 2000, 400),      # the run's cutoff, below the cap
        (200, 5, 60.0, 2000, 400),     # above the cap: 0.4 * 100 = 40 Hz used
        (100, 4, 10.0, 801, 201),      # n = (m - 1) k + 1: the last force sample is the last kept
        (250, 4, 15.0, 1000, 250),     # 1000 Hz forces, 250 Hz angles
    ):
        fs = angle_hz * k
        used = min(asked, 0.4 * angle_hz / 2)
        x = force(fs, n, rng)
        b, a = design(used, fs)
        y = ss.filtfilt(b, a, x)
        cases.append({
            "angleHz": angle_hz, "ratio": k, "forceHz": fs, "askedCutoffHz": asked, "usedCutoffHz": used,
            "angleSamples": m, "x": x.tolist(), "kept": y[::k][:m].tolist(),
        })
    write_fixture(out_file, {"source": f"scipy {scipy.__version__}, numpy {np.__version__}: tests/reference/scipy_force_resample.py",
                             "cases": cases})


if __name__ == "__main__":
    main()
