#!/bin/sh
# Regenerates the reference fixtures for classical decomposition, exponential smoothing, Holt-Winters,
# STL, Theta, hold-out evaluation and the R timings (see REFERENCE-METHODS.md).
# Needs R (Debian: r-base-core) and statsmodels for the system Python
# (Debian: python3-statsmodels). CI does not run this: the JSON is committed.
set -eu
cd "$(dirname "$0")"
PY=/usr/bin/python3

Rscript --version
$PY -c 'import statsmodels; print("statsmodels", statsmodels.__version__)'

Rscript data/dump_data.R          # data/*.json: the datasets, as R has them
Rscript decompose.R               # decompose/*.json (stats::decompose)
$PY seasonal_decompose.py         # statsmodels_decompose/*.json (reads decompose/*.json)
Rscript hw/make_hw.R              # hw/fixed_*.json, hw/optim_*.json
Rscript stl/make_stl.R            # stl/*.json
Rscript holdout/make_holdout.R    # holdout/*.json
Rscript metrics/make_metrics.R    # metrics/*.json (accuracy metrics, interval and pinball scores)
Rscript bench/time_r.R            # bench/*.json (timings vary run to run)
$PY ets/make_ets.py               # ets/*.json   (reads data/*.json)
$PY ets/make_etsmodel.py          # ets/etsmodel_fixed.json (statsmodels ETSModel; reads data/*.json)
$PY smoothing/make_variance.py    # smoothing/forecast_variance.json (reads data/*.json)
$PY theta/make_theta.py           # theta/*.json (reads data/*.json)
Rscript arima/make_arima.R        # arima/fits.json, arima/strength.json (stats::arima, decompose)
$PY arima/make_kpss.py            # arima/kpss.json (statsmodels kpss)
Rscript regarima/make_regarima.R  # regarima/fits.json (stats::arima(xreg =), predict(newxreg =))
Rscript regarima/make_method.R    # regarima/method.json (the regression_arima method's chosen forms in R)
Rscript mstl/make_mstl.R          # mstl/fits.json (the MSTL loop around stats::stl)
Rscript uplift/make_uplift.R      # uplift/uplifts.json (the driver uplifts written out in base R)
Rscript seasonal_auto/make_auto.R # seasonal_auto/ftest.json (stats::decompose, lm, anova, qf)

# every fixture must be valid JSON
n=0
for f in data/*.json decompose/*.json statsmodels_decompose/*.json hw/*.json ets/*.json smoothing/*.json stl/*.json theta/*.json arima/*.json regarima/*.json uplift/*.json mstl/*.json holdout/*.json metrics/*.json bench/*.json; do
  $PY -m json.tool "$f" >/dev/null || { echo "invalid JSON: $f" >&2; exit 1; }
  n=$((n + 1))
done
echo "make_fixtures: $n JSON files valid"
