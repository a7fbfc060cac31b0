# Reference decompositions for MSTL (engines/mstl.go).
#
# R 4.2.2's base stats has no MSTL and Debian's statsmodels (0.13.5) has
# none either, so this script re-implements the loop of Bandara, Hyndman &
# Bergmeir (2021), "MSTL: A Seasonal-Trend Decomposition Algorithm for
# Time Series with Multiple Seasonal Patterns" (Algorithm 1), around R's
# stats::stl. The outside part of the check is stats::stl; the loop below
# is written here from the paper:
#
#   seasons sorted ascending, those with 2m > n dropped;
#   deseas <- y; S_j <- 0 for every season j;
#   repeat `iterate` times (default 2):
#     for each season j (shortest first):
#       deseas <- deseas + S_j
#       fit <- stl(ts(deseas, frequency = m_j), s.window = w_j)
#       S_j <- seasonal of fit;  deseas <- deseas - S_j
#   trend <- trend of the last fit;  remainder <- deseas - trend
#
# Seasonal windows w_j = 7 + 4j (j = 1, 2, …, in ascending season order;
# the paper's default, from memory), other stl settings R's defaults
# (not robust).
#
# Cases: two invented series (labelled invented; generated here, with their
# true components written beside them) and R's nottem with one season.
#
# Run from engines/testdata/reference: Rscript mstl/make_mstl.R
source("common.R")

mstl_loop <- function(y, seasons, windows, iterate = 2) {
  n <- length(y)
  o <- order(seasons)
  seasons <- seasons[o]; windows <- windows[o]
  keep <- 2 * seasons <= n
  seasons <- seasons[keep]; windows <- windows[keep]
  S <- matrix(0, n, length(seasons))
  deseas <- y
  for (it in seq_len(iterate)) {
    for (j in seq_along(seasons)) {
      deseas <- deseas + S[, j]
      fit <- stl(ts(deseas, frequency = seasons[j]), s.window = windows[j])
      S[, j] <- as.numeric(fit$time.series[, "seasonal"])
      deseas <- deseas - S[, j]
    }
  }
  trend <- as.numeric(fit$time.series[, "trend"])
  list(seasons = seasons, windows = windows, trend = trend,
       seasonal = lapply(seq_along(seasons), function(j) arr(S[, j])),
       remainder = deseas - trend)
}

cases <- list()

# Invented daily series, 3 years: trend, a weekday pattern, a yearly wave
# (period 365), Gaussian noise (sd 3).
set.seed(20260)
n <- 3 * 365
t <- 0:(n - 1)
trend <- 200 + 0.03 * t + 10 * sin(2 * pi * t / (3 * 365))
week <- c(-12, -5, 0, 3, 8, 15, -9)
weekly <- week[(t %% 7) + 1]
yearly <- 30 * sin(2 * pi * t / 365) + 10 * cos(4 * pi * t / 365)
y <- trend + weekly + yearly + rnorm(n, 0, 3)
r <- mstl_loop(y, c(7, 365), 7 + 4 * (1:2))
cases[[length(cases) + 1]] <- c(list(name = "invented_daily_week_year", invented = TRUE, y = arr(y),
  true_trend = arr(trend), true_seasonal = list(arr(weekly), arr(yearly)), iterate = 2), r)

# Invented hourly series, 6 weeks: daily and weekly cycles, noise sd 2.
set.seed(20261)
n <- 6 * 168
t <- 0:(n - 1)
trend <- 50 + 0.01 * t
daily <- 8 * sin(2 * pi * t / 24) + 3 * cos(4 * pi * t / 24)
wk <- c(0, 1, 1, 1, 2, 6, -11)
wkly <- wk[(t %/% 24) %% 7 + 1]
y <- trend + daily + wkly + rnorm(n, 0, 2)
r <- mstl_loop(y, c(24, 168), 7 + 4 * (1:2))
cases[[length(cases) + 1]] <- c(list(name = "invented_hourly_day_week", invented = TRUE, y = arr(y),
  true_trend = arr(trend), true_seasonal = list(arr(daily), arr(wkly)), iterate = 2), r)

# Three iterations on the daily series.
r <- mstl_loop(cases[[1]]$y, c(7, 365), 7 + 4 * (1:2), iterate = 3)
cases[[length(cases) + 1]] <- c(list(name = "invented_daily_week_year_iter3", invented = TRUE, y = cases[[1]]$y, iterate = 3), r)

# One season: R's nottem (monthly temperatures at Nottingham), window 11;
# MSTL is then STL.
y <- as.numeric(get("nottem", envir = asNamespace("datasets")))
r <- mstl_loop(y, 12, 11)
cases[[length(cases) + 1]] <- c(list(name = "nottem_single", invented = FALSE, y = arr(y), iterate = 2), r)

for (i in seq_along(cases)) {
  cases[[i]]$seasons <- arr(cases[[i]]$seasons)
  cases[[i]]$windows <- arr(cases[[i]]$windows)
  cases[[i]]$trend <- arr(cases[[i]]$trend)
  cases[[i]]$remainder <- arr(cases[[i]]$remainder)
}
writeLines(to_json(list(
  source = paste("R", R.version$major, R.version$minor, "stats::stl inside the MSTL loop of Bandara, Hyndman & Bergmeir (2021, Algorithm 1) written in mstl/make_mstl.R"),
  cases = cases)), "mstl/fits.json")
cat("mstl fixtures written\n")
