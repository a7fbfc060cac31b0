# The R side of pipeline/bench/vs_r.sh: the seven methods of the almanac
# spec that script writes, computed with base R and the stats package for
# every series of an almanac panel CSV (columns period,region,item,units).
#
#   Rscript pipeline/bench/vs_r.R PANEL.csv [--by-method] [--check KEYS.txt OUT.csv]
#
# Prints its timings to stdout as one JSON object per line:
#   {"part":"read","seconds":...}        read.csv of the panel
#   {"part":"split","seconds":...}       order by key and period, split by key
#   {"part":"loop","seconds":...}        the seven forecasts of every series
#   {"series":...,"failures":...,"warnings":...}  of the loop: a failure is
#                                        an error (no forecast), a warning
#                                        e.g. optim's line-search complaint
# and with --by-method, after the loop:
#   {"part":"method","method":"...","seconds":...,"failures":...,
#    "warnings":...}                     one method alone over every series,
#                                        timed in a second pass (counts from
#                                        the loop)
# With --check, KEYS.txt holds region/item keys, one a line; their forecasts
# are written to OUT.csv (key,method,step,value) at full precision so that
# the shell script can compare them with almanac's.
#
# Base R and stats only; one R process (R runs this single-threaded).

usage <- "usage: Rscript vs_r.R PANEL.csv [--by-method] [--check KEYS.txt OUT.csv]"
args <- commandArgs(trailingOnly = TRUE)
if (length(args) < 1L) stop(usage)
panel <- args[1L]
by_method <- FALSE
check <- NULL
rest <- args[-1L]
while (length(rest) > 0L) {
  if (rest[1L] == "--by-method") {
    by_method <- TRUE
    rest <- rest[-1L]
  } else if (rest[1L] == "--check" && length(rest) >= 3L) {
    check <- rest[2:3]
    rest <- rest[-(1:3)]
  } else {
    stop(usage)
  }
}
m <- 52L  # season length (weekly panel)
h <- 13L  # horizon
steps <- seq_len(h)
now <- function() proc.time()[["elapsed"]]
say <- function(...) cat(..., "\n", sep = "")

# Forecast functions: each takes a ts of frequency m and returns h values.
fc_snaive <- function(x) {
  n <- length(x)
  as.numeric(x)[n - m + (steps - 1L) %% m + 1L]
}
fc_naive <- function(x) rep(as.numeric(x)[length(x)], h)
fc_drift <- function(x) {
  n <- length(x)
  x <- as.numeric(x)
  x[n] + steps * (x[n] - x[1L]) / (n - 1)
}
fc_mean <- function(x) rep(mean(x), h)
# Classical additive decomposition (stats::decompose), then the ordinary
# least-squares line through the seasonally adjusted series over t = 1..n,
# evaluated at t = n+1..n+h, plus the seasonal figure of each future
# position; decompose's figure[i] is position i counted from the series'
# first period, so period t takes figure[(t - 1) %% m + 1].
fc_classical <- function(x) {
  n <- length(x)
  dc <- decompose(x, type = "additive")
  a <- as.numeric(x) - as.numeric(dc$seasonal)
  t <- seq_len(n)
  tbar <- mean(t)
  abar <- mean(a)
  slope <- sum((t - tbar) * (a - abar)) / sum((t - tbar)^2)
  future <- n + steps
  abar + slope * (future - tbar) + dc$figure[(future - 1L) %% m + 1L]
}
# stats::HoltWinters fixes its initial states from the first seasons
# (start.periods = 2, a decompose of them) and fits only the weights by
# optim (L-BFGS-B); almanac also fits the initial states, so these two are
# not expected to agree value for value.
fc_hw <- function(x) {
  as.numeric(predict(HoltWinters(x, seasonal = "additive"), n.ahead = h))
}
fc_ses <- function(x) {
  as.numeric(predict(HoltWinters(x, beta = FALSE, gamma = FALSE), n.ahead = h))
}
methods <- list(
  seasonal_naive = fc_snaive, naive = fc_naive, drift = fc_drift,
  mean = fc_mean, classical = fc_classical, holt_winters = fc_hw, ses = fc_ses
)
nmeth <- length(methods)

t0 <- now()
d <- read.csv(panel, colClasses = c("character", "character", "character", "numeric"))
t1 <- now()
d <- d[order(d$region, d$item, d$period), ]
key <- paste(d$region, d$item, sep = "/")
series <- lapply(split(d$units, factor(key, levels = unique(key))),
                 function(v) ts(v, frequency = m))
t2 <- now()

ns <- length(series)
fc <- array(NA_real_, c(ns, nmeth, h), list(names(series), names(methods), NULL))
failures <- warned <- integer(nmeth)
j <- 0L
count_warning <- function(w) {
  warned[j] <<- warned[j] + 1L
  invokeRestart("muffleWarning")
}
t3 <- now()
for (i in seq_len(ns)) {
  x <- series[[i]]
  for (j in seq_len(nmeth)) {
    r <- withCallingHandlers(tryCatch(methods[[j]](x), error = function(e) NULL),
                             warning = count_warning)
    if (is.null(r)) failures[j] <- failures[j] + 1L else fc[i, j, ] <- r
  }
}
t4 <- now()

say(sprintf('{"part":"read","seconds":%.3f}', t1 - t0))
say(sprintf('{"part":"split","seconds":%.3f}', t2 - t1))
say(sprintf('{"part":"loop","seconds":%.3f}', t4 - t3))
say(sprintf('{"series":%d,"failures":%d,"warnings":%d}', ns, sum(failures), sum(warned)))

# Second pass, for the breakdown only: each method alone over every series
# (proc.time counts milliseconds, too coarse to time one call).
if (by_method) for (j in seq_len(nmeth)) {
  f <- methods[[j]]
  s <- now()
  for (i in seq_len(ns)) suppressWarnings(tryCatch(f(series[[i]]), error = function(e) NULL))
  say(sprintf('{"part":"method","method":"%s","seconds":%.3f,"failures":%d,"warnings":%d}',
              names(methods)[j], now() - s, failures[j], warned[j]))
}

if (!is.null(check)) {
  keys <- readLines(check[1L])
  keys <- keys[nzchar(keys)]
  out <- file(check[2L], "w")
  writeLines("key,method,step,value", out)
  for (k in keys) {
    if (!k %in% dimnames(fc)[[1L]]) stop("no series ", k)
    for (j in names(methods)) {
      writeLines(sprintf("%s,%s,%d,%.17g", k, j, steps, fc[k, j, ]), out)
    }
  }
  close(out)
}
