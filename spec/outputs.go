package spec

import (
	"regexp"
	"strings"
)

// OutputColumns is every column name the run folder's tables write besides
// the key columns (forecasts, components, seasonal_factors, problems,
// accuracy, choices, totals; schemas/tables.md documents each). A key column may
// not take any of these names, in any letter case, nor one matched by
// OutputColumnPattern: the tables would hold two columns of one name.
//
// The list belongs with the run folder's writer; it lives here because spec
// is the leaf every package imports. A test in pipeline checks it against
// the schemas the writer builds.
var OutputColumns = []string{
	// forecasts
	"method", "model", "period", "step", "value", "chosen", "interval_source",
	// components and seasonal_factors
	"decomposition", "form", "observed", "trend", "seasonal", "remainder", "adjusted",
	"position", "factor", "count", "season_length",
	// problems
	"stage", "severity", "code", "message",
	// accuracy
	"fold", "origin", "train_start", "train_periods", "test_periods",
	"mae", "rmse", "mape", "mape_zeros", "smape", "mase", "rmsse", "wape", "bias", "status",
	// choices
	"metric", "score", "runner_up", "runner_up_score", "folds", "demand_class", "adi", "cv2", "reason",
	// totals
	"lead_time", "first_period", "last_period", "total", "total_source",
}

// OutputColumnPattern matches the columns named per level or cycle: the
// interval bounds of forecasts (lower_80, upper_95, …), the quantiles of
// totals (quantile_95) and the seasonal component of each cycle of a
// calendar with several season lengths (seasonal_7, seasonal_365).
var OutputColumnPattern = regexp.MustCompile(`(?i)^(lower|upper|quantile|seasonal)_[0-9]+$`)

// IsOutputColumn reports whether a key column named name would collide
// with an output column.
func IsOutputColumn(name string) bool {
	for _, r := range OutputColumns {
		if strings.EqualFold(name, r) {
			return true
		}
	}
	return OutputColumnPattern.MatchString(name)
}
