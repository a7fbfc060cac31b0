# Reference fixtures for the classical decomposition engine (engines/classical.go).
#
# For each dataset below (R's datasets package, plus one invented weekly
# series) and each type, runs
# stats::decompose -- the reference implementation of classical decomposition
# by centred moving averages -- and writes
#   decompose/<dataset>_<type>.json
# with fields: source, generated_by, frequency, x, trend, seasonal, random,
# figure. NA is written as null.
#
# "AirPassengers_gaps" is AirPassengers with a few values set to NA, to pin
# down how missing values travel through the moving average and the factor
# averages. stats::decompose itself refuses a series with internal NAs (its
# na.omit.ts check stops), so for this one input the script runs the steps of
# stats::decompose one by one, as written in its R source: trend by
# stats::filter (NA for any window holding an NA), per-position
# mean(na.rm = TRUE), then normalisation. decompose_steps() below is that code.
#
# Base R only. Run from engines/testdata/reference:
#   Rscript decompose.R
source("common.R")

gap_index <- c(5L, 30L, 31L, 100L, 141L)

inputs <- list(
  AirPassengers = list(x = get_dataset("AirPassengers"), expr = "datasets::AirPassengers"),
  nottem        = list(x = get_dataset("nottem"),        expr = "datasets::nottem"),
  UKgas         = list(x = get_dataset("UKgas"),         expr = "datasets::UKgas"),
  USAccDeaths   = list(x = get_dataset("USAccDeaths"),   expr = "datasets::USAccDeaths"),
  # invented weekly series (season 52), the same expression as bench/time_r.R
  weekly156 = local({
    expr <- "set.seed(1); t <- 1:156; ts(100 + 0.2 * t + 10 * sin(2 * pi * t / 52) + rnorm(156, sd = 2), start = c(2020, 1), frequency = 52)"
    list(x = eval(parse(text = expr)), expr = sprintf("{%s}", expr))
  }),
  AirPassengers_gaps = local({
    x <- get_dataset("AirPassengers")
    x[gap_index] <- NA
    list(x = x, expr = sprintf("x <- datasets::AirPassengers; x[c(%s)] <- NA; x",
                               paste(gap_index, collapse = ", ")))
  })
)

# The body of stats::decompose (R 4.2.2) without its na.omit length check.
decompose_steps <- function(x, type) {
  l <- length(x)
  f <- frequency(x)
  filter <- if (!f %% 2) c(0.5, rep_len(1, f - 1), 0.5) / f else rep_len(1, f) / f
  trend <- stats::filter(x, filter)
  season <- if (type == "additive") x - trend else x / trend
  periods <- l %/% f
  index <- seq.int(1L, l, by = f) - 1L
  figure <- numeric(f)
  for (i in 1L:f) figure[i] <- mean(season[index + i], na.rm = TRUE)
  figure <- if (type == "additive") figure - mean(figure) else figure / mean(figure)
  seasonal <- ts(rep(figure, periods + 1)[seq_len(l)], start = start(x), frequency = f)
  list(trend = trend, seasonal = seasonal, figure = figure,
       random = if (type == "additive") x - seasonal - trend else x / seasonal / trend)
}

# On complete data the steps must give exactly what stats::decompose gives.
for (type in c("additive", "multiplicative")) {
  a <- decompose_steps(get_dataset("AirPassengers"), type)
  b <- stats::decompose(get_dataset("AirPassengers"), type = type)
  stopifnot(identical(a$figure, b$figure), identical(a$trend, b$trend),
            identical(a$seasonal, b$seasonal), identical(a$random, b$random))
}

n_written <- 0L
for (nm in names(inputs)) {
  x <- inputs[[nm]]$x
  for (type in c("additive", "multiplicative")) {
    if (anyNA(x)) {
      d <- decompose_steps(x, type)
      src <- sprintf("%s steps of stats::decompose (stats::filter, mean(na.rm=TRUE)) on %s, type=\"%s\"",
                     r_version(), inputs[[nm]]$expr, type)
    } else {
      d <- stats::decompose(x, type = type)
      src <- sprintf("%s stats::decompose(%s, type=\"%s\")", r_version(), inputs[[nm]]$expr, type)
    }
    obj <- list(
      source = src,
      generated_by = "engines/testdata/reference/decompose.R",
      frequency = frequency(x),
      x = arr(as.double(x)),
      trend = arr(as.double(d$trend)),
      seasonal = arr(as.double(d$seasonal)),
      random = arr(as.double(d$random)),
      figure = arr(as.double(d$figure))
    )
    write_json(obj, file.path("decompose", sprintf("%s_%s.json", nm, type)))
    n_written <- n_written + 1L
  }
}
cat("decompose: wrote", n_written, "files\n")
