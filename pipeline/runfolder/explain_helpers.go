package runfolder

import (
	"encoding/json"
	"fmt"
	"sort"
)

// Accessors used by the explain command: finding one series' rows in a
// sorted table, listing the series a table holds, and the evaluation part
// of the canonical spec.

// EvalSpec is the evaluation part of the canonical spec: decomposition,
// backtest, selection and intervals. A nil pointer means the spec has no
// such section.
type EvalSpec struct {
	Decomposition struct {
		Method  string `json:"method"`
		Form    string `json:"form"`
		Average string `json:"average"`
	} `json:"decomposition"`
	Backtest *struct {
		Folds        int    `json:"folds"`
		Step         int    `json:"step"`
		Horizon      int    `json:"horizon"`
		Window       string `json:"window"`
		MinTrain     int    `json:"min_train"`
		WindowLength int    `json:"window_length"`
	} `json:"backtest"`
	Selection *struct {
		Metric   string              `json:"metric"`
		Fallback string              `json:"fallback"`
		Route    map[string][]string `json:"route"`
		Combine  *struct {
			Kind  string `json:"kind"`
			Top   int    `json:"top"`
			Label string `json:"label"`
		} `json:"combine"`
	} `json:"selection"`
	Intervals *struct {
		Levels     []int  `json:"levels"`
		Source     string `json:"source"`
		AllMethods bool   `json:"all_methods"`
	} `json:"intervals"`
}

// Evaluation decodes the evaluation part of the canonical spec recorded in
// the manifest.
func (r *Run) Evaluation() (*EvalSpec, error) {
	var e EvalSpec
	if err := json.Unmarshal(r.Manifest.Spec.Canonical, &e); err != nil {
		return nil, fmt.Errorf("%s: canonical spec: %v", r.Dir, err)
	}
	return &e, nil
}

// Columns lists the table's column names in schema order.
func (t *Table) Columns() []string {
	fs := t.Schema.Fields()
	out := make([]string, len(fs))
	for i, f := range fs {
		out[i] = f.Name
	}
	return out
}

// IsNull reports whether a cell is NULL.
func (t *Table) IsNull(col string, i int) bool {
	c, ok := t.cols[col]
	if !ok {
		if t.err == nil {
			t.err = fmt.Errorf("%s: no column %q", t.Path, col)
		}
		return true
	}
	return c.IsNull(i)
}

// compareKey compares the key of row i with key, column by column in byte
// order (a NULL cell compares as the empty string).
func (t *Table) compareKey(keys, key []string, i int) int {
	for j, k := range keys {
		v, _ := t.Str(k, i)
		switch {
		case v < key[j]:
			return -1
		case v > key[j]:
			return 1
		}
	}
	return 0
}

// KeyRange returns the rows [lo, hi) whose key equals key, for a table
// sorted by its key columns (forecasts, components, seasonal_factors,
// accuracy, choices). lo == hi when the series has no rows.
func (t *Table) KeyRange(keys, key []string) (lo, hi int) {
	if len(keys) != len(key) {
		return 0, 0
	}
	lo = sort.Search(t.Rows, func(i int) bool { return t.compareKey(keys, key, i) >= 0 })
	hi = lo + sort.Search(t.Rows-lo, func(i int) bool { return t.compareKey(keys, key, lo+i) > 0 })
	return lo, hi
}

// MatchRows returns the rows whose key equals key exactly, scanning the
// whole table; rows with a NULL key cell never match. Use it for tables
// that are not sorted by key throughout (problems).
func (t *Table) MatchRows(keys, key []string) []int {
	if len(keys) != len(key) {
		return nil
	}
	var out []int
rows:
	for i := 0; i < t.Rows; i++ {
		for j, k := range keys {
			v, ok := t.Str(k, i)
			if !ok || v != key[j] {
				continue rows
			}
		}
		out = append(out, i)
	}
	return out
}

// SeriesKeys lists the distinct keys of a table sorted by key, in row
// order. Rows with a NULL key cell are skipped. A table of a run without
// key columns yields one empty key when it has rows.
func (t *Table) SeriesKeys(keys []string) [][]string {
	var out [][]string
	var last []string
rows:
	for i := 0; i < t.Rows; i++ {
		parts := make([]string, len(keys))
		for j, k := range keys {
			v, ok := t.Str(k, i)
			if !ok {
				continue rows
			}
			parts[j] = v
		}
		if last != nil && equalParts(last, parts) {
			continue
		}
		out = append(out, parts)
		last = parts
	}
	return out
}

func equalParts(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
