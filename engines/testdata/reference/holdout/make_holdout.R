# Hold-out evaluation fixtures.
#   holdout/<dataset>.json  last season held out; HoltWinters (additive and
#                           multiplicative, default optimisation) and the
#                           seasonal-naive forecast, with MASE of each
#   holdout/metrics.json    metric values for a tiny fixed vector
# Run from engines/testdata/reference: Rscript holdout/make_holdout.R
source("common.R")

mase <- function(y, f, train, m) mean(abs(y - f)) / mean(abs(diff(train, lag = m)))

for (nm in c("AirPassengers", "nottem", "UKgas", "USAccDeaths")) {
  x <- get_dataset(nm)
  m <- frequency(x); n <- length(x)
  train <- ts(as.double(x)[1:(n - m)], start = start(x), frequency = m)
  test <- as.double(x)[(n - m + 1):n]
  scale <- mean(abs(diff(as.double(train), lag = m)))
  snaive <- as.double(train)[(n - 2 * m + 1):(n - m)]
  methods <- list(
    list(name = "seasonal_naive",
         call = "f[h] = train[n_train - m + ((h - 1) %% m) + 1], h = 1..m",
         forecast = snaive))
  for (seasonal in c("additive", "multiplicative")) {
    hw <- suppressWarnings(HoltWinters(train, seasonal = seasonal))
    fc <- as.double(predict(hw, n.ahead = m))
    methods[[length(methods) + 1]] <- list(
      name = paste0("holtwinters_", seasonal),
      call = sprintf("predict(HoltWinters(train, seasonal = \"%s\"), n.ahead = %d)", seasonal, m),
      alpha = unname(hw$alpha), beta = unname(hw$beta), gamma = unname(hw$gamma),
      sse = hw$SSE,
      forecast = fc)
  }
  for (i in seq_along(methods)) {
    fc <- methods[[i]]$forecast
    methods[[i]]$forecast <- arr(fc)
    methods[[i]]$mae <- mean(abs(test - fc))
    methods[[i]]$mase <- mase(test, fc, as.double(train), m)
  }
  obj <- c(list(
    source = sprintf("%s; train = first n - frequency points of datasets::%s, test = last frequency points; stats::HoltWinters(train, seasonal = ...) default optimisation, predict(n.ahead = frequency); seasonal naive; MASE = mean(abs(test - f)) / mean(abs(diff(train, lag = frequency)))",
                     r_version(), nm),
    dataset = nm),
    ts_info(x),
    list(x = arr(as.double(x)),
         n_train = length(train), n_test = m,
         train_start = arr(as.numeric(start(train))),
         test = arr(test),
         mase_scale = scale,
         mase_scale_formula = "mean(abs(diff(train, lag = m)))  (in-sample seasonal-naive MAE of the training part)",
         methods = methods))
  # first test time as c(year, period)
  tt <- time(x)[n - m + 1]
  obj$test_first_time <- arr(c(floor(tt + 1e-8), round((tt - floor(tt + 1e-8)) * m) + 1))
  write_json(obj, file.path("holdout", paste0(nm, ".json")))
}

# ---------------------------------------------------------------------------
# metrics.json: a tiny fixed example. Errors are e = y - f (actual minus
# forecast); bias is reported as mean(f - y), so a positive bias means the
# forecasts were too high on average.
y <- c(10, 0, 12, 15, 9, 20, 14, 11)
f <- c(11, 1, 10, 15, 12, 18, 16, 9)
train <- c(8, 11, 9, 13, 10, 12, 14, 11, 12, 16)
m <- 2
e <- y - f
nz <- y != 0
metrics <- list(
  mae = list(value = mean(abs(e)), formula = "mean(|y - f|)"),
  rmse = list(value = sqrt(mean(e^2)), formula = "sqrt(mean((y - f)^2))"),
  mape = list(value = 100 * mean(abs(e[nz]) / abs(y[nz])),
              formula = "100 * mean(|y - f| / |y|) over points with y != 0 (zero actuals excluded)",
              n_used = sum(nz)),
  smape = list(value = mean(200 * abs(e) / (abs(y) + abs(f))),
               formula = "mean(200 * |y - f| / (|y| + |f|))  (M4 definition, percent; all points used)"),
  mase = list(value = mean(abs(e)) / mean(abs(diff(train, lag = m))),
              formula = "mean(|y - f|) / mean(|train[t] - train[t - m]|), t = m+1..n_train  (seasonal lag m)",
              m = m, scale = mean(abs(diff(train, lag = m)))),
  mase_m1 = list(value = mean(abs(e)) / mean(abs(diff(train, lag = 1))),
                 formula = "mean(|y - f|) / mean(|train[t] - train[t - 1]|)  (MASE with m = 1)",
                 m = 1, scale = mean(abs(diff(train, lag = 1)))),
  rmsse = list(value = sqrt(mean(e^2) / mean(diff(train, lag = 1)^2)),
               formula = "sqrt(mean((y - f)^2) / mean((train[t] - train[t - 1])^2)), t = 2..n_train  (M5 definition, lag 1)",
               scale = mean(diff(train, lag = 1)^2)),
  rmsse_seasonal = list(value = sqrt(mean(e^2) / mean(diff(train, lag = m)^2)),
                        formula = "sqrt(mean((y - f)^2) / mean((train[t] - train[t - m])^2))  (same with seasonal lag m)",
                        m = m, scale = mean(diff(train, lag = m)^2)),
  wape = list(value = sum(abs(e)) / sum(abs(y)), formula = "sum(|y - f|) / sum(|y|)  (a ratio, not percent)"),
  bias = list(value = mean(f - y),
              formula = "mean(f - y)  (positive = forecasts too high on average)"))
write_json(list(
  source = sprintf("%s; metric formulas evaluated in base R on the vectors below (see holdout/make_holdout.R)", r_version()),
  sign_convention = "error e = y - f (actual minus forecast); bias = mean(f - y), positive means over-forecast",
  actual = arr(y), forecast = arr(f), train = arr(train),
  metrics = metrics), file.path("holdout", "metrics.json"))
cat("holdout: wrote 5 files\n")
