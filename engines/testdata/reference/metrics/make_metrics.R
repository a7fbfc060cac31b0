# Reference values for engines/metrics.go (tested in engines/metrics_test.go).
#   metrics/holdout_scores.json  every point and interval metric for the
#                                hold-out forecasts of holdout/make_holdout.R
#                                (same split, same R calls), with R's
#                                HoltWinters prediction intervals
#   metrics/edge_cases.json      small hand-made vectors: missing values,
#                                zero actuals, short / constant / periodic
#                                training series, interval bounds, a perfect
#                                forecast
# Run from engines/testdata/reference: Rscript metrics/make_metrics.R
#
# Every metric is written out below from its published definition, in base R:
#   error          e = y - f (actual minus forecast)
#   missing pairs  a pair with NA on either side is dropped (intervals: NA in
#                  y, lower or upper)
#   MAE            mean(|e|)
#   RMSE           sqrt(mean(e^2))
#   MAPE           100 * mean(|e| / |y|) over y != 0; zero actuals counted
#                  (Hyndman & Koehler 2006)
#   sMAPE          100 * mean(2|e| / (|y| + |f|)), 0/0 taken as 0 (M4, 2020)
#   MASE           mean(|e|) / mean(|train[t] - train[t - lag]|), NA
#                  differences dropped; lag = m, or 1 when m = 1 or
#                  length(train) < m + 1 (Hyndman & Koehler 2006; M4)
#   RMSSE          sqrt(mean(e^2) / mean((train[t] - train[t - 1])^2)) (M5, 2022)
#   RMSSE seasonal same with lag as for MASE
#   WAPE           sum(|e|) / sum(|y|)
#   bias           mean(f - y), positive = over-forecast
#   coverage       mean(lower <= y & y <= upper)
#   interval score mean((u - l) + 2/a (l - y) 1{y < l} + 2/a (y - u) 1{y > u})
#                  (Winkler 1972; Gneiting & Raftery 2007)
#   pinball        mean(max(tau (y - q), (tau - 1) (y - q)))
# A metric whose scale is zero or undefined is NaN and written as null.
source("common.R")

point_metrics <- function(y, f, train, m) {
  ok <- !is.na(y) & !is.na(f)
  y <- y[ok]; f <- f[ok]
  e <- y - f
  nz <- y != 0
  den <- abs(y) + abs(f)
  sym <- ifelse(den == 0, 0, 2 * abs(e) / den)
  lag <- if (m == 1 || length(train) < m + 1) 1 else m
  d_m <- diff(train, lag = lag); d_m <- d_m[!is.na(d_m)]
  d_1 <- diff(train, lag = 1);   d_1 <- d_1[!is.na(d_1)]
  mase_scale <- if (length(d_m)) mean(abs(d_m)) else NaN
  rmsse_scale <- if (length(d_1)) mean(d_1^2) else NaN
  seas_scale <- if (length(d_m)) mean(d_m^2) else NaN
  nan_if_zero <- function(v, s) if (is.na(s) || s == 0) NaN else v
  list(n = length(y), skipped = sum(!ok),
       mae = mean(abs(e)),
       rmse = sqrt(mean(e^2)),
       mape = 100 * mean(abs(e[nz]) / abs(y[nz])), mape_n = sum(nz), mape_zeros = sum(!nz),
       smape = 100 * mean(sym),
       scale_lag = lag,
       mase = nan_if_zero(mean(abs(e)) / mase_scale, mase_scale), mase_scale = mase_scale,
       rmsse = nan_if_zero(sqrt(mean(e^2) / rmsse_scale), rmsse_scale), rmsse_scale = rmsse_scale,
       rmsse_seasonal = nan_if_zero(sqrt(mean(e^2) / seas_scale), seas_scale),
       rmsse_seasonal_scale = seas_scale,
       wape = sum(abs(e)) / sum(abs(y)),
       bias = mean(f - y))
}

