# R timings for HoltWinters() (seasonal, SES and Holt forms), decompose() and
# stl() on two deterministic series.
# Writes bench/weekly156.json, bench/monthly60.json (the exact numbers, so Go
# benchmarks use the identical input) and bench/r_timings.json.
# Run from engines/testdata/reference: Rscript bench/time_r.R
source("common.R")

set.seed(1)
t <- 1:156
weekly <- ts(100 + 0.2 * t + 10 * sin(2 * pi * t / 52) + rnorm(156, sd = 2),
             start = c(2020, 1), frequency = 52)
set.seed(1)
t <- 1:60
monthly <- ts(50 + 0.5 * t + 8 * sin(2 * pi * t / 12) + rnorm(60, sd = 1.5),
              start = c(2015, 1), frequency = 12)

gen <- list(
  weekly156 = "set.seed(1); t <- 1:156; ts(100 + 0.2 * t + 10 * sin(2 * pi * t / 52) + rnorm(156, sd = 2), start = c(2020, 1), frequency = 52)",
  monthly60 = "set.seed(1); t <- 1:60; ts(50 + 0.5 * t + 8 * sin(2 * pi * t / 12) + rnorm(60, sd = 1.5), start = c(2015, 1), frequency = 12)")
series <- list(weekly156 = weekly, monthly60 = monthly)

for (nm in names(series)) {
  x <- series[[nm]]
  write_json(c(list(source = sprintf("%s; %s", r_version(), gen[[nm]]), name = nm),
               ts_info(x), list(x = arr(as.double(x)))),
             file.path("bench", paste0(nm, ".json")))
}

cases <- list(
  list(what = "HoltWinters(x) (additive, alpha/beta/gamma estimated by L-BFGS-B)",
       key = "holtwinters_optim_additive", reps = 50,
       f = function(x) HoltWinters(x)),
  list(what = "HoltWinters(x, seasonal = \"multiplicative\") (estimated)",
       key = "holtwinters_optim_multiplicative", reps = 50,
       f = function(x) HoltWinters(x, seasonal = "multiplicative")),
  list(what = "HoltWinters(x, alpha = 0.3, beta = 0.1, gamma = 0.2) (fixed, one pass)",
       key = "holtwinters_fixed_additive", reps = 500,
       f = function(x) HoltWinters(x, alpha = 0.3, beta = 0.1, gamma = 0.2)),
  list(what = "decompose(x) (additive)", key = "decompose_additive", reps = 1000,
       f = function(x) decompose(x)),
  list(what = "decompose(x, \"multiplicative\")", key = "decompose_multiplicative", reps = 1000,
       f = function(x) decompose(x, "multiplicative")),
  list(what = "predict(HoltWinters(x), 13) (additive, estimated, then a 13-step forecast)",
       key = "holtwinters_optim_additive_predict13", reps = 50,
       f = function(x) predict(HoltWinters(x), 13)),
  list(what = "HoltWinters(x, beta = FALSE, gamma = FALSE) (SES, alpha estimated by optimize)",
       key = "holtwinters_ses", reps = 200,
       f = function(x) HoltWinters(x, beta = FALSE, gamma = FALSE)),
  list(what = "HoltWinters(x, gamma = FALSE) (Holt, alpha/beta estimated by L-BFGS-B)",
       key = "holtwinters_holt", reps = 100,
       f = function(x) HoltWinters(x, gamma = FALSE)),
  list(what = "stl(x, s.window = \"periodic\")", key = "stl_periodic", reps = 300,
       f = function(x) stl(x, s.window = "periodic")),
  list(what = "stl(x, \"periodic\", robust = TRUE)", key = "stl_periodic_robust", reps = 200,
       f = function(x) stl(x, "periodic", robust = TRUE)))

loadavg <- function() tryCatch(readLines("/proc/loadavg", n = 1L), error = function(e) NA_character_)
load_start <- loadavg()
timings <- list()
for (nm in names(series)) {
  x <- series[[nm]]
  per <- list()
  for (cs in cases) {
    tm <- median_seconds(function() suppressWarnings(cs$f(x)), cs$reps)
    per[[cs$key]] <- c(list(call = cs$what), tm)
  }
  hw <- suppressWarnings(HoltWinters(x))
  per$holtwinters_optim_additive_result <- list(
    alpha = unname(hw$alpha), beta = unname(hw$beta), gamma = unname(hw$gamma),
    sse = hw$SSE)
  timings[[nm]] <- per
}
write_json(list(
  source = sprintf("%s; bench/time_r.R: median elapsed seconds per call (Sys.time around each call, one warm-up call first)", r_version()),
  machine = c(r_machine(), list(loadavg_start = load_start, loadavg_end = loadavg())),
  note = "single R process, no parallelism; the machine has 2 shared cores, so expect noise of tens of percent",
  series = timings), file.path("bench", "r_timings.json"))
cat("bench: wrote 3 files\n")
