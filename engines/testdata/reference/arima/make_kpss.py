"""KPSS level-stationarity statistics from statsmodels, the outside check of
almanac's kpssLevel (engines/arima_auto.go).

statsmodels.tsa.stattools.kpss(x, regression="c", nlags=l) with the lag
l = floor(4 * (n/100)**0.25) that almanac uses (Kwiatkowski et al. 1992,
l4), on R datasets as dumped in data/*.json, raw and first-differenced.
Writes arima/kpss.json. Run from engines/testdata/reference with
/usr/bin/python3 (Debian's, with statsmodels).
"""
import json
import math
import warnings

import numpy as np
import statsmodels
from statsmodels.tsa.stattools import kpss

warnings.simplefilter("ignore")  # p-value interpolation warnings

cases = []
for name in ["Nile", "LakeHuron", "WWWusage", "AirPassengers", "USAccDeaths", "austres", "co2", "JohnsonJohnson"]:
    x = np.array(json.load(open("data/%s.json" % name))["x"], dtype=float)
    for diffs in (0, 1, 2):
        v = np.diff(x, n=diffs) if diffs else x
        n = len(v)
        lags = int(math.floor(4 * (n / 100.0) ** 0.25))
        stat, p, used, crit = kpss(v, regression="c", nlags=lags)
        cases.append({"name": name, "diffs": diffs, "nlags": used, "stat": float(stat),
                      "crit_5pct": float(crit["5%"]), "x": v.tolist()})
with open("arima/kpss.json", "w") as f:
    json.dump({"source": "statsmodels %s kpss(regression='c', nlags=floor(4*(n/100)^0.25))" % statsmodels.__version__,
               "cases": cases}, f, indent=1)
print("kpss fixtures written:", len(cases))
