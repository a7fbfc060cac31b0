# Reference fits for the regression_arima method (engines/regression_arima.go),
# made with R's stats::arima(xreg = ...) (method "ML") and
# stats::predict(newxreg = ...).
#
# The method chooses its ARIMA orders (and the number of Fourier harmonics)
# itself; R is given the orders and regressors the method chose on the same
# data (written below by hand from the method's model column; the Go test
# checks that the method still chooses them) and fits the same model, so the
# comparison is of the estimates, the forecasts and their standard errors.
# Regressors: the drivers, then sin/cos pairs sin(2*pi*k*t/m), cos(...) for
# k = 1..K over t = 0..n-1 (and n.. over the horizon), the last sine left out
# when 2K = m (it is zero at whole t).
#
# Datasets (R datasets): beaver2 (body temperature of a beaver every 10
# minutes, with activ = 1 when it was active outside the retreat; R's
# ?beavers fits arima(temp, xreg = activ)), Seatbelts (UK drivers killed or
# seriously injured, monthly 1969-1984; law = 1 from February 1983).
#
# Differenced models: as in make_regarima.R (the estimates of the exact
# differenced likelihood, or kappa = 1e9 when values are missing); the
# differenced fit starts from conditional-sum-of-squares estimates
# ("CSS-ML": the final estimates are exact ML), because from R's default
# start the daily case stops with a non-finite finite-difference.
#
# Run from engines/testdata/reference: Rscript regarima/make_method.R
source("common.R")

sb <- get("Seatbelts", envir = asNamespace("datasets"))
sbcol <- function(nm) as.numeric(sb[, nm])
bv <- get("beaver2", envir = asNamespace("datasets"))

fourier <- function(m, K, t) {
  cols <- list(); nm <- character()
  for (k in 1:K) {
    if (!(2 * K == m && k == K)) {
      cols[[length(cols) + 1]] <- sin(2 * pi * ((k * t) %% m) / m); nm <- c(nm, sprintf("sin%d_%d", k, m))
    }
    cols[[length(cols) + 1]] <- cos(2 * pi * ((k * t) %% m) / m); nm <- c(nm, sprintf("cos%d_%d", k, m))
  }
  x <- do.call(cbind, cols); colnames(x) <- nm; x
}

# Invented daily series (labelled invented; the series of mstl/make_mstl.R,
# same generator and set.seed(20260)): 3 years, trend, a weekday pattern, a
# yearly wave, N(0, 3^2) noise; plus an invented promotion driver (on when
# t %% 29 is 3 or 4, +25). Seasons 7 and 365: the weekly cycle in the
# seasonal ARIMA, the yearly one as Fourier terms.
set.seed(20260)
nd <- 3 * 365
td <- 0:(nd - 1)
week <- c(-12, -5, 0, 3, 8, 15, -9)
promo <- as.numeric(td %% 29 %in% c(3, 4))
yd <- 200 + 0.03 * td + 10 * sin(2 * pi * td / (3 * 365)) + week[(td %% 7) + 1] +
  30 * sin(2 * pi * td / 365) + 10 * cos(4 * pi * td / 365) + rnorm(nd, 0, 3) + 25 * promo

# The orders and harmonics below are those the method chose (its model
# column); see regression_arima_reference_test.go.
cases <- list(
  list(name = "beaver2_temp_activ", y = bv$temp, drivers = cbind(activ = bv$activ),
       seasons = c(1), fourier_above = 24, K = 0, order = c(2, 0, 0), seasonal = c(0, 0, 0), period = 1, mean = TRUE, hold = 10),
  list(name = "seatbelts_drivers_law_fourier12", y = sbcol("drivers"), drivers = cbind(law = sbcol("law")),
       seasons = c(12), fourier_above = 11, K = 5, order = c(1, 1, 1), seasonal = c(0, 0, 0), period = 1, mean = FALSE, hold = 12),
  list(name = "seatbelts_drivers_law_missing", y = sbcol("drivers"), missing = c(15, 60, 61, 150, 171), drivers = cbind(law = sbcol("law")),
       seasons = c(12), fourier_above = 24, K = 0, order = c(1, 0, 1), seasonal = c(0, 1, 2), period = 12, mean = FALSE, hold = 12),
  list(name = "invented_daily_promo_fourier365", y = yd, drivers = cbind(promo = promo),
       seasons = c(7, 365), fourier_above = 24, K = 2, order = c(2, 0, 1), seasonal = c(1, 1, 1), period = 7, mean = FALSE, hold = 14)
)

