# Reference fixtures for the STL forecast: stl/forecast/<dataset>_<periodic|s7>.json
# Run from engines/testdata/reference: Rscript stl/make_stl_forecast.R
#
# For x and fit <- stl(x, s.window = <"periodic" | 7>) (not robust):
#   adjusted  a = x - seasonal                      (trend + remainder)
#   drift     a[n] + h * (a[n] - a[1]) / (n - 1)
#   ses       simple exponential smoothing of a as stats::HoltWinters(a,
#             beta = FALSE, gamma = FALSE) defines it: level starts at a[1],
#             SSE over a[2..n]. HoltWinters finds alpha with optimize() at
#             its default tolerance (about 1e-4), recorded as
#             ses.holtwinters_alpha; ses.alpha refines it with optimize() on
#             the same SSE at tol = 1e-12, and ses.level is HoltWinters' level
#             at that alpha.
#   forecast  for h = 1..2f: method(h) + seasonal[n - f + ((h - 1) %% f) + 1],
#             the seasonal of the same cycle position in the last cycle.
source("common.R")

series <- list(
  nottem = get_dataset("nottem"),
  co2 = get_dataset("co2"),
  UKgas = get_dataset("UKgas"),
  AirPassengers_log = log(get_dataset("AirPassengers")))
series_src <- c(nottem = "datasets::nottem", co2 = "datasets::co2",
                UKgas = "datasets::UKgas",
                AirPassengers_log = "log(datasets::AirPassengers)")

n_files <- 0
for (nm in names(series)) {
  x <- series[[nm]]
  f <- frequency(x)
  n <- length(x)
  for (sw in list("periodic", 7)) {
    fit <- stl(x, s.window = sw)
    seasonal <- as.double(fit$time.series[, "seasonal"])
    a <- as.double(x) - seasonal
    H <- 2 * f
    h <- seq_len(H)
    last_cycle <- seasonal[n - f + ((h - 1) %% f) + 1]

    drift <- a[n] + h * (a[n] - a[1]) / (n - 1)

    hw <- HoltWinters(a, beta = FALSE, gamma = FALSE)
    sse <- function(alpha) HoltWinters(a, alpha = alpha, beta = FALSE, gamma = FALSE)$SSE
    opt <- optimize(sse, c(0, 1), tol = 1e-12)
    hw2 <- HoltWinters(a, alpha = opt$minimum, beta = FALSE, gamma = FALSE)
    level <- unname(hw2$coefficients["a"])

    sw_txt <- if (is.character(sw)) "\"periodic\"" else as.character(sw)
    obj <- c(list(
      source = sprintf(paste0("%s; fit <- stats::stl(x, s.window = %s); a <- x - seasonal; ",
                              "drift of a; stats::HoltWinters(a, beta = FALSE, gamma = FALSE), ",
                              "alpha refined by optimize(tol = 1e-12); x = %s"),
                       r_version(), sw_txt, series_src[[nm]]),
      dataset = nm),
      ts_info(x),
      list(
        x = arr(as.double(x)),
        s_window = if (is.character(sw)) sw else sw,
        parameters = list(
          s_window = unname(fit$win["s"]), t_window = unname(fit$win["t"]),
          l_window = unname(fit$win["l"]), inner = fit$inner, outer = fit$outer),
        seasonal = arr(seasonal),
        adjusted = arr(a),
        h = H,
        last_cycle_seasonal = arr(last_cycle),
        drift = list(slope = (a[n] - a[1]) / (n - 1), adjusted_forecast = arr(drift),
                     forecast = arr(drift + last_cycle)),
        ses = list(holtwinters_alpha = unname(hw$alpha), holtwinters_sse = hw$SSE,
                   alpha = opt$minimum, sse = hw2$SSE, level = level,
                   forecast = arr(level + last_cycle))))
    tag <- if (is.character(sw)) "periodic" else sprintf("s%d", sw)
    write_json(obj, file.path("stl", "forecast", sprintf("%s_%s.json", nm, tag)))
    n_files <- n_files + 1
  }
}
cat("stl forecast: wrote", n_files, "files\n")
