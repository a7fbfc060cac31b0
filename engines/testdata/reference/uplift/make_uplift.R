# Reference values for the driver uplifts (engines/uplift.go, FitUplifts;
# the uplift method of engines/uplift_method.go), computed in base R from
# the definition written out in UpliftFit's doc comment, independently of
# the Go code:
#
#   baseline b_t (for a period t with some driver on and y observed): the
#   mean of y at t +- k*m, k = 1..4, over periods with no driver on and y
#   observed, when there are at least two; else (or with m < 2) the mean of
#   the 4 nearest such periods on each side;
#   uplift u_j = max(0, 1 + sum(v b (y - b)) / sum(v^2 b^2)) over the periods
#   where driver j is on alone and a baseline exists (v its value).
#
# Cases: R's Seatbelts (drivers, monthly, m = 12) with law (the 1983 seat
# belt law, 0/1) and an invented pulse driver (labelled invented: on in
# months 30, 31, 75, 120 with values 1, 0.5, 1, 1); R's beaver2 (temperature
# every 10 minutes, m = 1) with activ.
#
# Run from engines/testdata/reference: Rscript uplift/make_uplift.R
source("common.R")

sb <- get("Seatbelts", envir = asNamespace("datasets"))
bv <- get("beaver2", envir = asNamespace("datasets"))

uplifts <- function(y, x, m) {
  n <- length(y)
  anyOn <- apply(x != 0, 1, any)
  usable <- function(s) s >= 1 & s <= n & !anyOn[pmax(pmin(s, n), 1)] & !is.na(y[pmax(pmin(s, n), 1)])
  base <- rep(NA_real_, n)
  for (t in which(anyOn & !is.na(y))) {
    b <- NA_real_
    if (m >= 2) {
      s <- c(rbind(t - (1:4) * m, t + (1:4) * m))
      s <- s[usable(s)]
      if (length(s) >= 2) b <- mean(y[s])
    }
    if (is.na(b)) {
      left <- rev(seq_len(t - 1)); left <- left[usable(left)]; left <- head(left, 4)
      right <- if (t < n) (t + 1):n else integer(0); right <- right[usable(right)]; right <- head(right, 4)
      s <- c(left, right)
      if (length(s) > 0) b <- mean(y[s])
    }
    base[t] <- b
  }
  u <- rep(1, ncol(x)); cnt <- rep(0, ncol(x))
  for (j in seq_len(ncol(x))) {
    alone <- x[, j] != 0 & !is.na(base) & rowSums(x[, -j, drop = FALSE] != 0) == 0
    v <- x[alone, j]; b <- base[alone]; yy <- y[alone]
    if (sum(alone) > 0) { u[j] <- max(0, 1 + sum(v * b * (yy - b)) / sum(v^2 * b^2)); cnt[j] <- sum(alone) }
  }
  list(u = u, periods = cnt)
}

pulse <- rep(0, nrow(sb)); pulse[c(30, 31, 75, 120)] <- c(1, 0.5, 1, 1)
cases <- list(
  list(name = "seatbelts_drivers_law_pulse", y = as.numeric(sb[, "drivers"]),
       x = cbind(law = as.numeric(sb[, "law"]), pulse = pulse), m = 12),
  list(name = "beaver2_temp_activ", y = bv$temp, x = cbind(activ = as.numeric(bv$activ)), m = 1)
)
out <- lapply(cases, function(cs) {
  r <- uplifts(cs$y, cs$x, cs$m)
  list(name = cs$name, y = arr(cs$y), season = cs$m, x_names = arr(colnames(cs$x)),
       x = lapply(seq_len(ncol(cs$x)), function(j) arr(as.numeric(cs$x[, j]))),
       uplift = arr(r$u), periods = arr(r$periods))
})
writeLines(to_json(list(
  source = paste("R", R.version$major, R.version$minor, "base R; the uplift definition of engines/uplift.go written out independently"),
  cases = out)), "uplift/uplifts.json")
cat("uplift fixtures written\n")
