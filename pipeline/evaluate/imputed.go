package evaluate

import (
	"fmt"
	"strings"

	"almanac/pipeline/runfolder"
)

// fill is one fold's imputation: a method that needs a complete series
// (engines.CompleteNeeder) had n of the of values of its training slice
// filled (forecast.Impute). The fold's test window is never filled: its
// actuals are scored as read, missing ones left out.
type fill struct {
	fold, n, of int
	how         string
}

// imputedProblems returns one problems row (stage backtest, code imputed)
// per entry whose training slices were filled on some fold, listing each
// fold's count.
func imputedProblems(key []string, entries []entryBacktest) []runfolder.Problem {
	var out []runfolder.Problem
	for _, eb := range entries {
		if len(eb.fills) == 0 {
			continue
		}
		parts := make([]string, len(eb.fills))
		total := 0
		for i, f := range eb.fills {
			parts[i] = fmt.Sprintf("fold %d: %d of %d by %s interpolation", f.fold, f.n, f.of, f.how)
			total += f.n
		}
		msg := fmt.Sprintf("%d missing values of training slices filled before fitting (the method needs a complete series; test windows are never filled): %s",
			total, strings.Join(parts, "; "))
		out = append(out, runfolder.Problem{Key: key, Stage: "backtest", Severity: "warning", Code: runfolder.CodeImputed, Method: eb.label, Message: msg})
	}
	return out
}
