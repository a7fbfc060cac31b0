# Writes data/<name>.json for every dataset the fixtures use, so that the
# Python scripts (and Go tests) read the very same numbers that R used.
# Run from engines/testdata/reference: Rscript data/dump_data.R
source("common.R")
for (nm in dataset_names) {
  x <- get_dataset(nm)
  obj <- c(list(source = sprintf("%s; datasets::%s (as.ts)", r_version(), nm),
                name = nm),
           ts_info(x),
           list(x = arr(as.double(x))))
  write_json(obj, file.path("data", paste0(nm, ".json")))
}
cat("data: wrote", length(dataset_names), "files\n")
