# Writes seasonal_auto/ftest.json: for R datasets (and short cuts of some),
# the stable-seasonality F test that AutoSeasonal uses beside the seasonal
# strength, computed independently in R: the detrended values y - trend of
# stats::decompose (additive), a one-way analysis of variance by season
# position with stats::lm and stats::anova, and the 95% quantile of the F
# distribution with stats::qf. Also the seasonal strength by formula
# max(0, 1 - var(remainder) / var(seasonal + remainder)) (Wang, Smith &
# Hyndman 2006).
#
# Run from engines/testdata/reference: Rscript seasonal_auto/make_auto.R
source("common.R")

cases <- list(
  list(data = "AirPassengers", m = 12, n = 0),
  list(data = "AirPassengers", m = 12, n = 30),
  list(data = "USAccDeaths", m = 12, n = 0),
  list(data = "nottem", m = 12, n = 0),
  list(data = "co2", m = 12, n = 40),
  list(data = "WWWusage", m = 12, n = 0),
  list(data = "UKgas", m = 4, n = 0),
  list(data = "JohnsonJohnson", m = 4, n = 11),
  list(data = "Nile", m = 4, n = 0),
  list(data = "LakeHuron", m = 12, n = 0),
  list(data = "LakeHuron", m = 12, n = 30),
  list(data = "Nile", m = 12, n = 30)
)
out <- lapply(cases, function(c) {
  x <- as.numeric(get(c$data, envir = asNamespace("datasets")))
  if (c$n > 0) x <- x[seq_len(c$n)]
  d <- decompose(ts(x, frequency = c$m), type = "additive")
  det <- x - as.numeric(d$trend)
  pos <- factor((seq_along(x) - 1) %% c$m)
  ok <- !is.na(det)
  a <- anova(lm(det[ok] ~ pos[ok]))
  rem <- as.numeric(d$random); sea <- as.numeric(d$seasonal)
  list(name = if (c$n > 0) sprintf("%s[1:%d]", c$data, c$n) else c$data,
       season = c$m, y = arr(x),
       strength = max(0, 1 - var(rem[ok]) / var(sea[ok] + rem[ok])),
       f = a[["F value"]][1], df1 = a$Df[1], df2 = a$Df[2],
       f95 = qf(0.95, a$Df[1], a$Df[2]))
})
writeLines(to_json(list(source = paste("R", R.version$major, R.version$minor, "stats::decompose(type = \"additive\"), lm, anova, qf"), cases = out)), "seasonal_auto/ftest.json")
cat("seasonal_auto fixtures written\n")
