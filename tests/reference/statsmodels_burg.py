#!/usr/bin/env python3
"""Reference autoregressive coefficients by Burg's method, computed with statsmodels, for src/lib/processing/edges.ts.

Usage:  python3 tests/reference/statsmodels_burg.py --out tests/fixtures/processing/statsmodels-burg.json

Needs numpy and statsmodels (Debian: python3-statsmodels). statsmodels.regression.linear_model.burg(x, order,
demean) returns rho with x_t = rho_1 x_{t-1} + ... + rho_p x_{t-p} + e_t (our a_i = -rho_i).

Contents:
  * sunspots: statsmodels' yearly sunspot numbers (statsmodels.datasets.sunspots) and burg(order=4), the example
    printed in statsmodels' own documentation of burg: rho = [1.30934186, -0.48086633, -0.20185982, 0.05501941].
  * signals: from numpy.random.default_rng(20261203), rounded to 12 significant digits: a noisy sum of two
    sinusoids (200 Hz, 4 s) and a random walk smoothed by a moving average, each with burg(demean=False) at
    orders 2, 10 and 40 (our routine takes the signal as it is; the caller centres it).
"""


import numpy as np
import statsmodels
from statsmodels.datasets.sunspots import load
from statsmodels.regression.linear_model import burg

from reference_io import out_path, round12, write_fixture

SEED = 20261203



def main():
    out_file = out_path()
    rng = np.random.default_rng(SEED)

    spots = np.asarray(load().endog, dtype=float)
    rho, sigma2 = burg(spots, order=4, demean=True)

    fs, n = 200, 800
    t = np.arange(n) / fs
    signals = {
        "noisy sinusoids": 0.4 * np.sin(2 * np.pi * 0.9 * t + 0.3) + 0.15 * np.sin(2 * np.pi * 2.3 * t + 1.1)
        + rng.normal(0.0, 0.003, n),
        "smoothed random walk": np.convolve(np.cumsum(rng.normal(0.0, 0.01, n + 20)), np.ones(21) / 21, mode="valid"),
    }
    out = []
    for name, x in signals.items():
        x = round12(x)
        fits = []
        for order in (2, 10, 40):
            r, s2 = burg(x, order=order, demean=False)
            fits.append({"order": order, "rho": r.tolist()})
        out.append({"name": name, "x": x.tolist(), "fits": fits})

    fixture = {
        "source": f"statsmodels {statsmodels.__version__}, numpy {np.__version__}: tests/reference/statsmodels_burg.py",
        "sunspots": {"x": spots.tolist(), "order": 4, "rho": rho.tolist(), "sigma2": float(sigma2),
                     "documented": [1.30934186, -0.48086633, -0.20185982, 0.05501941]},
        "signals": out,
    }
    write_fixture(out_file, fixture)


if __name__ == "__main__":
    main()
