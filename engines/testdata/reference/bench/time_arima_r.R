# R timings of stats::arima() on bench/monthly120.json (invented series,
# n = 120, m = 12), for arima_vs_r.sh: the form almanac's automatic choice
# picked (passed as arguments: p d q P D Q m constant, constant one of
# none, mean, drift) and the two fixed forms of the Go benchmarks. Each is
# timed as the median of `reps` calls (fit + predict 12 steps) after one
# warm-up call, by method "ML" (almanac's criterion) and by R's default
# "CSS-ML"; the mean wall and CPU time of a batch of 100 calls are printed
# (ms). Writes bench/arima_r_timings.json.
# Run from engines/testdata/reference: Rscript bench/time_arima_r.R 1 0 0 0 1 1 12 drift
source("common.R")
args <- commandArgs(trailingOnly = TRUE)
stopifnot(length(args) == 8)
auto <- list(order = as.integer(args[1:3]), seasonal = as.integer(args[4:6]), m = as.integer(args[7]), constant = args[8])

txt <- paste(readLines("bench/monthly120.json"), collapse = "\n")
nums <- regmatches(txt, regexpr("\"x\": \\[[^]]*\\]", txt))
x <- ts(as.numeric(strsplit(gsub("[^0-9eE.,+-]", "", sub("\"x\": ", "", nums)), ",")[[1]]), frequency = 12)
stopifnot(length(x) == 120)

fit_predict <- function(spec, method) {
  n <- length(x)
  xreg <- if (spec$constant == "drift") matrix(seq_len(n), ncol = 1) else NULL
  f <- arima(x, order = spec$order, seasonal = list(order = spec$seasonal, period = spec$m),
             include.mean = spec$constant == "mean", xreg = xreg, method = method)
  newx <- if (is.null(xreg)) NULL else matrix(n + 1:12, ncol = 1)
  predict(f, n.ahead = 12, newxreg = newx)
}

time_median <- function(f, reps) {
  f()
  ts <- numeric(reps)
  for (i in seq_len(reps)) {
    t0 <- proc.time()[["elapsed"]]
    f()
    ts[i] <- proc.time()[["elapsed"]] - t0
  }
  # proc.time has 1 ms resolution: also time the whole batch, wall and CPU
  p0 <- proc.time()
  for (i in seq_len(reps)) f()
  p1 <- proc.time()
  batch <- (p1[["elapsed"]] - p0[["elapsed"]]) / reps
  cpu <- (p1[["user.self"]] + p1[["sys.self"]] - p0[["user.self"]] - p0[["sys.self"]]) / reps
  c(median = median(ts), mean_batch = batch, cpu_batch = cpu)
}

specs <- list(
  auto = auto,
  airline = list(order = c(0L, 1L, 1L), seasonal = c(0L, 1L, 1L), m = 12L, constant = "none"),
  arma201 = list(order = c(2L, 0L, 1L), seasonal = c(0L, 0L, 0L), m = 12L, constant = "mean"))
out <- list()
for (nm in names(specs)) for (method in c("ML", "CSS-ML")) {
  tm <- time_median(function() fit_predict(specs[[nm]], method), 100)
  out[[paste(nm, method, sep = "_")]] <- list(
    form = sprintf("(%s)(%s)%d %s", paste(specs[[nm]]$order, collapse = ","), paste(specs[[nm]]$seasonal, collapse = ","), specs[[nm]]$m, specs[[nm]]$constant),
    method = method, seconds_median = tm[["median"]], seconds_mean_batch = tm[["mean_batch"]],
    cpu_seconds_mean_batch = tm[["cpu_batch"]])
}
writeLines(to_json(c(list(source = paste("R", R.version$major, R.version$minor, "stats::arima + predict(12), 100 calls")), out)), "bench/arima_r_timings.json")
for (k in names(out)) cat(sprintf("%-20s %8.3f %8.3f\n", k, 1000 * out[[k]]$seconds_mean_batch, 1000 * out[[k]]$cpu_seconds_mean_batch))
