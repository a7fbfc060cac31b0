# Holt-Winters reference fixtures from R's stats::HoltWinters.
#   hw/fixed_<dataset>_<form>.json  fixed alpha/beta/gamma
#   hw/optim_<dataset>.json         R's default L-BFGS-B estimation
# Run from engines/testdata/reference: Rscript hw/make_hw.R
source("common.R")

ALPHA <- 0.3; BETA <- 0.1; GAMMA <- 0.2

# ---------------------------------------------------------------------------
# R's start-up, copied from the body of stats::HoltWinters (R 4.2.2) so that
# the exact numbers R uses are recorded.
r_start <- function(x, seasonal, beta = NULL, gamma = NULL, start.periods = 2) {
  f <- frequency(x)
  if (!is.null(gamma) && is.logical(gamma) && !gamma) {
    expsmooth <- !is.null(beta) && is.logical(beta) && !beta
    l.start <- if (expsmooth) x[1L] else x[2L]
    b.start <- if (is.null(beta) || !is.logical(beta) || beta) x[2L] - x[1L] else NULL
    return(list(start.time = 3 - expsmooth, l.start = l.start,
                b.start = b.start, s.start = NULL, trend_ma = NULL))
  }
  wind <- start.periods * f
  st <- decompose(ts(x[1L:wind], start = start(x), frequency = f), seasonal)
  dat <- na.omit(st$trend)
  cf <- coef(.lm.fit(x = cbind(1, seq_along(dat)), y = dat))
  b.start <- if (!is.null(beta) && is.logical(beta) && !beta) NULL else cf[2L]
  list(start.time = f + 1, l.start = cf[1L], b.start = b.start,
       s.start = st$figure, trend_ma = as.double(dat))
}

# Independent re-derivation of the same start values from the written-out
# formulas (documented in REFERENCE-METHODS.md); used only as a check.
formula_start <- function(x, seasonal) {
  f <- frequency(x); w <- as.double(x[1:(2 * f)])
  if (f %% 2 == 0) {
    h <- f / 2; pos <- (h + 1):(3 * h)
    T <- sapply(pos, function(j) (0.5 * w[j - h] + sum(w[(j - h + 1):(j + h - 1)]) + 0.5 * w[j + h]) / f)
  } else {
    h <- (f - 1) / 2; pos <- (h + 1):(2 * f - h)
    T <- sapply(pos, function(j) mean(w[(j - h):(j + h)]))
  }
  k <- seq_along(T)
  b <- sum((k - mean(k)) * (T - mean(T))) / sum((k - mean(k))^2)
  l <- mean(T) - b * mean(k)
  Tfull <- rep(NA_real_, 2 * f); Tfull[pos] <- T
  d <- if (seasonal == "additive") w - Tfull else w / Tfull
  fig <- sapply(1:f, function(i) mean(c(d[i], d[i + f]), na.rm = TRUE))
  fig <- if (seasonal == "additive") fig - mean(fig) else fig / mean(fig)
  list(l = l, b = b, s = fig)
}

# The C recursion of stats:::C_HoltWinters written out in R (check only).
r_recursion <- function(x, alpha, beta, gamma, seasonal, st) {
  f <- frequency(x); x <- as.double(x); n <- length(x)
  dotrend <- !is.logical(beta) || beta
  doseas <- !is.logical(gamma) || gamma
  if (!dotrend) beta <- 0
  if (!doseas) gamma <- 0
  start.time <- st$start.time
  len <- n - start.time + 1
  level <- numeric(len + 1); trend <- numeric(len + 1); season <- numeric(len + f)
  level[1] <- st$l.start
  if (dotrend) trend[1] <- st$b.start
  if (doseas) season[1:f] <- st$s.start
  xhat <- numeric(len); sse <- 0
  add <- seasonal == "additive"
  for (i in start.time:n) {
    i0 <- i - start.time + 2   # 1-based slot of the new level
    s0 <- i0 + f - 1           # 1-based slot of the new seasonal
    xh <- level[i0 - 1] + (if (dotrend) trend[i0 - 1] else 0)
    stmp <- if (doseas) season[s0 - f] else (if (add) 0 else 1)
    xh <- if (add) xh + stmp else xh * stmp
    xhat[i0 - 1] <- xh
    res <- x[i] - xh; sse <- sse + res * res
    level[i0] <- if (add) alpha * (x[i] - stmp) + (1 - alpha) * (level[i0 - 1] + trend[i0 - 1])
                 else alpha * (x[i] / stmp) + (1 - alpha) * (level[i0 - 1] + trend[i0 - 1])
    if (dotrend) trend[i0] <- beta * (level[i0] - level[i0 - 1]) + (1 - beta) * trend[i0 - 1]
    if (doseas) season[s0] <- if (add) gamma * (x[i] - level[i0]) + (1 - gamma) * stmp
                               else gamma * (x[i] / level[i0]) + (1 - gamma) * stmp
  }
  list(xhat = xhat, sse = sse, a = level[len + 1], b = trend[len + 1],
       s = if (doseas) season[len + 1:f] else NULL)
}

