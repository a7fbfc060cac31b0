"""Theta-method reference fixtures from statsmodels' ThetaModel.

Writes theta/<dataset>_<tag>.json. The model is fitted with its default
two-step estimation (fit(use_mle=False)): OLS slope b0 on t = 0..n-1 and an
SES whose alpha statsmodels estimates (initial level = first value, known).

Run from engines/testdata/reference with the system Python:
    /usr/bin/python3 theta/make_theta.py
"""
import json
import os
import sys

import numpy as np
import scipy
import statsmodels
from scipy.optimize import minimize_scalar
from statsmodels.tsa.forecasting.theta import ThetaModel
from statsmodels.tsa.seasonal import seasonal_decompose
from statsmodels.tsa.stattools import acf

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
SM = "statsmodels %s (numpy %s, scipy %s, Python %s)" % (
    statsmodels.__version__, np.__version__, scipy.__version__, sys.version.split()[0])
CV_CHI2_90 = 2.705543454095404  # 1.6448536269514722 ** 2


def load(name):
    with open(os.path.join(ROOT, "data", name + ".json")) as fh:
        return json.load(fh)


def fl(v):
    a = np.asarray(v, dtype=float)
    if a.ndim == 0:
        return float(a)
    return [float(x) for x in a]


def ses_sse(y, alpha):
    lvl = y[0]
    sse = 0.0
    for t in range(len(y)):
        e = y[t] - lvl
        sse += e * e
        lvl = alpha * y[t] + (1 - alpha) * lvl
    return sse, lvl


def seasonality_tests(y, m):
    """Both forms of the lag-m autocorrelation test, at the 90% level."""
    rho = acf(y, nlags=m, fft=True)
    n = len(y)
    stat_sm = n * rho[-1] ** 2 / np.sum(rho[:-1] ** 2)
    # Bartlett-variance form: |r_m| > 1.645 * sqrt((1 + 2 sum_{k<m} r_k^2) / n)
    z = abs(rho[-1]) / np.sqrt((1 + 2 * np.sum(rho[1:-1] ** 2)) / n)
    return {
        "acf": fl(rho),
        "statsmodels_statistic": float(stat_sm),
        "statsmodels_formula": "n * r_m^2 / sum_{k=0}^{m-1} r_k^2  (r_0 = 1) > 1.6448536^2 = 2.705543454095404",
        "statsmodels_seasonal": bool(stat_sm > CV_CHI2_90),
        "bartlett_statistic": float(z),
        "bartlett_formula": "|r_m| / sqrt((1 + 2 * sum_{k=1}^{m-1} r_k^2) / n) > 1.6448536",
        "bartlett_seasonal": bool(z > 1.6448536269514722),
    }


