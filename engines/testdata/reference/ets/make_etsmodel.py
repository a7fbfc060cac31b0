"""State-space exponential smoothing reference fixture from statsmodels ETSModel.

Writes ets/etsmodel_fixed.json: for each of the 15 forms almanac's
smoothing_auto considers (error add/mul x trend none/add/damped x season
none/add/mul, without additive error with multiplicative season) on a few
of R's datasets, statsmodels' log-likelihood (llf), one-step fitted values,
SSE and point forecasts with FIXED smoothing parameters and KNOWN initial
states. Nothing is estimated: the fixture pins down the recursions, the
likelihood of both error forms and the forecast formula.

For the multiplicative season statsmodels 0.13.5 ETSModel updates the
seasonal state with the new level l_t instead of base_t = l_{t-1} + phi*b_{t-1}
(its docstring, its ExponentialSmoothing class and Hyndman et al. 2008,
Table 2.3 use base_t); the script asserts that and records, for those cases,
how far a replica of each update is from statsmodels' fitted values. The Go
test checks only the likelihood formula on those cases (from statsmodels'
own fitted values); the recursion is checked against ExponentialSmoothing
(ets/hw_*_mul_*.json).

Parameters are statsmodels' error-correction ones (smoothing_trend = beta,
0 < beta < alpha; smoothing_seasonal = gamma, 0 < gamma < 1 - alpha).
initial_seasonal is [s_{1-m}, ..., s_0] as statsmodels documents it (the
first applies to the first observation); the test checks the alignment.

Run from engines/testdata/reference with the system Python:
    /usr/bin/python3 ets/make_etsmodel.py
"""
import json
import os
import sys

import numpy as np
import pandas as pd
import scipy
import statsmodels
from statsmodels.tsa.exponential_smoothing.ets import ETSModel

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
SM = "statsmodels %s (numpy %s, scipy %s, pandas %s, Python %s)" % (
    statsmodels.__version__, np.__version__, scipy.__version__, pd.__version__,
    sys.version.split()[0])


def load(name):
    with open(os.path.join(ROOT, "data", name + ".json")) as fh:
        d = json.load(fh)
    return np.asarray(d["x"], dtype=float), int(d["frequency"])


FORMS = [
    # error, trend, damped, seasonal
    ("add", None, False, None), ("add", "add", False, None), ("add", "add", True, None),
    ("add", None, False, "add"), ("add", "add", False, "add"), ("add", "add", True, "add"),
    ("mul", None, False, None), ("mul", "add", False, None), ("mul", "add", True, None),
    ("mul", None, False, "add"), ("mul", "add", False, "add"), ("mul", "add", True, "add"),
    ("mul", None, False, "mul"), ("mul", "add", False, "mul"), ("mul", "add", True, "mul"),
]

# dataset, parameters (alpha, beta, gamma, phi), horizon
DATA = [
    ("Nile", (0.3, 0.05, None, 0.9), 10),
    ("AirPassengers", (0.4, 0.02, 0.3, 0.95), 30),
    ("UKgas", (0.2, 0.05, 0.25, 0.9), 9),
    ("USAccDeaths", (0.5, 0.01, 0.1, 0.85), 15),
]


def start_states(x, m, trend, seasonal):
    """Simple, documented starting states: the mean of the first season
    (or the first value), the mean change between the first two seasons,
    and the first season's deviations (ratios) from its mean."""
    if seasonal:
        first, second = x[:m], x[m:2 * m]
        level = float(first.mean())
        b = float((second.mean() - first.mean()) / m) if trend else None
        if seasonal == "add":
            s = [float(v) for v in first - first.mean()]
        else:
            s = [float(v) for v in first / first.mean()]
        return level, b, s
    return float(x[0]), (float(x[1] - x[0]) if trend else None), None


