# Reference fits for regression with ARIMA errors (engines/regarima.go),
# made with R's stats::arima(xreg = ...) (method "ML") and
# stats::predict(newxreg = ...).
#
# Model: y_t = sum_j b_j x_{j,t} + eta_t, eta an ARIMA(p,d,q)(P,D,Q)m process;
# with d + D = 0 and mean = TRUE an intercept is fitted too (R's
# include.mean).
#
# Writes regarima/fits.json: for each case the data (as R's datasets have
# them), the regressors over the fitted history and over the forecast
# horizon, the orders, R's coefficients, log-likelihood and sigma2, and the
# forecasts and their standard errors from predict(newxreg = ...).
#
# Differenced models (d + D > 0): as in arima/make_arima.R, stats::arima on
# the undifferenced series starts the differencing from a prior of variance
# kappa (1e6) rather than the exact diffuse limit. So the estimates, the
# log-likelihood and sigma2 of those cases are R's exact ML fit of the
# regression with ARMA errors of the differenced series on the differenced
# regressors (the same likelihood without the prior; include.mean = FALSE),
# and the forecasts and standard errors come from the undifferenced model at
# those coefficients (fixed) with kappa = 1e9. coef_kappa_default and
# loglik_kappa_default record R's own fit of the undifferenced model at its
# default kappa, to show the size of that approximation.
#
# Datasets (R datasets): Seatbelts (UK road casualties 1969-1984; law = 1
# from February 1983, when the front seat belt law came in; PetrolPrice)
# and LakeHuron (annual levels 1875-1972; a linear time trend as regressor,
# the example of R's ?arima).
#
# Run from engines/testdata/reference: Rscript regarima/make_regarima.R
source("common.R")

sb <- get("Seatbelts", envir = asNamespace("datasets"))
sbcol <- function(nm) as.numeric(sb[, nm])
lh <- as.numeric(get("LakeHuron", envir = asNamespace("datasets")))

cases <- list(
  list(name = "seatbelts_drivers_law_100_100_mean", y = sbcol("drivers"),
       x = cbind(law = sbcol("law")), order = c(1, 0, 0), seasonal = c(1, 0, 0), period = 12, mean = TRUE, hold = 12),
  list(name = "seatbelts_drivers_law_petrol_200_011", y = sbcol("drivers"),
       x = cbind(law = sbcol("law"), petrol = sbcol("PetrolPrice")), order = c(2, 0, 0), seasonal = c(0, 1, 1), period = 12, mean = FALSE, hold = 12),
  list(name = "seatbelts_logfront_law_logpetrol_011_011", y = log(sbcol("front")),
       x = cbind(law = sbcol("law"), logpetrol = log(sbcol("PetrolPrice"))), order = c(0, 1, 1), seasonal = c(0, 1, 1), period = 12, mean = FALSE, hold = 12),
  list(name = "seatbelts_killed_law_101_011", y = sbcol("DriversKilled"),
       x = cbind(law = sbcol("law")), order = c(1, 0, 1), seasonal = c(0, 1, 1), period = 12, mean = FALSE, hold = 12),
  list(name = "seatbelts_drivers_law_missing_100_100_mean", y = sbcol("drivers"), missing = c(15, 60, 61, 150, 171),
       x = cbind(law = sbcol("law")), order = c(1, 0, 0), seasonal = c(1, 0, 0), period = 12, mean = TRUE, hold = 12),
  list(name = "seatbelts_logfront_law_logpetrol_missing_011_011", y = log(sbcol("front")), missing = c(20, 50, 51, 100, 143),
       x = cbind(law = sbcol("law"), logpetrol = log(sbcol("PetrolPrice"))), order = c(0, 1, 1), seasonal = c(0, 1, 1), period = 12, mean = FALSE, hold = 12),
  list(name = "lakehuron_trend_200_mean", y = lh,
       x = cbind(trend = seq(1875, 1972) - 1920), order = c(2, 0, 0), period = 1, mean = TRUE, hold = 0,
       newx = cbind(trend = seq(1973, 1982) - 1920)),
  list(name = "lakehuron_trend_missing_101_mean", y = lh, missing = c(10, 11, 60),
       x = cbind(trend = seq(1875, 1972) - 1920), order = c(1, 0, 1), period = 1, mean = TRUE, hold = 0,
       newx = cbind(trend = seq(1973, 1982) - 1920)),
  list(name = "lakehuron_trend_110", y = lh,
       x = cbind(trend = seq(1875, 1972) - 1920, step1930 = as.numeric(seq(1875, 1972) >= 1930)), order = c(1, 1, 0), period = 1, mean = FALSE, hold = 0,
       newx = cbind(trend = seq(1973, 1982) - 1920, step1930 = rep(1, 10)))
)

