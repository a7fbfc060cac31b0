# Invented monthly series for the arima benchmarks (bench/monthly120.json):
# trend + sine season + AR(1) noise, n = 120, m = 12. Run from
# engines/testdata/reference: Rscript bench/make_monthly120.R
source("common.R")
set.seed(120)
t <- 1:120
x <- 100 + 0.3 * t + 10 * sin(2 * pi * t / 12) + as.numeric(arima.sim(list(ar = 0.5), n = 120, sd = 2))
writeLines(to_json(list(
  source = paste("R", R.version$major, R.version$minor, "invented: set.seed(120); 100 + 0.3*t + 10*sin(2*pi*t/12) + arima.sim(list(ar = 0.5), n = 120, sd = 2)"),
  name = "monthly120", frequency = 12, start = arr(c(2010, 1)), n = 120, x = arr(x))), "bench/monthly120.json")