def replica_fitted(x, m, trend, damped, seasonal, p, level, b, s, new_level):
    """One-step fitted values of the recursions written out here, with the
    multiplicative seasonal update using the old level base_t (Hyndman et
    al. 2008, Table 2.3) or, with new_level, the new level l_t."""
    alpha = p["smoothing_level"]
    beta = p["smoothing_trend"] if trend else 0.0
    gamma = p["smoothing_seasonal"]
    phi = p["damping_trend"] if damped else 1.0
    lv, bt = level, (b if trend else 0.0)
    s = list(s)
    out = []
    for t, y in enumerate(x):
        base = lv + phi * bt
        sj = s[t]
        mu = base * sj
        out.append(mu)
        e = y - mu
        lnew = base + alpha * e / sj
        bt = phi * bt + beta * e / sj
        s.append(sj + gamma * e / (lnew if new_level else base))
        lv = lnew
    return np.array(out)


def name_of(error, trend, damped, seasonal):
    t = "N" if trend is None else ("Ad" if damped else "A")
    s = "N" if seasonal is None else seasonal[0].upper()
    return "%s,%s,%s" % (error[0].upper(), t, s)


def main():
    out = {
        "source": SM + "; ETSModel(x, error=, trend=, damped_trend=, seasonal=, seasonal_periods=m, "
                  "initialization_method=\"known\", initial_level=, initial_trend=, initial_seasonal=)"
                  ".smooth(params): llf, fittedvalues, sse, forecast(h)",
        "generated_by": "ets/make_etsmodel.py",
        "note": "error-correction parameters: smoothing_trend = beta (< alpha), smoothing_seasonal = "
                "gamma (< 1 - alpha). initial_seasonal = [s_{1-m}, ..., s_0].",
        "cases": [],
    }
    for ds, (alpha, beta, gamma, phi), h in DATA:
        x, m = load(ds)
        n = len(x)
        idx = pd.period_range("2000-01", periods=n, freq="M")
        for error, trend, damped, seasonal in FORMS:
            if seasonal and m < 2:
                continue
            level, b, s = start_states(x, m, trend, seasonal)
            kw = dict(error=error, trend=trend, damped_trend=damped, seasonal=seasonal,
                      initialization_method="known", initial_level=level)
            if trend:
                kw["initial_trend"] = b
            if seasonal:
                kw["seasonal_periods"] = m
                kw["initial_seasonal"] = s
            model = ETSModel(pd.Series(x, index=idx), **kw)
            p = {"smoothing_level": alpha, "smoothing_trend": beta,
                 "smoothing_seasonal": gamma, "damping_trend": phi}
            vec = [p[k] for k in model.param_names]
            res = model.smooth(vec)
            fc = np.asarray(res.forecast(h), dtype=float)
            fitted = np.asarray(res.fittedvalues, dtype=float)
            extra = {}
            if seasonal == "mul":
                # statsmodels 0.13.5 ETSModel updates a multiplicative season
                # with the NEW level (s_t = s_{t-m} + gamma*e_t/l_t), unlike
                # its own docstring, its ExponentialSmoothing and Hyndman et
                # al. (2008, Table 2.3), which use base_t = l_{t-1} + phi*b_{t-1}.
                # Record how closely each replica reproduces its fitted values.
                for key, new in (("replica_new_level_max_rel_diff", True),
                                 ("replica_table_2_3_max_rel_diff", False)):
                    r = replica_fitted(x, m, trend, damped, seasonal, p, level, b, s, new)
                    extra[key] = float(np.max(np.abs(r - fitted) / np.abs(fitted)))
                assert extra["replica_new_level_max_rel_diff"] < 1e-12, extra
                assert extra["replica_table_2_3_max_rel_diff"] > 1e-4, extra
            out["cases"].append({
                "form": name_of(error, trend, damped, seasonal),
                "dataset": ds,
                "m": m if seasonal else 1,
                "error": error, "trend": trend, "damped_trend": damped, "seasonal": seasonal,
                "params": {k: p[k] for k in model.param_names},
                "initial_level": level,
                "initial_trend": b,
                "initial_seasonal": s,
                "x": [float(v) for v in x],
                "llf": float(res.llf),
                "sse": float(res.sse),
                "fittedvalues": [float(v) for v in np.asarray(res.fittedvalues)],
                "forecast": [float(v) for v in fc],
                **extra,
            })
    path = os.path.join(HERE, "etsmodel_fixed.json")
    with open(path, "w") as fh:
        json.dump(out, fh, indent=1, allow_nan=False)
        fh.write("\n")
    print("wrote", path, len(out["cases"]), "cases")


if __name__ == "__main__":
    main()
