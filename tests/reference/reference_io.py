"""Shared by the reference fixture scripts: the --out argument, 12-digit rounding of inputs, and writing the JSON."""
import argparse
import json
import os

import numpy as np


def out_path(description=None):
    """The path given as --out (the fixture the script writes)."""
    ap = argparse.ArgumentParser(description=description)
    ap.add_argument("--out", required=True)
    return ap.parse_args().out


def round12(x):
    """Inputs rounded to 12 significant digits, so the TypeScript side reads exactly the numbers the reference used."""
    return np.array([float(f"{v:.12g}") for v in x])


def write_fixture(path, fixture, indent=None):
    """Writes the fixture as JSON (compact unless an indent is given), creating its folder."""
    os.makedirs(os.path.dirname(os.path.abspath(path)), exist_ok=True)
    with open(path, "w") as f:
        if indent is None:
            json.dump(fixture, f, separators=(",", ":"))
        else:
            json.dump(fixture, f, indent=indent)
        f.write("\n")
