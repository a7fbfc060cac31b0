# Shared helpers for the reference-fixture scripts (base R only, no packages).
#
# JSON conventions:
#   * an atomic vector of length 1 is written as a scalar, any other length as
#     an array; wrap with arr() to force an array even for length 1;
#   * a named list is an object, an unnamed list an array;
#   * NA, NaN and +-Inf are written as null;
#   * doubles are written with the shortest of %.15g/%.16g/%.17g that reads
#     back to the identical double, so every number round-trips exactly.

arr <- function(x) structure(x, class = c("json_array", class(x)))

json_num <- function(v) {
  v <- as.double(v)
  out <- character(length(v))
  bad <- !is.finite(v)
  out[bad] <- "null"
  ok <- which(!bad)
  if (length(ok)) {
    s <- sprintf("%.15g", v[ok])
    need <- as.double(s) != v[ok]
    if (any(need)) s[need] <- sprintf("%.16g", v[ok][need])
    need <- as.double(s) != v[ok]
    if (any(need)) s[need] <- sprintf("%.17g", v[ok][need])
    out[ok] <- s
  }
  out
}

json_str <- function(s) {
  s <- gsub("\\", "\\\\", s, fixed = TRUE)
  s <- gsub("\"", "\\\"", s, fixed = TRUE)
  s <- gsub("\n", "\\n", s, fixed = TRUE)
  s <- gsub("\t", "\\t", s, fixed = TRUE)
  s <- gsub("\r", "\\r", s, fixed = TRUE)
  paste0("\"", s, "\"")
}

to_json <- function(x, indent = 0L) {
  pad <- strrep("  ", indent)
  pad1 <- strrep("  ", indent + 1L)
  force_arr <- inherits(x, "json_array")
  if (force_arr) class(x) <- setdiff(class(x), "json_array")
  if (is.null(x)) return("null")
  if (is.list(x)) {
    if (length(x) == 0L) return(if (is.null(names(x))) "[]" else "{}")
    items <- vapply(x, to_json, "", indent = indent + 1L)
    if (!is.null(names(x))) {
      body <- paste0(pad1, json_str(names(x)), ": ", items)
      return(paste0("{\n", paste(body, collapse = ",\n"), "\n", pad, "}"))
    }
    return(paste0("[\n", paste0(pad1, items, collapse = ",\n"), "\n", pad, "]"))
  }
  if (is.factor(x)) x <- as.character(x)
  vals <- if (is.character(x)) {
    ifelse(is.na(x), "null", json_str(x))
  } else if (is.logical(x)) {
    ifelse(is.na(x), "null", ifelse(x, "true", "false"))
  } else if (is.numeric(x)) {
    json_num(x)
  } else stop("to_json: unsupported type ", typeof(x))
  if (length(vals) == 1L && !force_arr) return(vals)
  if (length(vals) == 0L) return("[]")
  # numeric arrays on wrapped lines of 8 values, so diffs stay readable
  chunks <- split(vals, ceiling(seq_along(vals) / 8))
  lines <- vapply(chunks, paste, "", collapse = ", ")
  if (length(lines) == 1L) return(paste0("[", lines, "]"))
  paste0("[\n", paste0(pad1, lines, collapse = ",\n"), "\n", pad, "]")
}

write_json <- function(obj, path) {
  dir.create(dirname(path), showWarnings = FALSE, recursive = TRUE)
  con <- file(path, "w")
  on.exit(close(con))
  writeLines(to_json(obj), con)
  invisible(path)
}

# Run-time facts recorded in every fixture.
r_version <- function() R.version.string
r_machine <- function() {
  list(R_version = R.version.string,
       platform = R.version$platform,
       nproc = as.integer(tryCatch(system("nproc", intern = TRUE),
                                   error = function(e) NA)),
       cpu_model = tryCatch({
         l <- grep("^model name", readLines("/proc/cpuinfo"), value = TRUE)[1]
         trimws(sub("^model name\\s*:", "", l))
       }, error = function(e) NA_character_),
       BLAS = tryCatch(extSoftVersion()[["BLAS"]], error = function(e) NA_character_))
}

# Time series facts: start as c(year, period) and 1-based length.
ts_info <- function(x) {
  list(frequency = frequency(x), start = arr(as.numeric(start(x))),
       n = length(x))
}

# 1-based index into x of the first time point of ts y (y inside x's span).
index_in <- function(y, x) {
  as.integer(round((tsp(y)[1] - tsp(x)[1]) * frequency(x))) + 1L
}

# The datasets used across scripts (all from R's datasets package).
dataset_names <- c("AirPassengers", "co2", "UKgas", "USAccDeaths", "nottem",
                   "ldeaths", "mdeaths", "fdeaths", "JohnsonJohnson",
                   "UKDriverDeaths", "austres", "Nile", "LakeHuron",
                   "WWWusage")

get_dataset <- function(name) as.ts(get(name, envir = as.environment("package:datasets")))

# Median of per-call elapsed seconds over `reps` calls of f().
median_seconds <- function(f, reps) {
  f()  # warm-up
  t <- numeric(reps)
  for (i in seq_len(reps)) {
    t0 <- Sys.time()
    f()
    t[i] <- as.double(Sys.time()) - as.double(t0)
  }
  list(median_seconds = median(t), min_seconds = min(t), reps = reps)
}