ctl <- list(reltol = 1e-12, maxit = 5000)

fit_case <- function(cs) {
  y <- cs$y
  if (!is.null(cs$missing)) y[cs$missing] <- NA
  x <- cs$x
  n <- length(y)
  if (cs$hold > 0) {
    newx <- x[(n - cs$hold + 1):n, , drop = FALSE]
    y <- y[1:(n - cs$hold)]
    x <- x[1:(n - cs$hold), , drop = FALSE]
    n <- length(y)
  } else {
    newx <- cs$newx
  }
  period <- cs$period
  seasonal <- if (is.null(cs$seasonal)) c(0, 0, 0) else cs$seasonal
  yts <- ts(y, frequency = period)
  sea <- list(order = seasonal, period = period)
  lost <- cs$order[2] + seasonal[2]
  if (lost > 0 && anyNA(y)) {
    # Differenced with missing values: a missing value would hide every
    # difference it enters, so R estimates on the series itself (the
    # differencing in the state) with kappa = 1e9, as arima/make_arima.R
    # does; the estimates carry that prior's rounding noise.
    fit <- arima(yts, order = cs$order, seasonal = sea, xreg = x, include.mean = FALSE,
                 method = "ML", optim.control = ctl, kappa = 1e9)
    coefs <- coef(fit); loglik <- fit$loglik; sigma2 <- fit$sigma2
    fit6 <- arima(yts, order = cs$order, seasonal = sea, xreg = x, include.mean = FALSE,
                  method = "ML", optim.control = ctl)
    coef6 <- coef(fit6); loglik6 <- fit6$loglik
  } else if (lost == 0) {
    fit <- arima(yts, order = cs$order, seasonal = sea, xreg = x, include.mean = cs$mean,
                 method = "ML", optim.control = ctl)
    coefs <- coef(fit); loglik <- fit$loglik; sigma2 <- fit$sigma2
    coef6 <- coefs; loglik6 <- loglik
  } else {
    w <- yts; xw <- ts(x, frequency = period)
    if (cs$order[2] > 0) { w <- diff(w, differences = cs$order[2]); xw <- diff(xw, differences = cs$order[2]) }
    if (seasonal[2] > 0) { w <- diff(w, lag = period, differences = seasonal[2]); xw <- diff(xw, lag = period, differences = seasonal[2]) }
    xw <- as.matrix(xw); colnames(xw) <- colnames(x)
    fitw <- arima(w, order = c(cs$order[1], 0, cs$order[3]),
                  seasonal = list(order = c(seasonal[1], 0, seasonal[3]), period = period),
                  xreg = xw, include.mean = FALSE, method = "ML", optim.control = ctl)
    coefs <- coef(fitw); loglik <- fitw$loglik; sigma2 <- fitw$sigma2
    fit <- arima(yts, order = cs$order, seasonal = sea, xreg = x, include.mean = FALSE,
                 method = "ML", fixed = unname(coefs), transform.pars = FALSE, kappa = 1e9)
    fit6 <- arima(yts, order = cs$order, seasonal = sea, xreg = x, include.mean = FALSE,
                  method = "ML", optim.control = ctl)
    coef6 <- coef(fit6); loglik6 <- fit6$loglik
  }
  pr <- predict(fit, n.ahead = nrow(newx), newxreg = newx)
  cols <- lapply(seq_len(ncol(x)), function(j) arr(as.numeric(x[, j])))
  fcols <- lapply(seq_len(ncol(newx)), function(j) arr(as.numeric(newx[, j])))
  list(
    name = cs$name, y = arr(y), season = period,
    x_names = arr(colnames(x)), x = cols, x_future = fcols,
    order = arr(cs$order), seasonal = arr(seasonal), mean = cs$mean,
    coef_names = arr(names(coefs)), coef = arr(unname(coefs)),
    loglik = loglik, sigma2 = sigma2,
    coef_kappa_default = arr(unname(coef6)), loglik_kappa_default = loglik6,
    forecast = arr(as.numeric(pr$pred)), se = arr(as.numeric(pr$se))
  )
}

out <- lapply(cases, fit_case)
writeLines(to_json(list(
  source = paste("R", R.version$major, R.version$minor, "stats::arima(xreg =, method = \"ML\"), stats::predict(newxreg =); optim reltol 1e-12; differenced cases estimated on the differenced series and regressors, predicted with kappa 1e9"),
  cases = out)), "regarima/fits.json")
cat("regarima fixtures written\n")