def run(data, tag, kwargs, h):
    y = np.asarray(data["x"], dtype=float)
    n = len(y)
    model = ThetaModel(y, **kwargs)
    res = model.fit()
    fc = np.asarray(res.forecast(h))
    comp = res.forecast_components(h)
    b0 = float(res.params["b0"])
    alpha = float(res.params["alpha"])
    has_seas = bool(model._has_seasonality)
    method_used = model.method
    m = model.period
    seasonal_idx = np.asarray(res._seasonal, dtype=float)
    # the series the SES and the OLS line were fitted to
    if has_seas:
        dec = seasonal_decompose(y, model=method_used, period=m)
        yd = y / dec.seasonal if method_used.startswith("mul") else y - dec.seasonal
    else:
        yd = y
    sse, last_level = ses_sse(yd, alpha)
    one_step = float(np.asarray(res._one_step).ravel()[0])
    # independent check of b0 and of the forecast formula
    t = np.arange(n, dtype=float)
    b0_ols = float(np.polyfit(t, yd, 1)[0])
    hh = np.arange(1, h + 1, dtype=float)
    drift = 0.5 * b0 * (hh - 1 + 1 / alpha - (1 - alpha) ** n / alpha)
    manual = one_step + drift
    if model.deseasonalize:
        season = np.zeros(h) if method_used.startswith("add") else np.ones(h)
        if seasonal_idx.shape[0]:
            season = seasonal_idx[(n + np.arange(h)) % m]
        manual = manual * season if method_used.startswith("mul") else manual + season
    checks = {
        "b0_polyfit_abs_diff": abs(b0_ols - b0),
        "one_step_vs_ses_recursion_abs_diff": abs(last_level - one_step),
        "forecast_formula_max_abs_diff": float(np.max(np.abs(manual - fc))),
    }
    scale = max(1.0, float(np.max(np.abs(y))))
    assert checks["forecast_formula_max_abs_diff"] < 1e-9 * scale, checks
    assert checks["one_step_vs_ses_recursion_abs_diff"] < 1e-8 * scale, checks
    # a tightly converged SES alpha, for comparing optimisers
    opt = minimize_scalar(lambda a: ses_sse(yd, a)[0], bounds=(0.0, 1.0), method="bounded",
                          options={"xatol": 1e-10})
    opts_txt = ", ".join("%s=%r" % kv for kv in kwargs.items())
    obj = {
        "source": "%s; ThetaModel(x, %s).fit() [use_mle=False]; forecast(%d) with theta=2; x = datasets::%s as written by R to data/%s.json"
                  % (SM, opts_txt, h, data["name"], data["name"]),
        "dataset": data["name"],
        "frequency": data["frequency"],
        "start": data["start"],
        "n": n,
        "x": fl(y),
        "options": kwargs,
        "seasonality": dict(
            {"tested": bool(model.use_test), "seasonal_used": has_seas,
             "method_used": method_used if has_seas else None},
            **({"test": seasonality_tests(y, m)} if m and m > 1 else {})),
        "seasonal_indices": fl(seasonal_idx) if seasonal_idx.shape[0] else None,
        "adjusted_series": fl(yd) if has_seas else None,
        "b0": b0,
        "alpha": alpha,
        "ses": {"initial_level": float(yd[0]), "sse_at_alpha": sse,
                "one_step": one_step,
                "alpha_tight_bounded_min": float(opt.x), "sse_at_tight_alpha": float(opt.fun)},
        "theta": 2.0,
        "forecast": {"h": h, "values": fl(fc),
                     "trend_component": fl(comp["trend"]), "ses_component": fl(comp["ses"]),
                     "seasonal_component": fl(comp["seasonal"])},
        "checks": checks,
    }
    if model.deseasonalize and not has_seas:
        plain = 0.5 * np.asarray(comp["trend"]) + np.asarray(comp["ses"])
        obj["forecast"]["values_without_seasonal_step"] = fl(plain)
        obj["forecast"]["note"] = (
            "deseasonalize=True but the test found no seasonality: statsmodels %s keeps "
            "method=%r, builds a seasonal component of ones and then ADDS it, so 'values' "
            "are the plain theta forecast plus %s. 'values_without_seasonal_step' is the "
            "plain forecast (0.5 * trend + ses)."
            % (statsmodels.__version__, method_used, float(np.max(fc - plain))))
    path = os.path.join(HERE, "%s_%s.json" % (data["name"], tag))
    with open(path, "w") as fh:
        json.dump(obj, fh, indent=1, allow_nan=False)
        fh.write("\n")


def main():
    count = 0
    cases = [
        ("AirPassengers", "deseason_test", dict(period=12, deseasonalize=True, use_test=True, method="auto")),
        ("AirPassengers", "deseason_notest", dict(period=12, deseasonalize=True, use_test=False, method="auto")),
        ("AirPassengers", "deseason_additive", dict(period=12, deseasonalize=True, use_test=True, method="additive")),
        ("AirPassengers", "deseason_multiplicative", dict(period=12, deseasonalize=True, use_test=True, method="multiplicative")),
        ("AirPassengers", "nodeseason", dict(period=12, deseasonalize=False)),
        ("UKgas", "deseason_test", dict(period=4, deseasonalize=True, use_test=True, method="auto")),
        ("UKgas", "nodeseason", dict(period=4, deseasonalize=False)),
        ("JohnsonJohnson", "deseason_test", dict(period=4, deseasonalize=True, use_test=True, method="auto")),
        ("USAccDeaths", "deseason_test", dict(period=12, deseasonalize=True, use_test=True, method="auto")),
        ("nottem", "deseason_test", dict(period=12, deseasonalize=True, use_test=True, method="auto")),
        ("Nile", "nodeseason", dict(period=1, deseasonalize=False)),
        ("Nile", "period4_test", dict(period=4, deseasonalize=True, use_test=True, method="auto")),
        ("LakeHuron", "period12_test", dict(period=12, deseasonalize=True, use_test=True, method="auto")),
        ("WWWusage", "nodeseason", dict(period=1, deseasonalize=False)),
    ]
    for name, tag, kw in cases:
        data = load(name)
        f = data["frequency"]
        m = kw.get("period", f)
        run(data, tag, kw, 2 * m if m > 1 else 10)
        count += 1
    print("theta: wrote %d files" % count)


if __name__ == "__main__":
    main()
