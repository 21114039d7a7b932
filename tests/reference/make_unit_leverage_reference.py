"""Reference for robust standard errors when a row has leverage 1.

What it produces
----------------
tests/fixtures/model_checks/duncan_solo.json: carData's Duncan data
(tests/fixtures/model_checks/duncan.csv) with one occupation ("pilot") given
a type of its own ("solo"), so that its row has leverage 1 in
prestige ~ income + education + type. Its own error variance cannot be
estimated, so the HC3 standard error of type[solo] is undefined; every other
coefficient does not depend on that row, and its HC3 standard error is the
one of the same model on the other 44 rows, which this script computes with
statsmodels (cov_type="HC3") on the data without that row.

How to rerun
------------
    pip install statsmodels==0.15.0
    python3 tests/reference/make_unit_leverage_reference.py
"""

import json
import os
import sys

import numpy as np
import pandas as pd
import statsmodels
import statsmodels.formula.api as smf

HERE = os.path.dirname(os.path.abspath(__file__))
FIXTURES = os.path.join(HERE, "..", "fixtures", "model_checks")


def main():
    data = pd.read_csv(os.path.join(FIXTURES, "duncan.csv"))
    rest = data[data["occupation"] != "pilot"]
    fit = smf.ols("prestige ~ income + education + C(type, Treatment('bc'))", data=rest).fit(
        cov_type="HC3"
    )
    names = {
        "Intercept": "Intercept",
        "income": "income",
        "education": "education",
        "C(type, Treatment('bc'))[T.prof]": "type[prof]",
        "C(type, Treatment('bc'))[T.wc]": "type[wc]",
    }
    out = {
        "source": "statsmodels %s OLS cov_type=HC3 (numpy %s, pandas %s), Python %s"
        % (statsmodels.__version__, np.__version__, pd.__version__, sys.version.split()[0]),
        "script": "tests/reference/make_unit_leverage_reference.py",
        "data": "duncan.csv with pilot's type set to 'solo'; reference fitted without that row",
        "solo_row": "pilot",
        "hc3_std_errors": {names[k]: float(v) for k, v in fit.bse.items()},
        "undefined": ["type[solo]"],
    }
    with open(os.path.join(FIXTURES, "duncan_solo.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
