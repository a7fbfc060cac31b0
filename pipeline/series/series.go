// Package series turns input rows into series: one per key, a value per
// period, duplicates combined and gaps filled by the spec's shaping rules.
package series

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"sync"
	"sync/atomic"

	"almanac/pipeline/calendar"
	"almanac/pipeline/ingest"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// Series is one key's history: a value per period from Start, NaN where missing.
type Series struct {
	Key    []string
	Start  int64 // period index of Values[0]
	Values []float64
	// Filled counts periods with no rows that the gap rule filled;
	// Combined counts periods that held more than one row.
	Filled, Combined int
	// Skip, when set, says why the series was not built (Values is nil);
	// it becomes a problems row (with the code SkipCode) and the run goes on.
	Skip     string
	SkipCode string
	// Notes become problems rows of the series: stray rows left out, a
	// period whose rows add up beyond the range of a float.
	Notes []Note

	// Events, when the spec has event sources (see the events section of
	// the README). Closed[i] marks a period of Values the series could not
	// sell (Values[i] is NaN there and no backtest scores it);
	// FutureClosed[k] marks step k+1 of the forecast horizon. Drivers holds
	// one column per driver of the run, in the same order for every series,
	// each of len(Values)+Horizon values (0 where the driver is absent).
	// All three are nil without event sources.
	Closed       []bool
	FutureClosed []bool
	Drivers      []Driver
}

// Driver is one known-in-advance regressor of a series over its history
// and the forecast horizon.
type Driver struct {
	Name   string
	Values []float64
}

// Note is a problems row found while shaping a series.
type Note struct {
	Severity, Code, Message string
}

// Shape groups rows by key, sorts series by key, buckets each series'
// rows into periods, combines duplicates and fills gaps per the spec. The
// series are shaped on up to workers goroutines; the result (series, data
// errors and their order) is the same at any number.
func Shape(rs *ingest.Rows, sh spec.Shaping, lim spec.Limits, cal calendar.Calendar, keyNames []string, workers int) ([]*Series, error) {
	nk := len(rs.Keys)
	if nk > lim.MaxSeries {
		return nil, fmt.Errorf("the input holds %d series; limits.max_series is %d (raise it in the spec if this is right)", nk, lim.MaxSeries)
	}
	counts, order := rowsByKey(rs.KeyIDs, nk)
	// Keys in sorted order.
	ids := make([]int32, nk)
	for i := range ids {
		ids[i] = int32(i)
	}
	slices.SortFunc(ids, func(a, b int32) int { return ingest.CompareKeys(rs.Keys[a], rs.Keys[b]) })

	out := make([]*Series, nk)
	errs := make([][]string, nk) // by position in out
	// Each series sorts its own rows (a disjoint part of order) and reads
	// rs only.
	inParallel(nk, workers, func(i int) {
		id := ids[i]
		out[i], errs[i] = shapeOne(rs, id, order[counts[id]:counts[id+1]], sh, lim, cal, keyNames)
	})
	var all []string
	for _, e := range errs {
		all = append(all, e...)
	}
	if len(all) > 0 {
		return nil, &ingest.DataError{Msgs: all[:min(len(all), ingest.MaxDataErrors)]}
	}
	return out, nil
}

// shapeOne is the series of key id from its rows, with the data errors
// the shaping rules ask for (at most ingest.MaxDataErrors).
func shapeOne(rs *ingest.Rows, id int32, rows []int32, sh spec.Shaping, lim spec.Limits, cal calendar.Calendar, keyNames []string) (*Series, []string) {
	t := rs.Times
	// Rows outside the periods the run uses (see ingest.Guard): stray
	// periods left out (a problems row each), an incomplete last period.
	var notes []Note
	if t != nil && outsideWindow(rs.Periods, rows, t.WinLo, t.WinHi) {
		var kept []int32
		kept, notes = keepWindow(rs, rows, cal)
		if len(kept) == 0 {
			code, why := runfolder.CodePartialPeriod, fmt.Sprintf("all %d row(s) of the series lie in the incomplete last period %s, which was left out", len(rows), cal.Label(rs.Periods[rows[0]]))
			if len(notes) > 0 {
				code, why = runfolder.CodeStrayPeriod, fmt.Sprintf("all %d row(s) of the series lie in stray periods, which were left out", len(rows))
			}
			return &Series{Key: rs.Keys[id], Start: rs.Periods[rows[0]], Skip: why, SkipCode: code, Notes: notes}, nil
		}
		rows = kept
	}
	// Stable sort by period keeps input order within a period, which
	// "last" relies on.
	slices.SortStableFunc(rows, func(a, b int32) int {
		pa, pb := rs.Periods[a], rs.Periods[b]
		switch {
		case pa < pb:
			return -1
		case pa > pb:
			return 1
		}
		return 0
	})
	first, last := rs.Periods[rows[0]], rs.Periods[rows[len(rows)-1]]
	if sh.End == spec.EndPanel {
		last = rs.PanelLast
	}
	if last-first+1 > int64(lim.MaxPeriods) {
		return &Series{Key: rs.Keys[id], Start: first, SkipCode: runfolder.CodeTooLong, Notes: notes, Skip: fmt.Sprintf("the series spans %d periods (%s … %s, first row at %s), more than limits.max_periods %d; skipped — a stray date is the usual cause",
			last-first+1, cal.Label(first), cal.Label(last), rs.Where(int(rows[0])), lim.MaxPeriods)}, nil
	}
	s := &Series{Key: rs.Keys[id], Start: first, Values: make([]float64, int(last-first+1)), Notes: notes}
	return s, fillValues(s, rs, rows, sh, cal, keyNames, nil)
}

