#!/usr/bin/env python3
"""Reference zero-lag Butterworth filtering computed with scipy.signal, for src/lib/processing/signal.ts.

Usage:  python3 tests/reference/scipy_filter.py --out tests/fixtures/processing/scipy-filtfilt.json

Needs numpy and scipy. All random numbers come from numpy.random.default_rng(20261202); signals are rounded
to 12 significant digits before filtering (so the committed inputs are exactly what was filtered), and the
output is reproducible for a given scipy/numpy version.

Contents:
  * designs: scipy.signal.butter(2, Wn) for fs in {100, 200, 1000} Hz, fc in {3, 6, 12} Hz, with and without
    the double-pass cutoff correction, with b, a, scipy.signal.lfilter_zi(b, a), and the gain of the double
    pass at fc from scipy.signal.freqz (|H(fc)|^2, which is 1/2 with the correction).
    The correction (Winter 2009, Biomechanics and Motor Control of Human Movement, 4th ed., p. 69, as quoted by
    J. Selling, "Multi-pass filter cutoff correction", 2018): C = (2^(1/2) - 1)^(1/4); the single pass is designed at fd with
    tan(pi fd / fs) = tan(pi fc / fs) / C, i.e. Wn = fd / (fs / 2).
  * signals: per fs a noisy sinusoid, a step and a chirp (scipy.signal.chirp), and their
    scipy.signal.filtfilt(b, a, x) outputs (default padtype 'odd', padlen 3*max(len(a), len(b))).
  * residual: a sum of sinusoids of at most 3.6 Hz plus white noise of known sigma, sampled at 100 Hz, with
    the residual R(fc) = sqrt(mean((x - filtfilt(x))^2)) at cutoffs 1, 1.5, ..., 25 Hz.
  * padding (end treatments, src/lib/processing/edges.ts): for the 200 Hz signals, scipy.signal.filtfilt with
    padtype 'odd', 'even', 'constant' and padlen = the settling length L, and padtype None; L itself from the
    pole radius |numpy.roots(a)| (L = ceil(ln 1e-8 / ln r)); and least-squares polynomial continuations of the
    first and last samples by numpy.polyfit / numpy.polyval (cubic over round(fs/fc) samples, line over
    round(fs/(3 fc)) samples, evaluated 1..L samples beyond the end).
"""

import math

import numpy as np
import scipy
import scipy.signal as ss

from reference_io import out_path, round12, write_fixture

SEED = 20261202
C = (2 ** 0.5 - 1) ** 0.25


def design(fc, fs, corrected):
    fd = fs / math.pi * math.atan(math.tan(math.pi * fc / fs) / C) if corrected else fc
    b, a = ss.butter(2, fd / (fs / 2))
    return fd, b, a



