"""Data step of sheetfit's AR(1)-error regression reference fixtures.

What it produces
----------------
tests/fixtures/ar1/macro.csv: statsmodels' `macrodata` (US quarterly
macroeconomic series, 1959-Q1 to 2009-Q3, 203 rows), columns

    quarter,infl,unemp

with `quarter` as "1959-Q1" text, `infl` the inflation rate and `unemp` the
unemployment rate, each value printed exactly as stored in the dataset
(Python's repr of the float).

Why
---
The AR(1) reference values are computed in R (make_ar1_reference.R), which
cannot load statsmodels' datasets; this script writes the series to a CSV
that the R script and the Rust tests both read.

How to rerun
------------
From the project root, before make_ar1_reference.R:

    python3 tests/reference/make_ar1_data.py
    Rscript tests/reference/make_ar1_reference.R
    python3 tests/reference/check_ar1_reference.py

The dataset ships with statsmodels, so the file is reproduced byte for byte.
"""

import os

from statsmodels.datasets import macrodata

OUT_DIR = os.path.join("tests", "fixtures", "ar1")


def main():
    os.makedirs(OUT_DIR, exist_ok=True)
    data = macrodata.load_pandas().data
    lines = ["quarter,infl,unemp"]
    for row in data.itertuples(index=False):
        year = int(row.year)
        quarter = int(row.quarter)
        assert float(year) == row.year and float(quarter) == row.quarter
        lines.append(f"{year}-Q{quarter},{float(row.infl)!r},{float(row.unemp)!r}")
    assert len(lines) == 204, len(lines)
    assert lines[1].startswith("1959-Q1,") and lines[-1].startswith("2009-Q3,")
    with open(os.path.join(OUT_DIR, "macro.csv"), "w", newline="\n") as f:
        f.write("\n".join(lines) + "\n")


if __name__ == "__main__":
    main()
