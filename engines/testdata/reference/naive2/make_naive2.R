# Naive2 (the M-competition benchmark) computed with R's stats, as the
# reference for engines/naive2_test.go. Run from engines/testdata/reference:
#   Rscript naive2/make_naive2.R
# The seasonality test is the 90% lag-m autocorrelation test with Bartlett's
# band (as in the M4 organisers' benchmark code; from memory), needing at
# least 3 seasons; the factors are stats::decompose(type = "multiplicative")'s
# figure; the forecast is the last value divided by its factor, times the
# factor of each forecast period. Writes naive2/<name>_m<m>.json.
source("common.R")

seasonal <- function(x, m) {
  n <- length(x)
  if (m < 2 || n < 3 * m || any(x <= 0)) return(FALSE)
  r <- stats::acf(x, lag.max = m, plot = FALSE)$acf[-1, 1, 1]
  limit <- 1.6448536269514722 / sqrt(n) * sqrt(cumsum(c(1, 2 * r^2)))
  abs(r[m]) > limit[m]
}

naive2 <- function(x, m, h) {
  n <- length(x)
  if (!seasonal(x, m)) return(list(seasonal = FALSE, forecast = rep(x[n], h)))
  fig <- stats::decompose(stats::ts(x, frequency = m), type = "multiplicative")$figure
  pos <- function(t) ((t - 1) %% m) + 1
  level <- x[n] / fig[pos(n)]
  list(seasonal = TRUE, factors = arr(fig), forecast = level * fig[pos(n + seq_len(h))])
}

cases <- list(
  list("AirPassengers", 12), list("UKgas", 4), list("USAccDeaths", 12),
  list("nottem", 12), list("JohnsonJohnson", 4), list("co2", 12),
  list("Nile", 4), list("WWWusage", 12), list("LakeHuron", 1)
)
for (cs in cases) {
  name <- cs[[1]]; m <- cs[[2]]
  x <- as.numeric(get(name, envir = asNamespace("datasets")))
  h <- 2 * max(m, 4)
  r <- naive2(x, m, h)
  out <- c(list(source = paste0(R.version.string, "; datasets::", name,
                                "; seasonality test and stats::decompose as in naive2/make_naive2.R"),
                name = name, season = m, h = h), r)
  write_json(out, file.path("naive2", sprintf("%s_m%d.json", name, m)))
  cat(name, m, "seasonal:", r$seasonal, "\n")
}