ctl <- list(reltol = 1e-12, maxit = 5000)

fit_case <- function(cs) {
  y <- cs$y
  if (!is.null(cs$missing)) y[cs$missing] <- NA
  N <- length(y)
  n <- N - cs$hold
  d <- cs$drivers
  x <- d
  if (cs$K > 0) x <- cbind(d, fourier(cs$seasons[length(cs$seasons)], cs$K, 0:(N - 1)))
  newx <- x[(n + 1):N, , drop = FALSE]
  x <- x[1:n, , drop = FALSE]
  dtrain <- y[1:n]
  period <- cs$period
  seasonal <- cs$seasonal
  yts <- ts(dtrain, frequency = period)
  sea <- list(order = seasonal, period = period)
  lost <- cs$order[2] + seasonal[2]
  if (lost > 0 && anyNA(dtrain)) {
    fit <- arima(yts, order = cs$order, seasonal = sea, xreg = x, include.mean = FALSE,
                 method = "ML", optim.control = ctl, kappa = 1e9)
    coefs <- coef(fit)
  } else if (lost == 0) {
    fit <- arima(yts, order = cs$order, seasonal = sea, xreg = x, include.mean = cs$mean,
                 method = "ML", optim.control = ctl)
    coefs <- coef(fit)
  } else {
    w <- yts; xw <- ts(x, frequency = period)
    if (cs$order[2] > 0) { w <- diff(w, differences = cs$order[2]); xw <- diff(xw, differences = cs$order[2]) }
    if (seasonal[2] > 0) { w <- diff(w, lag = period, differences = seasonal[2]); xw <- diff(xw, lag = period, differences = seasonal[2]) }
    xw <- as.matrix(xw); colnames(xw) <- colnames(x)
    fitw <- arima(w, order = c(cs$order[1], 0, cs$order[3]),
                  seasonal = list(order = c(seasonal[1], 0, seasonal[3]), period = period),
                  xreg = xw, include.mean = FALSE, method = "CSS-ML", optim.control = ctl)
    coefs <- coef(fitw)
    fit <- arima(yts, order = cs$order, seasonal = sea, xreg = x, include.mean = FALSE,
                 method = "ML", fixed = unname(coefs), transform.pars = FALSE, kappa = 1e9)
  }
  pr <- predict(fit, n.ahead = cs$hold, newxreg = newx)
  list(
    name = cs$name, y = arr(y[1:n]), seasons = arr(cs$seasons), fourier_above = cs$fourier_above,
    driver_names = arr(colnames(d)),
    drivers = lapply(seq_len(ncol(d)), function(j) arr(as.numeric(d[, j]))),
    harmonics = cs$K, x_names = arr(colnames(x)),
    order = arr(cs$order), seasonal = arr(seasonal), period = period, mean = cs$mean,
    coef_names = arr(names(coefs)), coef = arr(unname(coefs)),
    loglik = fit$loglik, sigma2 = fit$sigma2,
    forecast = arr(as.numeric(pr$pred)), se = arr(as.numeric(pr$se))
  )
}

out <- lapply(cases, fit_case)
writeLines(to_json(list(
  source = paste("R", R.version$major, R.version$minor, "stats::arima(xreg =, method = \"ML\"), stats::predict(newxreg =); optim reltol 1e-12; at the orders the regression_arima method chose"),
  cases = out)), "regarima/method.json")
cat("regression_arima method fixtures written\n")
