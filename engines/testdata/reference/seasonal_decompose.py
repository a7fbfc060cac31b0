"""Reference fixtures for the classical decomposition engine, second source.

For each dataset and model below, runs statsmodels.tsa.seasonal.seasonal_decompose
(period = the series' frequency, two_sided default, no trend extrapolation) on
the very numbers in the R fixture decompose/<dataset>_<type>.json (its "x"
array) and writes statsmodels_decompose/<dataset>_<type>.json with fields:
source, generated_by, frequency, x, trend, seasonal, resid, figure
(figure = the first `frequency` values of seasonal). NaN is written as null.

seasonal_decompose refuses missing values, so the AirPassengers_gaps input of
decompose.R has no counterpart here.

Run from engines/testdata/reference with Debian's python3-statsmodels:
    /usr/bin/python3 seasonal_decompose.py
"""

import json
import math
import os
import platform

import numpy as np
import statsmodels
from statsmodels.tsa.seasonal import seasonal_decompose

DATASETS = ["AirPassengers", "nottem", "UKgas", "USAccDeaths", "weekly156"]
MODELS = ["additive", "multiplicative"]


def num(v):
    v = float(v)
    if not math.isfinite(v):
        return "null"
    return repr(v)  # shortest string that reads back to the same double


def arr(values):
    vals = [num(v) for v in values]
    lines = [", ".join(vals[i:i + 8]) for i in range(0, len(vals), 8)]
    return "[\n    " + ",\n    ".join(lines) + "\n  ]"


def write(path, fields):
    body = []
    for k, v in fields:
        if isinstance(v, str):
            body.append("  %s: %s" % (json.dumps(k), json.dumps(v)))
        elif isinstance(v, int):
            body.append("  %s: %d" % (json.dumps(k), v))
        else:
            body.append("  %s: %s" % (json.dumps(k), arr(v)))
    os.makedirs(os.path.dirname(path), exist_ok=True)
    with open(path, "w") as f:
        f.write("{\n" + ",\n".join(body) + "\n}\n")


def main():
    n = 0
    for name in DATASETS:
        for model in MODELS:
            with open(os.path.join("decompose", "%s_%s.json" % (name, model))) as f:
                r = json.load(f)
            period = int(r["frequency"])
            x = np.array(r["x"], dtype=float)
            res = seasonal_decompose(x, model=model, period=period)
            source = ("statsmodels %s (Python %s, numpy %s) "
                      "seasonal_decompose(x, model=%r, period=%d) "
                      "with x from decompose/%s_%s.json"
                      % (statsmodels.__version__, platform.python_version(),
                         np.__version__, model, period, name, model))
            write(os.path.join("statsmodels_decompose", "%s_%s.json" % (name, model)), [
                ("source", source),
                ("generated_by", "engines/testdata/reference/seasonal_decompose.py"),
                ("frequency", period),
                ("x", x),
                ("trend", res.trend),
                ("seasonal", res.seasonal),
                ("resid", res.resid),
                ("figure", res.seasonal[:period]),
            ])
            n += 1
    print("statsmodels_decompose: wrote %d files" % n)


if __name__ == "__main__":
    main()