rel_diff <- function(a, b) max(abs(a - b) / pmax(1, abs(b)))

call_text <- function(alpha, beta, gamma, seasonal) {
  fmt <- function(v) if (is.logical(v)) as.character(v) else json_num(v)
  sprintf("HoltWinters(x, alpha = %s, beta = %s, gamma = %s, seasonal = \"%s\")",
          fmt(alpha), fmt(beta), fmt(gamma), seasonal)
}

fit_record <- function(x, hw, seasonal, st, n.ahead) {
  fit <- fitted(hw)
  cols <- colnames(fit)
  p <- predict(hw, n.ahead = n.ahead)
  co <- hw$coefficients
  list(
    start_periods = 2,
    start_time = st$start.time,
    initial = list(
      level = unname(st$l.start),
      trend = if (is.null(st$b.start)) NULL else unname(st$b.start),
      seasonal = if (is.null(st$s.start)) NULL else arr(unname(st$s.start)),
      trend_moving_average = if (is.null(st$trend_ma)) NULL else arr(st$trend_ma)),
    fitted = list(
      first_index = index_in(fit, x),
      first_time = arr(as.numeric(start(fit))),
      n = nrow(fit),
      xhat = arr(as.double(fit[, "xhat"])),
      level = arr(as.double(fit[, "level"])),
      trend = if ("trend" %in% cols) arr(as.double(fit[, "trend"])) else NULL,
      season = if ("season" %in% cols) arr(as.double(fit[, "season"])) else NULL),
    sse = hw$SSE,
    coefficients = list(
      a = unname(co["a"]),
      b = if ("b" %in% names(co)) unname(co["b"]) else NULL,
      s = if (any(grepl("^s[0-9]+$", names(co)))) arr(unname(co[grepl("^s[0-9]+$", names(co))])) else NULL),
    predict = list(n_ahead = n.ahead,
                   first_time = arr(as.numeric(start(p))),
                   values = arr(as.double(p[, "fit"]))))
}

# ---------------------------------------------------------------------------
# 1. Fixed parameters.
fixed_cases <- list(
  list("AirPassengers", "additive"), list("AirPassengers", "multiplicative"),
  list("UKgas", "additive"), list("UKgas", "multiplicative"),
  list("USAccDeaths", "additive"), list("USAccDeaths", "multiplicative"),
  list("nottem", "additive"), list("nottem", "multiplicative"),
  list("co2", "additive"), list("co2", "multiplicative"),
  list("JohnsonJohnson", "additive"), list("JohnsonJohnson", "multiplicative"),
  # variants without trend / without season (other start-up branch)
  list("AirPassengers", "additive", beta = FALSE, tag = "additive_notrend"),
  list("Nile", "additive", gamma = FALSE, tag = "trend_noseason"),
  list("Nile", "additive", beta = FALSE, gamma = FALSE, tag = "level_only"),
  list("WWWusage", "additive", gamma = FALSE, tag = "trend_noseason"))

n_fixed <- 0
for (cs in fixed_cases) {
  nm <- cs[[1]]; seasonal <- cs[[2]]
  x <- get_dataset(nm)
  alpha <- ALPHA
  beta <- if (!is.null(cs$beta)) cs$beta else BETA
  gamma <- if (!is.null(cs$gamma)) cs$gamma else GAMMA
  tag <- if (!is.null(cs$tag)) cs$tag else seasonal
  hw <- HoltWinters(x, alpha = alpha, beta = beta, gamma = gamma, seasonal = seasonal)
  st <- r_start(x, seasonal, beta = beta, gamma = gamma)
  # checks: our written-out recursion and start formulas reproduce R
  rec <- r_recursion(x, alpha, beta, gamma, seasonal, st)
  chk <- list(recursion_xhat_max_rel_diff = rel_diff(rec$xhat, as.double(fitted(hw)[, "xhat"])),
              recursion_sse_rel_diff = rel_diff(rec$sse, hw$SSE))
  if (!(is.logical(gamma) && !gamma)) {
    fs <- formula_start(x, seasonal)
    chk$formula_start_max_rel_diff <- rel_diff(c(fs$l, if (!is.null(st$b.start)) fs$b, fs$s),
                                               unname(c(st$l.start, st$b.start, st$s.start)))
  }
  stopifnot(all(unlist(chk) < 1e-10))
  f <- frequency(x)
  n.ahead <- if (f > 1) 2 * f else 10
  obj <- c(list(
    source = sprintf("%s; stats::%s; predict(hw, n.ahead = %d); x = datasets::%s",
                     r_version(), call_text(alpha, beta, gamma, seasonal), n.ahead, nm),
    dataset = nm),
    ts_info(x),
    list(seasonal = seasonal,
         alpha = alpha,
         beta = if (is.logical(beta)) beta else beta,
         gamma = if (is.logical(gamma)) gamma else gamma,
         x = arr(as.double(x))),
    fit_record(x, hw, seasonal, st, n.ahead),
    list(checks = chk))
  write_json(obj, file.path("hw", sprintf("fixed_%s_%s.json", nm, tag)))
  n_fixed <- n_fixed + 1
}
cat("hw: wrote", n_fixed, "fixed-parameter files\n")