// inParallel calls f(i) for every i in [0, n) on up to workers goroutines,
// which take runs of consecutive indexes, and returns when all are done.
func inParallel(n, workers int, f func(i int)) {
	const run = 64
	workers = min(workers, (n+run-1)/run)
	if workers <= 1 {
		for i := range n {
			f(i)
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				lo := int(next.Add(run)) - run
				if lo >= n {
					return
				}
				for i := lo; i < min(n, lo+run); i++ {
					f(i)
				}
			}
		}()
	}
	wg.Wait()
}

func combine(rule spec.Combine, values []float64, rows []int32) float64 {
	if len(rows) == 1 {
		return values[rows[0]]
	}
	switch rule {
	case spec.CombineLast:
		return values[rows[len(rows)-1]]
	case spec.CombineMean, spec.CombineSum:
		sum, n := 0.0, 0
		for _, r := range rows {
			if v := values[r]; !math.IsNaN(v) {
				sum += v
				n++
			}
		}
		if n == 0 {
			return math.NaN()
		}
		if rule == spec.CombineMean {
			return sum / float64(n)
		}
		return sum
	}
	return values[rows[0]]
}

// keyLabel renders a key for messages: depot=North, sku=A-100.
func keyLabel(names, key []string) string {
	if len(names) == 0 {
		return "(the only series)"
	}
	parts := make([]string, len(names))
	for i := range names {
		parts[i] = names[i] + "=" + key[i]
	}
	return strings.Join(parts, ", ")
}

func outsideWindow(periods []int64, rows []int32, lo, hi int64) bool {
	for _, r := range rows {
		if p := periods[r]; p < lo || p > hi {
			return true
		}
	}
	return false
}

// rowsByKey is a counting sort of row indexes by key id, stable in input
// order: the rows of key k are order[counts[k]:counts[k+1]].
func rowsByKey(keyIDs []int32, nk int) (counts []int, order []int32) {
	counts = make([]int, nk+1)
	for _, k := range keyIDs {
		counts[k+1]++
	}
	for i := 1; i <= nk; i++ {
		counts[i] += counts[i-1]
	}
	order = make([]int32, len(keyIDs))
	next := append([]int(nil), counts[:nk]...)
	for i, k := range keyIDs {
		order[next[k]] = int32(i)
		next[k]++
	}
	return counts, order
}

// keepWindow keeps the rows inside the periods the run uses, with a note
// for each stray row left out.
func keepWindow(rs *ingest.Rows, rows []int32, cal calendar.Calendar) (kept []int32, notes []Note) {
	t := rs.Times
	kept = make([]int32, 0, len(rows))
	for _, r := range rows {
		p := rs.Periods[r]
		if p >= t.WinLo && p <= t.WinHi {
			kept = append(kept, r)
			continue
		}
		if t.StrayDropped[p] {
			notes = append(notes, Note{"warning", runfolder.CodeStrayPeriod, fmt.Sprintf("%s: the row dated in %s lies far from the rest of the data; left out (shaping.stray_dates: drop)", rs.Where(int(r)), cal.Label(p))})
		}
	}
	return kept, notes
}

// fillValues combines the rows of each period of s (rows sorted by period,
// starting at s.Start) and fills the gaps; it returns errs with the data
// errors the shaping rules ask for appended.
func fillValues(s *Series, rs *ingest.Rows, rows []int32, sh spec.Shaping, cal calendar.Calendar, keyNames []string, errs []string) []string {
	first, n := s.Start, len(s.Values)
	present := make([]bool, n)
	for i := 0; i < len(rows); {
		j := i + 1
		for j < len(rows) && rs.Periods[rows[j]] == rs.Periods[rows[i]] {
			j++
		}
		slot := int(rs.Periods[rows[i]] - first)
		present[slot] = true
		if j-i > 1 {
			s.Combined++
			if sh.Combine == spec.CombineReject {
				if len(errs) < ingest.MaxDataErrors {
					errs = append(errs, fmt.Sprintf("%s: %d rows for series %s in period %s (also %s); shaping.combine is reject",
						rs.Where(int(rows[i+1])), j-i, keyLabel(keyNames, s.Key), cal.Label(rs.Periods[rows[i]]), rs.Where(int(rows[i]))))
				}
			}
		}
		v := combine(sh.Combine, rs.Values, rows[i:j])
		if math.IsInf(v, 0) {
			s.Notes = append(s.Notes, Note{"warning", runfolder.CodeAggregateOverflow, fmt.Sprintf("the %d rows of period %s add up beyond the range of a 64-bit float (%v); the period counts as missing (first row at %s)",
				j-i, cal.Label(rs.Periods[rows[i]]), v, rs.Where(int(rows[i])))})
			v = math.NaN()
		}
		s.Values[slot] = v
		i = j
	}
	for slot, ok := range present {
		if ok {
			continue
		}
		s.Filled++
		switch sh.Gaps {
		case spec.GapsZero:
			s.Values[slot] = 0
		default:
			s.Values[slot] = math.NaN()
		}
	}
	if sh.Gaps == spec.GapsReject && s.Filled > 0 && len(errs) < ingest.MaxDataErrors {
		errs = append(errs, fmt.Sprintf("series %s has no rows for %d of its periods (first gap: %s); shaping.gaps is reject (shaping.end: series stops a series at its own last row)",
			keyLabel(keyNames, s.Key), s.Filled, cal.Label(first+int64(slices.Index(present, false)))))
	}
	return errs
}