interval_metrics <- function(y, lo, hi, alpha) {
  ok <- !is.na(y) & !is.na(lo) & !is.na(hi)
  y <- y[ok]; lo <- lo[ok]; hi <- hi[ok]
  s <- (hi - lo) + (2 / alpha) * (lo - y) * (y < lo) + (2 / alpha) * (y - hi) * (y > hi)
  list(alpha = alpha, n = length(y),
       coverage = mean(lo <= y & y <= hi),
       interval_score = mean(s))
}

pinball <- function(y, q, tau) {
  ok <- !is.na(y) & !is.na(q)
  u <- y[ok] - q[ok]
  list(tau = tau, n = sum(ok), loss = mean(pmax(tau * u, (tau - 1) * u)))
}

# ---------------------------------------------------------------------------
# holdout_scores.json
cases <- list()
for (nm in c("AirPassengers", "nottem", "UKgas", "USAccDeaths")) {
  x <- get_dataset(nm)
  m <- frequency(x); n <- length(x)
  train <- ts(as.double(x)[1:(n - m)], start = start(x), frequency = m)
  test <- as.double(x)[(n - m + 1):n]
  tr <- as.double(train)
  methods <- list(list(name = "seasonal_naive",
                       forecast = tr[(n - 2 * m + 1):(n - m)]))
  for (seasonal in c("additive", "multiplicative")) {
    hw <- suppressWarnings(HoltWinters(train, seasonal = seasonal))
    p80 <- predict(hw, n.ahead = m, prediction.interval = TRUE, level = 0.80)
    p95 <- predict(hw, n.ahead = m, prediction.interval = TRUE, level = 0.95)
    methods[[length(methods) + 1]] <- list(
      name = paste0("holtwinters_", seasonal),
      forecast = as.double(p80[, "fit"]),
      lwr80 = as.double(p80[, "lwr"]), upr80 = as.double(p80[, "upr"]),
      lwr95 = as.double(p95[, "lwr"]), upr95 = as.double(p95[, "upr"]))
  }
  for (i in seq_along(methods)) {
    me <- methods[[i]]
    out <- list(name = me$name, forecast = arr(me$forecast),
                point = point_metrics(test, me$forecast, tr, m),
                pinball_median = pinball(test, me$forecast, 0.5))
    if (!is.null(me$lwr80)) {
      out$lwr80 <- arr(me$lwr80); out$upr80 <- arr(me$upr80)
      out$lwr95 <- arr(me$lwr95); out$upr95 <- arr(me$upr95)
      out$interval80 <- interval_metrics(test, me$lwr80, me$upr80, 0.20)
      out$interval95 <- interval_metrics(test, me$lwr95, me$upr95, 0.05)
      out$pinball <- list(pinball(test, me$lwr80, 0.10), pinball(test, me$upr80, 0.90),
                          pinball(test, me$lwr95, 0.025), pinball(test, me$upr95, 0.975))
      out$pinball_quantile_from <- arr(c("lwr80", "upr80", "lwr95", "upr95"))
    }
    methods[[i]] <- out
  }
  cases[[length(cases) + 1]] <- list(dataset = nm, m = m,
                                     train = arr(tr), test = arr(test),
                                     methods = methods)
}
write_json(list(
  source = sprintf("%s; train = first n - frequency points of datasets::<dataset>, test = last frequency points (as holdout/make_holdout.R); forecasts: seasonal naive, and predict(suppressWarnings(HoltWinters(train, seasonal = ...)), n.ahead = frequency, prediction.interval = TRUE, level = 0.80 and 0.95); metrics evaluated in base R from the formulas in metrics/make_metrics.R", r_version()),
  generated_by = "metrics/make_metrics.R",
  sign_convention = "e = y - f; bias = mean(f - y), positive means over-forecast",
  cases = cases), file.path("metrics", "holdout_scores.json"))