def main():
    out_file = out_path()
    rng = np.random.default_rng(SEED)

    designs = []
    for fs in (100, 200, 1000):
        for fc in (3, 6, 12):
            for corrected in (True, False):
                fd, b, a = design(fc, fs, corrected)
                _, h = ss.freqz(b, a, worN=[fc], fs=fs)
                double_gain = float(abs(h[0]) ** 4)  # |H|^2 of the double pass = |H_single|^4
                if corrected:
                    assert abs(double_gain - 0.5) < 1e-12, (fs, fc, double_gain)
                designs.append({
                    "sampleHz": fs, "cutoffHz": fc, "doublePassCorrection": corrected, "effectiveCutoffHz": fd,
                    "b": b.tolist(), "a": a.tolist(), "zi": ss.lfilter_zi(b, a).tolist(),
                    "doublePassGainAtCutoff": double_gain,
                })

    signals = []
    for fs, n in ((100, 200), (200, 300), (1000, 600)):
        t = np.arange(n) / fs
        dur = n / fs
        kinds = {
            "noisy sinusoid": 0.6 * np.sin(2 * np.pi * 1.5 * t + 0.3) + 0.2 + rng.normal(0.0, 0.05, n),
            "step": np.where(t < dur / 2, -0.4, 0.7),
            "chirp": 0.5 * ss.chirp(t, f0=0.5, t1=dur, f1=0.3 * fs, method="linear") + 0.1,
        }
        for name, x in kinds.items():
            x = round12(x)
            outputs = []
            for fc, corrected in ((3, True), (6, True), (12, True), (6, False)):
                _, b, a = design(fc, fs, corrected)
                outputs.append({"cutoffHz": fc, "doublePassCorrection": corrected, "y": ss.filtfilt(b, a, x).tolist()})
            signals.append({"name": name, "sampleHz": fs, "x": x.tolist(), "outputs": outputs})

    fs, sigma = 100, 0.02
    n = 20 * fs
    t = np.arange(n) / fs
    clean = 0.5 * np.sin(2 * np.pi * 0.7 * t) + 0.3 * np.sin(2 * np.pi * 1.9 * t + 1) + 0.15 * np.sin(2 * np.pi * 3.6 * t + 2)
    noise = rng.normal(0.0, sigma, n)
    x = round12(clean + noise)
    cutoffs = np.arange(1.0, 25.0 + 1e-9, 0.5)
    residuals = []
    for fc in cutoffs:
        _, b, a = design(fc, fs, True)
        residuals.append(float(np.sqrt(np.mean((x - ss.filtfilt(b, a, x)) ** 2))))

    padding = {"settling": [], "filtfilt": [], "polynomial": []}
    for pfs in (100, 200, 1000):
        for pfc in (3, 6, 12):
            _, pb, pa = design(pfc, pfs, True)
            r = float(np.max(np.abs(np.roots(pa))))
            padding["settling"].append({"sampleHz": pfs, "cutoffHz": pfc, "poleRadius": r,
                                        "samples": int(math.ceil(math.log(1e-8) / math.log(r)))})
    for sig in (g for g in signals if g["sampleHz"] == 200):
        xs = np.array(sig["x"])
        pfs, pfc = 200, 6
        _, pb, pa = design(pfc, pfs, True)
        L = int(math.ceil(math.log(1e-8) / math.log(float(np.max(np.abs(np.roots(pa)))))))
        L = min(L, len(xs) - 1)
        for padtype, padlen in (("odd", L), ("even", L), ("constant", L), (None, 0), ("odd", 3)):
            y = ss.filtfilt(pb, pa, xs, padtype=padtype, padlen=padlen if padtype else None)
            padding["filtfilt"].append({"name": sig["name"], "sampleHz": pfs, "cutoffHz": pfc, "padType": padtype,
                                        "padLen": padlen, "y": y.tolist()})
        for degree, window in ((3, round(pfs / pfc)), (1, round(pfs / (3 * pfc)))):
            ends = {}
            for end, seg in (("start", xs[:window]), ("end", xs[::-1][:window])):
                j = np.arange(window)  # distance from the end sample, inward
                c = np.polyfit(j, seg, degree)
                ends[end] = np.polyval(c, -np.arange(1, L + 1)).tolist()  # 1..L samples beyond the end
            padding["polynomial"].append({"name": sig["name"], "sampleHz": pfs, "cutoffHz": pfc, "degree": degree,
                                          "window": window, "samples": L, **ends})

    fixture = {
        "source": f"scipy {scipy.__version__}, numpy {np.__version__}: tests/reference/scipy_filter.py",
        "designs": designs,
        "signals": signals,
        "residual": {
            "sampleHz": fs, "sigma": sigma, "noiseRms": float(np.sqrt(np.mean(noise ** 2))),
            "highestSignalHz": 3.6, "x": x.tolist(), "cutoffs": cutoffs.tolist(), "residuals": residuals,
        },
        "padding": padding,
    }
    write_fixture(out_file, fixture)


if __name__ == "__main__":
    main()
