"""Exponential-smoothing reference fixtures from statsmodels (fixed parameters).

Writes ets/<case>_<dataset>.json. Every fit uses initialization_method="known"
and optimized=False, so nothing is estimated: the fixtures pin down the
recursions, the start alignment and the forecast formula.

Run from engines/testdata/reference with the system Python:
    /usr/bin/python3 ets/make_ets.py
"""
import json
import os
import sys
import warnings

import numpy as np
import scipy
import statsmodels
from statsmodels.tsa.holtwinters import ExponentialSmoothing, Holt, SimpleExpSmoothing

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
SM = "statsmodels %s (numpy %s, scipy %s, Python %s)" % (
    statsmodels.__version__, np.__version__, scipy.__version__, sys.version.split()[0])


def load(name):
    with open(os.path.join(ROOT, "data", name + ".json")) as fh:
        return json.load(fh)


def fl(v):
    """JSON-safe float / list of floats (NaN -> None)."""
    if v is None:
        return None
    a = np.asarray(v, dtype=float)
    if a.ndim == 0:
        x = float(a)
        return None if not np.isfinite(x) else x
    return [None if not np.isfinite(x) else float(x) for x in a]


def write(obj, name):
    path = os.path.join(HERE, name)
    with open(path, "w") as fh:
        json.dump(obj, fh, indent=1, allow_nan=False)
        fh.write("\n")


def replicate(y, m, trend, seasonal, phi, alpha, beta, gamma, l0, b0, s0):
    """The recursions as documented in REFERENCE-METHODS.md (check only).

    Returns fitted values, final states and the seasonal buffer."""
    n = len(y)
    lvl, b = l0, (b0 if trend else 0.0)
    s = list(s0) if seasonal else []
    fit = np.empty(n)
    for t in range(n):
        base = lvl + (phi * b if trend else 0.0)
        if seasonal == "add":
            st = s[t]
            fit[t] = base + st
            new_l = alpha * (y[t] - st) + (1 - alpha) * base
            s.append(gamma * (y[t] - base) + (1 - gamma) * st)
        elif seasonal == "mul":
            st = s[t]
            fit[t] = base * st
            new_l = alpha * (y[t] / st) + (1 - alpha) * base
            s.append(gamma * (y[t] / base) + (1 - gamma) * st)
        else:
            fit[t] = base
            new_l = alpha * y[t] + (1 - alpha) * base
        if trend:
            b = beta * (new_l - lvl) + (1 - beta) * phi * b
        lvl = new_l
    return fit, lvl, b, s