# ---------------------------------------------------------------------------
# 2. Default optimisation (alpha, beta, gamma all estimated).
optim_sets <- c("AirPassengers", "co2", "UKgas", "USAccDeaths", "nottem",
                "ldeaths", "mdeaths", "fdeaths", "JohnsonJohnson",
                "UKDriverDeaths", "austres")
REPS <- 20
machine <- r_machine()
for (nm in optim_sets) {
  x <- get_dataset(nm)
  f <- frequency(x)
  forms <- if (all(x > 0)) c("additive", "multiplicative") else "additive"
  fits <- list()
  for (seasonal in forms) {
    warns <- character(0)
    hw <- withCallingHandlers(HoltWinters(x, seasonal = seasonal),
                              warning = function(w) { warns <<- c(warns, conditionMessage(w)); invokeRestart("muffleWarning") })
    st <- r_start(x, seasonal)
    # Re-run the same optim() call HoltWinters makes, to expose its report.
    # (the error function below is the one in HoltWinters' body, R 4.2.2)
    lenx <- length(x)
    err <- function(p) .C(stats:::C_HoltWinters, as.double(x), lenx,
                          as.double(max(min(p[1L], 1), 0)), as.double(max(min(p[2L], 1), 0)),
                          as.double(max(min(p[3L], 1), 0)), as.integer(st$start.time),
                          as.integer(!+(seasonal == "multiplicative")), as.integer(f),
                          1L, 1L, a = as.double(st$l.start), b = as.double(st$b.start),
                          s = as.double(st$s.start), SSE = as.double(0),
                          level = double(lenx - st$start.time + 2L),
                          trend = double(lenx - st$start.time + 2L),
                          seasonal = double(lenx - st$start.time + 1L + f))$SSE
    sol <- optim(c(alpha = 0.3, beta = 0.1, gamma = 0.1), err, method = "L-BFGS-B",
                 lower = c(0, 0, 0), upper = c(1, 1, 1))
    stopifnot(isTRUE(all.equal(unname(sol$par), unname(c(hw$alpha, hw$beta, hw$gamma)), tolerance = 1e-12)))
    # optim's built-in L-BFGS-B gradient, written out (see REFERENCE-METHODS.md):
    # central differences with ndeps = 1e-3, each side clipped to the bounds.
    lo <- c(0, 0, 0); up <- c(1, 1, 1)
    fd_grad <- function(p) vapply(1:3, function(i) {
      e1 <- 1e-3; x1 <- p; x1[i] <- p[i] + e1
      if (x1[i] > up[i]) { x1[i] <- up[i]; e1 <- up[i] - p[i] }
      e2 <- 1e-3; x2 <- p; x2[i] <- p[i] - e2
      if (x2[i] < lo[i]) { x2[i] <- lo[i]; e2 <- p[i] - lo[i] }
      (err(x1) - err(x2)) / (e1 + e2)
    }, 0)
    sol2 <- suppressWarnings(optim(c(alpha = 0.3, beta = 0.1, gamma = 0.1), err, fd_grad,
                                   method = "L-BFGS-B", lower = lo, upper = up))
    fd_identical <- identical(unname(sol2$par), unname(sol$par))
    tm <- median_seconds(function() suppressWarnings(HoltWinters(x, seasonal = seasonal)), REPS)
    rec <- fit_record(x, hw, seasonal, st, f)
    fits[[length(fits) + 1]] <- c(list(
      call = sprintf("HoltWinters(x, seasonal = \"%s\")", seasonal),
      seasonal = seasonal,
      alpha = unname(hw$alpha), beta = unname(hw$beta), gamma = unname(hw$gamma),
      optim = list(method = "L-BFGS-B",
                   start = list(alpha = 0.3, beta = 0.1, gamma = 0.1),
                   lower = arr(c(0, 0, 0)), upper = arr(c(1, 1, 1)),
                   control = "default (list())",
                   convergence = sol$convergence, message = sol$message,
                   fn_count = unname(sol$counts["function"]),
                   gr_count = unname(sol$counts["gradient"]),
                   warnings = arr(warns),
                   explicit_fd_gradient_gives_identical_par = fd_identical),
      timing = c(tm, list(what = "elapsed seconds per HoltWinters() call (Sys.time)"))),
      rec)
  }
  obj <- c(list(
    source = sprintf("%s; stats::HoltWinters(x, seasonal = ...) with default optimisation (optim L-BFGS-B on SSE); predict(hw, n.ahead = frequency(x)); x = datasets::%s",
                     r_version(), nm),
    dataset = nm),
    ts_info(x),
    list(x = arr(as.double(x)),
         multiplicative_skipped = if (length(forms) == 1) "series not strictly positive" else NULL,
         machine = machine,
         fits = fits))
  write_json(obj, file.path("hw", sprintf("optim_%s.json", nm)))
}
cat("hw: wrote", length(optim_sets), "optimised files\n")
