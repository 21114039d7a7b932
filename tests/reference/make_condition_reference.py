"""Reference fixture generator for the condition numbers of the NIST StRD designs.

What it produces
----------------
tests/fixtures/nist-condition.json -- for each of the eleven NIST StRD
linear-regression datasets in tests/data/nist-strd/, the 2-norm
condition number (largest over smallest singular value) of its design
matrix after each column is scaled to unit Euclidean length, the column of
ones included when the model has an intercept. This is what sheetfit
reports as `fit.condition_number` in its results JSON.

The designs are the models NIST certifies:

    Norris             y ~ x
    Pontius            y ~ x + x^2
    NoInt1, NoInt2     y ~ x            (no intercept)
    Filip              y ~ x + ... + x^10
    Longley            y ~ x1 + ... + x6
    Wampler1..5        y ~ x + ... + x^5

Each matrix is built in mpmath at 50 significant digits straight from the
decimal text of the data file (powers formed exactly at that precision, so
no double-precision rounding enters), scaled, and its singular values taken
with mpmath.svd_r(..., compute_uv=False).

Why
---
The condition number tells the reader how far rounding and small changes in
the data can be magnified in the coefficients, and it decides when the tool
switches to its extended-precision solve. Filip's design is so
ill-conditioned (about 5e9 here) that a double-precision SVD of the raw
design could not be trusted as a reference, hence the 50-digit arithmetic.
The JSON is committed; tests/nist.rs only reads it and needs no Python. This
script is kept so the fixture can be audited and regenerated.

How to rerun
------------
From the project root, with the NIST StRD files in
tests/data/nist-strd/ (or in the folder named by SHEETFIT_NIST_DIR):

    pip install mpmath
    python3 tests/reference/make_condition_reference.py

The computation is deterministic, so rerunning with the same mpmath version
reproduces the same file.
"""

import json
import os
import sys

import mpmath

SCRIPT = "tests/reference/make_condition_reference.py"
JSON_PATH = os.path.join("tests", "fixtures", "nist-condition.json")
DIGITS = 50

# name -> (intercept, terms); a term (column, k) stands for column^k.
MODELS = {
    "Norris": (True, [("x", 1)]),
    "Pontius": (True, [("x", 1), ("x", 2)]),
    "NoInt1": (False, [("x", 1)]),
    "NoInt2": (False, [("x", 1)]),
    "Filip": (True, [("x", k) for k in range(1, 11)]),
    "Longley": (True, [(f"x{k}", 1) for k in range(1, 7)]),
    "Wampler1": (True, [("x", k) for k in range(1, 6)]),
    "Wampler2": (True, [("x", k) for k in range(1, 6)]),
    "Wampler3": (True, [("x", k) for k in range(1, 6)]),
    "Wampler4": (True, [("x", k) for k in range(1, 6)]),
    "Wampler5": (True, [("x", k) for k in range(1, 6)]),
}

# Rows per file, from the table in tests/data/nist-strd/README.md.
ROWS = {
    "Norris": 36,
    "Pontius": 40,
    "NoInt1": 11,
    "NoInt2": 3,
    "Filip": 82,
    "Longley": 16,
    "Wampler1": 21,
    "Wampler2": 21,
    "Wampler3": 21,
    "Wampler4": 21,
    "Wampler5": 21,
}


def nist_dir():
    env = os.environ.get("SHEETFIT_NIST_DIR")
    if env:
        return env
    return os.path.join("tests", "data", "nist-strd")


def line_range(line):
    """(a, b) from a header line such as 'Data  (lines 61 to 97)'."""
    inner = line.split("lines", 1)[1]
    digits = "".join(c if c.isdigit() else " " for c in inner).split()
    return int(digits[0]), int(digits[1])


def load(name):
    """Column names (y first) and data as decimal strings, row by row."""
    path = os.path.join(nist_dir(), f"{name}.dat")
    with open(path, encoding="ascii", newline="") as fh:
        lines = [l.rstrip("\r\n") for l in fh.read().split("\n")]
    first, last = line_range(lines[5])
    header = next(
        l for l in reversed(lines[: first - 1]) if l.lstrip().startswith("Data:")
    )
    names = header.split()[1:]
    rows = [lines[i].split() for i in range(first - 1, last)]
    assert len(rows) == ROWS[name], (name, len(rows))
    assert all(len(r) == len(names) for r in rows), name
    return names, rows


def design(name):
    """The 50-digit design matrix of the certified model."""
    intercept, terms = MODELS[name]
    names, rows = load(name)
    index = {n: i for i, n in enumerate(names)}
    matrix = []
    for row in rows:
        values = [mpmath.mpf(v) for v in row]
        line = [mpmath.mpf(1)] if intercept else []
        for column, power in terms:
            line.append(values[index[column]] ** power)
        matrix.append(line)
    return mpmath.matrix(matrix)


def condition_number(x):
    """2-norm condition number of x with unit-length columns."""
    n, p = x.rows, x.cols
    scaled = x.copy()
    for j in range(p):
        length = mpmath.sqrt(mpmath.fsum(x[i, j] ** 2 for i in range(n)))
        for i in range(n):
            scaled[i, j] = x[i, j] / length
    s = mpmath.svd_r(scaled, compute_uv=False)
    s = [s[k] for k in range(len(s))]
    return max(s) / min(s)


def main():
    mpmath.mp.dps = DIGITS
    kappas = {}
    for name in MODELS:
        kappa = condition_number(design(name))
        kappas[name] = float(kappa)
        print(f"{name:<10} {mpmath.nstr(kappa, 20)}")
    py = ".".join(str(p) for p in sys.version_info[:3])
    fixture = {
        "source": (
            f"mpmath {mpmath.__version__} at {DIGITS} digits: singular values "
            f"(mpmath.svd_r) of each NIST StRD design built from the decimal "
            f"text of the data, columns scaled to unit length; Python {py}"
        ),
        "script": SCRIPT,
        "condition_numbers": kappas,
    }
    os.makedirs(os.path.dirname(JSON_PATH), exist_ok=True)
    with open(JSON_PATH, "w", encoding="utf-8") as fh:
        json.dump(fixture, fh, indent=2, allow_nan=False)
        fh.write("\n")
    print(f"wrote {JSON_PATH}")


if __name__ == "__main__":
    main()
