# STL reference fixtures from R's stats::stl.
#   stl/<dataset>_<swindow>_<robust|nonrobust>.json
# Run from engines/testdata/reference: Rscript stl/make_stl.R
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
  windows <- list("periodic", 7)
  if (f == 12) windows <- c(windows, list(13))
  for (sw in windows) {
    for (robust in c(FALSE, TRUE)) {
      fit <- stl(x, s.window = sw, robust = robust)
      ts3 <- fit$time.series
      sw_txt <- if (is.character(sw)) "\"periodic\"" else as.character(sw)
      call <- sprintf("stl(x, s.window = %s, robust = %s)", sw_txt, robust)
      obj <- c(list(
        source = sprintf("%s; stats::%s; x = %s", r_version(), call, series_src[[nm]]),
        dataset = nm),
        ts_info(x),
        list(
          x = arr(as.double(x)),
          arguments_passed = list(s.window = if (is.character(sw)) sw else sw, robust = robust),
          # parameters exactly as R used them (fit$win, fit$deg, fit$jump, ...)
          parameters = list(
            periodic = is.character(sw),
            period = f,
            s_window = unname(fit$win["s"]), t_window = unname(fit$win["t"]),
            l_window = unname(fit$win["l"]),
            s_degree = unname(fit$deg["s"]), t_degree = unname(fit$deg["t"]),
            l_degree = unname(fit$deg["l"]),
            s_jump = unname(fit$jump["s"]), t_jump = unname(fit$jump["t"]),
            l_jump = unname(fit$jump["l"]),
            inner = fit$inner, outer = fit$outer),
          seasonal = arr(as.double(ts3[, "seasonal"])),
          trend = arr(as.double(ts3[, "trend"])),
          remainder = arr(as.double(ts3[, "remainder"])),
          weights = arr(as.double(fit$weights))))
      tag <- if (is.character(sw)) "periodic" else sprintf("s%d", sw)
      write_json(obj, file.path("stl", sprintf("%s_%s_%s.json", nm, tag,
                                               if (robust) "robust" else "nonrobust")))
      n_files <- n_files + 1
    }
  }
}
cat("stl: wrote", n_files, "files\n")
