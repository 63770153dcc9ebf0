#!/usr/bin/env python3
"""Reference nearest rotations computed with scipy.linalg.polar and numpy's SVD, for nearestRotation and
checkRotation in src/lib/dynamics/rotation.ts.

Usage:  python3 tests/reference/scipy_polar.py --out tests/fixtures/dynamics/scipy-polar.json

Needs numpy and scipy. Rotations come from scipy.spatial.transform.Rotation.random(random_state=20261203); each is
rounded to 6 decimals (as a person types it), and the rounded matrix M is what the fixture stores and what scipy
saw. For each M:
  * polar: U of scipy.linalg.polar(M, side="right") (M = U P, U orthogonal, P positive semi-definite);
  * svd: V @ Wt from numpy.linalg.svd(M) = V diag(s) Wt (the same U, computed another way);
  * error: the Frobenius norm of M^T M - I; det: numpy.linalg.det(M).
Also a few matrices that must be refused: one entry off by 1e-3, and a reflection (det -1) rounded to 6 decimals.
"""


import numpy as np
import scipy
import scipy.linalg as sl
from scipy.spatial.transform import Rotation

from reference_io import out_path, write_fixture

SEED = 20261203


def entry(M):
    M = np.array(M, dtype=float)
    U, _ = sl.polar(M, side="right")
    V, _, Wt = np.linalg.svd(M)
    return {
        "m": M.tolist(),
        "polar": U.tolist(),
        "svd": (V @ Wt).tolist(),
        "error": float(np.linalg.norm(M.T @ M - np.eye(3), "fro")),
        "det": float(np.linalg.det(M)),
    }


def main():
    out_file = out_path()
    rotations = Rotation.random(12, random_state=SEED).as_matrix()
    accepted = [entry(np.round(R, 6)) for R in rotations]
    off = np.round(rotations[0], 6)
    off[1, 2] += 1e-3
    reflection = np.round(rotations[1], 6) @ np.diag([1.0, 1.0, -1.0])
    refused = [dict(entry(off), why="one entry off by 1e-3"), dict(entry(reflection), why="a reflection (det -1)")]
    fixture = {
        "source": f"scipy {scipy.__version__}, numpy {np.__version__}: tests/reference/scipy_polar.py",
        "accepted": accepted,
        "refused": refused,
    }
    write_fixture(out_file, fixture, indent=1)


if __name__ == "__main__":
    main()