def standard_forecast(n, m, trend, seasonal, phi, lvl, b, s, h):
    """l_n + (phi + ... + phi^k) b_n, combined with s_{n+k-m(floor((k-1)/m)+1)}."""
    out = []
    for k in range(1, h + 1):
        if trend:
            damp = sum(phi ** j for j in range(1, k + 1))
            base = lvl + damp * b
        else:
            base = lvl
        if seasonal:
            # seasonal estimated at time n + k - m*(floor((k-1)/m)+1); time tau
            # sits at index tau + m - 1 of the buffer
            tau = n + k - m * ((k - 1) // m + 1)
            st = s[tau + m - 1]
            base = base + st if seasonal == "add" else base * st
        out.append(base)
    return np.array(out)


def run_case(data, case, y, m, trend, seasonal, damped, params, init, call_model, call_fit, h):
    kw = dict(initialization_method="known", initial_level=init["level"])
    if trend:
        kw["initial_trend"] = init["trend"]
    if seasonal:
        kw["initial_seasonal"] = np.asarray(init["seasonal"])
    with warnings.catch_warnings(record=True) as wlist:
        warnings.simplefilter("always")
        if case == "ses":
            model = SimpleExpSmoothing(y, **kw)
            res = model.fit(smoothing_level=params["alpha"], optimized=False)
        elif case in ("holt", "holt_damped"):
            model = Holt(y, damped_trend=damped, **kw)
            fkw = dict(smoothing_level=params["alpha"], smoothing_trend=params["beta"], optimized=False)
            if damped:
                fkw["damping_trend"] = params["phi"]
            res = model.fit(**fkw)
        else:
            model = ExponentialSmoothing(y, trend="add", damped_trend=damped, seasonal=seasonal,
                                         seasonal_periods=m, **kw)
            fkw = dict(smoothing_level=params["alpha"], smoothing_trend=params["beta"],
                       smoothing_seasonal=params["gamma"], optimized=False)
            if damped:
                fkw["damping_trend"] = params["phi"]
            res = model.fit(**fkw)
    fc = np.asarray(res.forecast(h))
    phi = params.get("phi", 1.0)
    fit, lvl, b, s = replicate(y, m, trend, seasonal, phi, params["alpha"], params.get("beta", 0.0),
                               params.get("gamma", 0.0), init["level"], init.get("trend", 0.0),
                               init.get("seasonal", []))
    std = standard_forecast(len(y), m, trend, seasonal, phi, lvl, b, s, h)
    fitted = np.asarray(res.fittedvalues)
    checks = {
        "replicated_fitted_max_abs_diff": float(np.max(np.abs(fit - fitted))),
        "replicated_sse_rel_diff": float(abs(np.sum((y - fit) ** 2) - res.sse) / res.sse),
        "standard_forecast_max_abs_diff": float(np.max(np.abs(std - fc))),
    }
    scale = max(1.0, float(np.max(np.abs(y))))
    assert checks["replicated_fitted_max_abs_diff"] < 1e-9 * scale, checks
    assert checks["replicated_sse_rel_diff"] < 1e-10, checks
    rp = {}
    for k, v in res.params.items():
        if isinstance(v, (bool, np.bool_)):
            rp[k] = bool(v)
        elif v is None:
            rp[k] = None
        else:
            rp[k] = fl(v)
    obj = {
        "source": "%s; %s.fit(%s); x = datasets::%s as written by R to data/%s.json" % (
            SM, call_model, call_fit, data["name"], data["name"]),
        "dataset": data["name"],
        "frequency": data["frequency"],
        "start": data["start"],
        "n": len(y),
        "x": fl(y),
        "model": {"trend": "add" if trend else None, "damped_trend": damped,
                  "seasonal": seasonal, "seasonal_periods": m if seasonal else None},
        "parameters": params,
        "initial": {"level": init["level"], "trend": init.get("trend"),
                    "seasonal": fl(init["seasonal"]) if seasonal else None,
                    "how_chosen": init["how"]},
        "statsmodels_params": rp,
        "fittedvalues": fl(fitted),
        "sse": float(res.sse),
        "states_after_each_observation": {
            "level": fl(res.level),
            "trend": fl(res.trend) if trend else None,
            "season": fl(res.season) if seasonal else None,
        },
        "final_states": {"level": float(lvl), "trend": float(b) if trend else None,
                         "seasonal_last_m": fl(s[-m:]) if seasonal else None},
        "forecast": {"h": h, "values": fl(fc),
                     "values_standard_formula": fl(std)},
        "warnings": [str(w.message) for w in wlist],
        "checks": checks,
    }
    if seasonal and checks["standard_forecast_max_abs_diff"] > 1e-9 * scale:
        bad = [k + 1 for k in range(h) if abs(std[k] - fc[k]) > 1e-9 * scale]
        obj["forecast"]["note"] = (
            "statsmodels %s's forecast differs from the standard formula at horizons %s "
            "(the multiples of m): there it uses the seasonal estimated at time n - m instead "
            "of the one estimated at time n. 'values' is statsmodels' output verbatim; "
            "'values_standard_formula' applies the standard formula to the same final states."
            % (statsmodels.__version__, bad))
    return obj


def fmt(v):
    return repr(float(v))


def main():
    n_files = 0
    h = 12
    # non-seasonal cases
    for name in ("Nile", "LakeHuron", "WWWusage", "AirPassengers"):
        data = load(name)
        y = np.asarray(data["x"], dtype=float)
        l0 = float(y[0])
        b0 = float(y[1] - y[0])
        cases = [
            ("ses", False, False, {"alpha": 0.3}, {"level": l0, "how": "x[0]"},
             "SimpleExpSmoothing(x, initialization_method=\"known\", initial_level=%s)" % fmt(l0),
             "smoothing_level=0.3, optimized=False"),
            ("holt", True, False, {"alpha": 0.5, "beta": 0.2},
             {"level": l0, "trend": b0, "how": "level = x[0], trend = x[1] - x[0]"},
             "Holt(x, initialization_method=\"known\", initial_level=%s, initial_trend=%s)" % (fmt(l0), fmt(b0)),
             "smoothing_level=0.5, smoothing_trend=0.2, optimized=False"),
            ("holt_damped", True, True, {"alpha": 0.5, "beta": 0.2, "phi": 0.9},
             {"level": l0, "trend": b0, "how": "level = x[0], trend = x[1] - x[0]"},
             "Holt(x, damped_trend=True, initialization_method=\"known\", initial_level=%s, initial_trend=%s)" % (fmt(l0), fmt(b0)),
             "smoothing_level=0.5, smoothing_trend=0.2, damping_trend=0.9, optimized=False"),
        ]
        for case, trend, damped, params, init, cm, cf in cases:
            obj = run_case(data, case, y, 1, trend, None, damped, params, init, cm, cf, h)
            write(obj, "%s_%s.json" % (case, name))
            n_files += 1
    # seasonal cases on AirPassengers
    data = load("AirPassengers")
    y = np.asarray(data["x"], dtype=float)
    m = 12
    l0 = float(y[:m].mean())
    b0 = float((y[m:2 * m].mean() - y[:m].mean()) / m)
    for seasonal in ("add", "mul"):
        s0 = (y[:m] - l0) if seasonal == "add" else (y[:m] / l0)
        how = ("level = mean(x[0:12]), trend = (mean(x[12:24]) - mean(x[0:12])) / 12, "
               "seasonal = x[0:12] %s level" % ("-" if seasonal == "add" else "/"))
        for damped in (False, True):
            params = {"alpha": 0.3, "beta": 0.1, "gamma": 0.2}
            if damped:
                params["phi"] = 0.9
            init = {"level": l0, "trend": b0, "seasonal": [float(v) for v in s0], "how": how}
            cm = ("ExponentialSmoothing(x, trend=\"add\", damped_trend=%s, seasonal=\"%s\", seasonal_periods=12, "
                  "initialization_method=\"known\", initial_level=%s, initial_trend=%s, initial_seasonal=<initial.seasonal>)"
                  % (damped, seasonal, fmt(l0), fmt(b0)))
            cf = "smoothing_level=0.3, smoothing_trend=0.1, smoothing_seasonal=0.2%s, optimized=False" % (
                ", damping_trend=0.9" if damped else "")
            obj = run_case(data, "hw", y, m, True, seasonal, damped, params, init, cm, cf, 2 * m)
            write(obj, "hw_%s_%s_AirPassengers.json" % ("damped" if damped else "add", seasonal))
            n_files += 1
    print("ets: wrote %d files" % n_files)


if __name__ == "__main__":
    main()