# ---------------------------------------------------------------------------
# edge_cases.json
edge <- list(
  list(name = "gaps",
       note = "NA in actual (pos 2), forecast (pos 5), both (pos 7), train (pos 3, 9), lower (pos 4)",
       actual   = c(12, NA, 15, 11, 14, 9, NA, 18),
       forecast = c(10, 13, 15, 12, NA, 11, NA, 16),
       lower    = c(8, 9, 12, NA, 10, 10, 9, 14),
       upper    = c(13, 16, 18, 15, 17, 14, 13, 17),
       alpha = 0.2, tau = 0.3,
       train = c(10, 12, NA, 13, 11, 14, 12, 15, NA, 16, 13, 17), m = 4),
  list(name = "zeros_in_actuals",
       note = "three zero actuals, one of them forecast exactly (0/0 in sMAPE)",
       actual   = c(0, 5, 0, 3, 0, 8),
       forecast = c(0, 4, 2, 3, 1, 10),
       lower    = c(-1, 3, 1, 2, 0, 7),
       upper    = c(1, 6, 3, 4, 2, 9),
       alpha = 0.5, tau = 0.75,
       train = c(2, 0, 3, 1, 0, 4, 2), m = 1),
  list(name = "short_train",
       note = "train has 3 values, m = 4 > length - 1: the scale falls back to lag 1",
       actual   = c(20, 22, 19, 25),
       forecast = c(21, 20, 20, 23),
       lower    = c(18, 19, 17, 22),
       upper    = c(24, 21, 22, 24),
       alpha = 0.1, tau = 0.9,
       train = c(18, 21, 17), m = 4),
  list(name = "interval_edges",
       note = "actuals on the lower bound, on the upper bound, inside, below, above; negative values",
       actual   = c(-2, 5, 1, -6, 9, 0.5),
       forecast = c(-1, 4, 1, -3, 6, 0),
       lower    = c(-2, 2, 0, -4, 3, -1),
       upper    = c(0, 5, 2, -1, 7, 1),
       alpha = 0.1, tau = 0.1,
       train = c(-3, 1, -2, 4, 0, 6, 1), m = 2),
  list(name = "periodic_train",
       note = "train repeats with period 2: the lag-2 scale is 0 (MASE, seasonal RMSSE NaN), the lag-1 scale is not",
       actual   = c(1, 5, 1, 5),
       forecast = c(2, 4, 1, 6),
       lower    = c(0, 3, 0, 4),
       upper    = c(3, 6, 2, 7),
       alpha = 0.2, tau = 0.5,
       train = c(1, 5, 1, 5, 1, 5), m = 2),
  list(name = "constant_train",
       note = "constant train: every scale is 0, so MASE and both RMSSE are NaN",
       actual   = c(7, 8, 6),
       forecast = c(7, 7, 7),
       lower    = c(6, 6, 6),
       upper    = c(8, 8, 8),
       alpha = 0.2, tau = 0.5,
       train = c(7, 7, 7, 7, 7), m = 1),
  list(name = "perfect",
       note = "forecast equals actual: every error metric is 0",
       actual   = c(3, 0, 4, 1),
       forecast = c(3, 0, 4, 1),
       lower    = c(3, 0, 4, 1),
       upper    = c(3, 0, 4, 1),
       alpha = 0.2, tau = 0.5,
       train = c(1, 2, 4, 3, 5), m = 2))
for (i in seq_along(edge) ) {
  ec <- edge[[i]]
  ec$point <- point_metrics(ec$actual, ec$forecast, ec$train, ec$m)
  ec$interval <- interval_metrics(ec$actual, ec$lower, ec$upper, ec$alpha)
  ec$pinball <- pinball(ec$actual, ec$forecast, ec$tau)
  for (k in c("actual", "forecast", "lower", "upper", "train")) ec[[k]] <- arr(ec[[k]])
  edge[[i]] <- ec
}
write_json(list(
  source = sprintf("%s; hand-made vectors; metrics evaluated in base R from the formulas in metrics/make_metrics.R (pinball: quantile = forecast at level tau)", r_version()),
  generated_by = "metrics/make_metrics.R",
  sign_convention = "e = y - f; bias = mean(f - y), positive means over-forecast",
  cases = edge), file.path("metrics", "edge_cases.json"))
cat("metrics: wrote 2 files\n")
