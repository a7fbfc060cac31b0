"""STL reference fixtures from statsmodels' STL, with R's parameters.

Writes stl/statsmodels/<name>.json, one for each stl/<name>.json that
stl/make_stl.R wrote, taking x and every parameter (windows, degrees,
jumps, inner, outer) from that R fixture, so both references decompose
the same doubles with the same settings.

Why a second reference: R's robust stl() computes 6 * median|R| from a
partial sort (its Fortran psort) that does not always return the two
middle order statistics, so on some series its robustness weights use a
different scale than the one the STL paper defines (6 times the median).
statsmodels uses the median itself; the two agree everywhere else.

"periodic" (R's s.window = "periodic") is run as R runs it: seasonal =
10n + 1 with degree 0 and jump n + 1 (as recorded in the R fixture); then,
as R does, the seasonal is replaced by its mean at each cycle position and
the remainder recomputed as x - seasonal - trend. The weights are those of
the last pass, before the averaging.

Run from engines/testdata/reference with the system Python, after
stl/make_stl.R:
    /usr/bin/python3 stl/make_stl_statsmodels.py
"""
import glob
import json
import os
import sys

import numpy as np
import scipy
import statsmodels
from statsmodels.tsa.seasonal import STL

HERE = os.path.dirname(os.path.abspath(__file__))
SM = "statsmodels %s (numpy %s, scipy %s, Python %s)" % (
    statsmodels.__version__, np.__version__, scipy.__version__, sys.version.split()[0])


def fl(a):
    return [float(v) for v in np.asarray(a, dtype=float)]


def dump(obj):
    """JSON with one key per line and numeric arrays on lines of 8 values,
    like common.R writes; floats as repr, so they read back exactly."""
    lines = []
    for k, v in obj.items():
        if isinstance(v, list) and v and isinstance(v[0], float):
            rows = [", ".join(repr(x) for x in v[i:i + 8]) for i in range(0, len(v), 8)]
            text = "[\n    " + ",\n    ".join(rows) + "\n  ]"
        else:
            text = json.dumps(v, ensure_ascii=False)
        lines.append("  %s: %s" % (json.dumps(k), text))
    return "{\n" + ",\n".join(lines) + "\n}\n"


def main():
    out_dir = os.path.join(HERE, "statsmodels")
    os.makedirs(out_dir, exist_ok=True)
    count = 0
    for path in sorted(glob.glob(os.path.join(HERE, "*.json"))):
        name = os.path.splitext(os.path.basename(path))[0]
        with open(path) as fh:
            r = json.load(fh)
        p = r["parameters"]
        x = np.asarray(r["x"], dtype=float)
        m = p["period"]
        robust = p["outer"] > 0
        call = ("STL(x, period=%d, seasonal=%d, trend=%d, low_pass=%d, seasonal_deg=%d, "
                "trend_deg=%d, low_pass_deg=%d, robust=%s, seasonal_jump=%d, trend_jump=%d, "
                "low_pass_jump=%d).fit(inner_iter=%d, outer_iter=%d)") % (
            m, p["s_window"], p["t_window"], p["l_window"], p["s_degree"], p["t_degree"],
            p["l_degree"], robust, p["s_jump"], p["t_jump"], p["l_jump"], p["inner"], p["outer"])
        res = STL(x, period=m, seasonal=p["s_window"], trend=p["t_window"],
                  low_pass=p["l_window"], seasonal_deg=p["s_degree"],
                  trend_deg=p["t_degree"], low_pass_deg=p["l_degree"], robust=robust,
                  seasonal_jump=p["s_jump"], trend_jump=p["t_jump"],
                  low_pass_jump=p["l_jump"]).fit(inner_iter=p["inner"], outer_iter=p["outer"])
        seasonal = np.asarray(res.seasonal, dtype=float)
        trend = np.asarray(res.trend, dtype=float)
        post = None
        if p["periodic"]:
            pos = np.arange(len(x)) % m
            means = np.array([seasonal[pos == j].mean() for j in range(m)])
            seasonal = means[pos]
            post = ("periodic: seasonal replaced by its mean at each cycle position "
                    "(positions counted from x[0]); remainder = x - seasonal - trend")
        remainder = x - seasonal - trend
        obj = {
            "source": "%s; statsmodels.tsa.seasonal.%s; x and parameters from stl/%s.json (%s)"
                      % (SM, call, name, r["source"].split("; ")[-1]),
            "dataset": r["dataset"],
            "r_fixture": "stl/%s.json" % name,
            "frequency": m,
            "n": len(x),
            "x": fl(x),
            "parameters": p,
            "postprocessing": post,
            "seasonal": fl(seasonal),
            "trend": fl(trend),
            "remainder": fl(remainder),
            "weights": fl(res.weights),
        }
        with open(os.path.join(out_dir, name + ".json"), "w") as fh:
            fh.write(dump(obj))
        count += 1
    print("stl statsmodels: wrote", count, "files")


if __name__ == "__main__":
    main()
