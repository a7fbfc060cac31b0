"""Forecast-variance reference fixture from statsmodels ETSModel.

Writes smoothing/forecast_variance.json: for the six linear additive-error
forms (ANN, AAN, AAdN, ANA, AAA, AAdA) with fixed parameters and known
initial states, statsmodels' analytic ("exact") forecast variance
PredictionResults.forecast_variance, which is results.mse times the relative
variance of the published class 1 formulas. Only the relative variance
depends on the parameters; mse is recorded so a test can rebuild the
variance exactly.

statsmodels' ETSModel uses the error-correction parameters: smoothing_trend
is beta_e (0 < beta_e < alpha) and smoothing_seasonal is gamma_e
(0 < gamma_e < 1 - alpha).

Run from engines/testdata/reference with the system Python:
    /usr/bin/python3 smoothing/make_variance.py
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
    x = np.asarray(d["x"], dtype=float)
    # A PeriodIndex: statsmodels 0.13.5's get_prediction fails on a bare
    # ndarray (it reads .index of the predicted mean).
    return d, pd.Series(x, index=pd.period_range("2000-01", periods=len(x), freq="M"))


CASES = [
    # name, dataset, trend, damped, seasonal, params (statsmodels order), H
    ("ANN", "Nile", None, False, None, {"smoothing_level": 0.3}, 12),
    ("AAN", "Nile", "add", False, None,
     {"smoothing_level": 0.5, "smoothing_trend": 0.1}, 12),
    ("AAdN", "Nile", "add", True, None,
     {"smoothing_level": 0.5, "smoothing_trend": 0.1, "damping_trend": 0.9}, 12),
    ("ANA", "AirPassengers", None, False, "add",
     {"smoothing_level": 0.3, "smoothing_seasonal": 0.2}, 30),
    ("AAA", "AirPassengers", "add", False, "add",
     {"smoothing_level": 0.3, "smoothing_trend": 0.05, "smoothing_seasonal": 0.2}, 30),
    ("AAdA", "AirPassengers", "add", True, "add",
     {"smoothing_level": 0.3, "smoothing_trend": 0.05, "smoothing_seasonal": 0.2,
      "damping_trend": 0.9}, 30),
]


def main():
    out = {
        "source": SM + "; ETSModel(x, error=\"add\", trend=, damped_trend=, seasonal=, "
                  "seasonal_periods=12, initialization_method=\"known\", ...).smooth(params)"
                  ".get_prediction(start=n, end=n+H-1).forecast_variance",
        "generated_by": "smoothing/make_variance.py",
        "note": "statsmodels parameters are in error-correction form: smoothing_trend = beta_e, "
                "smoothing_seasonal = gamma_e. forecast_variance = mse * relative_variance.",
        "cases": [],
    }
    for name, ds, trend, damped, seasonal, params, H in CASES:
        d, x = load(ds)
        n = len(x)
        kw = dict(error="add", trend=trend, damped_trend=damped, seasonal=seasonal,
                  initialization_method="known", initial_level=float(x.iloc[0]))
        if trend:
            kw["initial_trend"] = float(x.iloc[1] - x.iloc[0])
        if seasonal:
            kw["seasonal_periods"] = 12
            first = x.values[:12]
            kw["initial_level"] = float(first.mean())
            kw["initial_seasonal"] = list(first - first.mean())
        model = ETSModel(x, **kw)
        vec = [params[p] for p in model.param_names]
        res = model.smooth(vec)
        pred = res.get_prediction(start=n, end=n + H - 1)
        assert pred.method == "exact", pred.method
        var = np.asarray(pred.forecast_variance, dtype=float)
        rel = np.asarray(res._relative_forecast_variance(np.arange(1, H + 1)), dtype=float)
        assert np.allclose(var, res.mse * rel, rtol=1e-14, atol=0), name
        out["cases"].append({
            "model": name,
            "dataset": ds,
            "n": n,
            "trend": trend,
            "damped_trend": damped,
            "seasonal": seasonal,
            "seasonal_periods": 12 if seasonal else None,
            "params": {p: params[p] for p in model.param_names},
            "mse": float(res.mse),
            "sse": float(res.sse),
            "h": H,
            "forecast_variance": [float(v) for v in var],
            "relative_variance": [float(v) for v in rel],
        })
    path = os.path.join(HERE, "forecast_variance.json")
    with open(path, "w") as fh:
        json.dump(out, fh, indent=1, allow_nan=False)
        fh.write("\n")
    print("wrote", path)


if __name__ == "__main__":
    main()
