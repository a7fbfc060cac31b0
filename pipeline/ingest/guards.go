package ingest

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"unicode"

	"almanac/pipeline/calendar"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// periodStat counts the rows of one period over the whole input (every
// shard's rows too, so that every shard decides alike) and remembers where
// the first came from and the latest day any of them covers.
type periodStat struct {
	rows    int64
	file    int32
	line    int64
	lastDay int64
	first   int64 // the first row's first day, for messages
}

// TimeStats is what the readers learn about the rows' times, for the
// guards that decide which periods a run uses.
type TimeStats struct {
	until      int64 // last day read; math.MaxInt64 without shaping.until
	afterUntil int64 // rows dated after it, not read
	periods    map[int64]*periodStat
	cache      *periodStat
	cacheP     int64
	dense      []*periodStat // periods[denseBase+i], for i in range (see lookup)
	denseBase  int64

	fine         bool           // some rows are dates finer than the calendar
	StrayDropped map[int64]bool // periods dropped as stray
	WinLo, WinHi int64          // the periods a run uses
}

func newTimeStats(until string) *TimeStats {
	t := &TimeStats{until: math.MaxInt64, periods: map[int64]*periodStat{}, WinLo: math.MinInt64, WinHi: math.MaxInt64}
	if until != "" {
		t.until = calendar.DayOf(until)
	}
	return t
}

// observe records one row's time; it returns false for a row dated after
// shaping.until, which is not read.
func (t *TimeStats) observe(cal calendar.Calendar, rt calendar.RowTime, file int32, line int64) bool {
	if rt.First > t.until {
		t.afterUntil++
		return false
	}
	last := min(rt.Last, t.until)
	st := t.cache
	if st == nil || t.cacheP != rt.Period {
		st = t.lookup(rt.Period)
		if st == nil {
			st = &periodStat{file: file, line: line, lastDay: last, first: rt.First}
			t.periods[rt.Period] = st
			t.remember(rt.Period, st)
		}
		t.cache, t.cacheP = st, rt.Period
	}
	st.rows++
	st.lastDay = max(st.lastDay, last)
	t.fine = t.fine || rt.Fine
	return true
}

// denseSpan is how many periods around the first one seen observe finds
// by index rather than in the map: rows of one series run through the
// periods, so the period changes on almost every row of a sorted input.
const denseSpan = 4096

// lookup is the stat of period p, or nil.
func (t *TimeStats) lookup(p int64) *periodStat {
	if i := p - t.denseBase; i >= 0 && i < int64(len(t.dense)) {
		return t.dense[i]
	}
	return t.periods[p]
}

// remember indexes the new stat st of period p when p lies in the span.
func (t *TimeStats) remember(p int64, st *periodStat) {
	if t.dense == nil {
		t.dense, t.denseBase = make([]*periodStat, denseSpan), p-denseSpan/2
	}
	if i := p - t.denseBase; i >= 0 && i < int64(len(t.dense)) {
		t.dense[i] = st
	}
}

// partialLast reports whether the last period hi ends before the data's
// usual reach: the days between each period's end and its latest row are
// compared with those of up to partialLookback periods before it. Daily rows
// reach each period's last day (or its last weekday), so a last week that
// stops on a Tuesday falls short; rows that label their periods (week-start
// or month-end dates, one date per period) reach as far in every period,
// the last included, and nothing is dropped.
func (t *TimeStats) partialLast(cal calendar.Calendar, hi int64) bool {
	short := cal.EndDays(hi) - t.periods[hi].lastDay
	if short <= 0 {
		return false
	}
	usual, seen := int64(-1), 0
	for p := hi - 1; p >= hi-4*partialLookback && seen < partialLookback; p-- {
		st, ok := t.periods[p]
		if !ok {
			continue
		}
		usual = max(usual, cal.EndDays(p)-st.lastDay)
		seen++
	}
	return seen >= 2 && short > usual
}

// partialLookback is how many earlier periods set the data's usual reach.
const partialLookback = 8

// strayGap is the run of empty periods that sets a stray date apart: two
// seasons, and at least three periods.
func strayGap(season int) int64 { return int64(max(2*season, 3)) }

// strayShare is the largest share of the rows that may be set aside as
// stray: more than that beyond a gap is a real part of the data.
const strayShare = 0.05

// findStray returns the periods that lie beyond a gap of at least gap empty
// periods from the bulk of the rows and hold, counted from the outer end,
// at most strayShare of all rows.
func findStray(periods map[int64]*periodStat, gap int64) []int64 {
	ps := make([]int64, 0, len(periods))
	var total int64
	for p, st := range periods {
		ps = append(ps, p)
		total += st.rows
	}
	if len(ps) < 2 {
		return nil
	}
	slices.Sort(ps)
	// Clusters: runs of periods separated by fewer than gap empty periods.
	type cluster struct {
		lo, hi int // indexes into ps
		rows   int64
	}
	var cs []cluster
	for i, p := range ps {
		if i == 0 || p-ps[i-1]-1 >= gap {
			cs = append(cs, cluster{lo: i, hi: i})
		}
		c := &cs[len(cs)-1]
		c.hi = i
		c.rows += periods[p].rows
	}
	if len(cs) < 2 {
		return nil
	}
	bulk := 0
	for i, c := range cs {
		if c.rows > cs[bulk].rows {
			bulk = i
		}
	}
	limit := int64(strayShare * float64(total))
	var stray []int64
	// Outward from the bulk: the outer clusters 0…lo-1 are stray when
	// together they hold at most the limit, for the largest such lo; the
	// same on the other side.
	lo, acc := 0, int64(0)
	for i := 0; i < bulk; i++ {
		if acc+cs[i].rows > limit {
			break
		}
		acc += cs[i].rows
		lo = i + 1
	}
	hi := len(cs) - 1
	acc = 0
	for i := len(cs) - 1; i > bulk; i-- {
		if acc+cs[i].rows > limit {
			break
		}
		acc += cs[i].rows
		hi = i - 1
	}
	for i, c := range cs {
		if i < lo || i > hi {
			stray = append(stray, ps[c.lo:c.hi+1]...)
		}
	}
	return stray
}

// decideWindow applies the time guards once the whole input has been read:
// stray dates (stop, or drop with a problems row each, or keep), and an
// incomplete last period (dropped by default). It sets the periods the run
// uses and returns the run-level notes.
func (t *TimeStats) decideWindow(sh spec.Shaping, cal calendar.Calendar, files []InputFile) ([]runfolder.Problem, error) {
	t.dense, t.cache = nil, nil // the readers' indexes; the map is the record from here on
	var notes []runfolder.Problem
	if t.afterUntil > 0 {
		notes = append(notes, runfolder.Problem{Stage: "read", Severity: "warning", Code: runfolder.CodeAfterUntil,
			Message: fmt.Sprintf("%d rows dated after %s (shaping.until or --as-of) were not read", t.afterUntil, calendar.LabelDay(t.until))})
	}
	if len(t.periods) == 0 {
		return notes, nil
	}
	where := func(st *periodStat) string {
		f := files[st.file]
		if f.Format == string(spec.FormatParquet) {
			return fmt.Sprintf("%s: row %d", f.Path, st.line)
		}
		return fmt.Sprintf("%s:%d", f.Path, st.line)
	}
	if sh.StrayDates != spec.StrayKeep {
		stray := findStray(t.periods, strayGap(cal.Season))
		if len(stray) > 0 {
			var bulkLo, bulkHi int64 = math.MaxInt64, math.MinInt64
			isStray := map[int64]bool{}
			for _, p := range stray {
				isStray[p] = true
			}
			for p := range t.periods {
				if !isStray[p] {
					bulkLo, bulkHi = min(bulkLo, p), max(bulkHi, p)
				}
			}
			rest := fmt.Sprintf("the rest of the data lies in %s … %s", cal.Label(bulkLo), cal.Label(bulkHi))
			if sh.StrayDates == spec.StrayStop {
				var msgs []string
				for _, p := range stray {
					if len(msgs) == MaxDataErrors {
						msgs = append(msgs, fmt.Sprintf("… and %d more stray periods", len(stray)-MaxDataErrors))
						break
					}
					st := t.periods[p]
					side := "after"
					if p < bulkLo {
						side = "before"
					}
					msgs = append(msgs, fmt.Sprintf("%s: stray date: this row falls in %s, far %s the rest of the data (%s … %s; %d row(s) in that period); fix the export, set shaping.until, or leave such rows out with shaping.stray_dates: drop",
						where(st), cal.Label(p), side, cal.Label(bulkLo), cal.Label(bulkHi), st.rows))
				}
				return nil, &DataError{Msgs: msgs}
			}
			t.StrayDropped = isStray
			var rows int64
			for _, p := range stray {
				rows += t.periods[p].rows
				delete(t.periods, p)
			}
			notes = append(notes, runfolder.Problem{Stage: "shape", Severity: "warning", Code: runfolder.CodeStrayPeriod,
				Message: fmt.Sprintf("%d row(s) in %d stray period(s) far from the rest of the data (%s) were left out (shaping.stray_dates: drop); each has a problems row", rows, len(stray), strings.TrimPrefix(rest, "the rest of the data lies in "))})
		}
	}
	lo, hi := int64(math.MaxInt64), int64(math.MinInt64)
	for p := range t.periods {
		lo, hi = min(lo, p), max(hi, p)
	}
	if sh.Partial == spec.PartialDrop && t.fine && hi > lo {
		if end := cal.EndDays(hi); t.partialLast(cal, hi) {
			covered := t.periods[hi].lastDay
			notes = append(notes, runfolder.Problem{Stage: "shape", Severity: "warning", Code: runfolder.CodePartialPeriod,
				Message: fmt.Sprintf("the last period %s (%s … %s) is incomplete: the data end on %s; it was left out, so the history ends at %s (shaping.partial_period: keep uses it)",
					cal.Label(hi), calendar.LabelDay(cal.StartDays(hi)), calendar.LabelDay(end), calendar.LabelDay(covered), cal.Label(hi-1))})
			hi--
		}
	}
	t.WinLo, t.WinHi = lo, hi
	return notes, nil
}

// keyCharError says what is wrong with a key value holding a control
// character (NUL, tab, line feed, DEL, C1 controls), or "".
func keyCharError(v string) string {
	for _, r := range v {
		if r < 0x20 || r == 0x7f || (r >= 0x80 && r <= 0x9f) {
			return fmt.Sprintf("%q holds the control character U+%04X; key values may not hold control characters (re-export the file, or clean the column)", v, r)
		}
	}
	return ""
}

// normaliseKey applies shaping.key_variants to one key value.
func normaliseKey(rule spec.KeyVariants, v string) string {
	switch rule {
	case spec.KeyVariantsTrim:
		return strings.TrimSpace(v)
	case spec.KeyVariantsLower:
		return strings.ToLower(strings.TrimSpace(v))
	}
	return v
}

// maxVariantNotes bounds the key_variants rows; one more says how many
// were left unlisted.
const maxVariantNotes = 100

// keyVariantNotes finds keys that differ only by surrounding whitespace or
// letter case, and returns a problems row per group naming every spelling.
func keyVariantNotes(keys [][]string, names []string) []runfolder.Problem {
	// Keys with the same folded form (each value trimmed and lower-cased,
	// the values joined by a 0 byte, which no key value holds) are
	// variants of each other. Groups come in the order of their folded
	// form; the message lists a group's spellings sorted.
	type variants struct {
		fold string
		ids  []int32
	}
	first := make(map[string]int32, len(keys)) // a folded form → its first key
	groupOf := map[int32]int{}                 // a group's first key → the group
	var groups []variants
	var b strings.Builder
	for id, key := range keys {
		b.Reset()
		for i, v := range key {
			if i > 0 {
				b.WriteByte(0)
			}
			b.WriteString(strings.Map(unicode.ToLower, strings.TrimFunc(v, unicode.IsSpace)))
		}
		f := b.String()
		at, seen := first[f]
		if !seen {
			first[f] = int32(id)
			continue
		}
		g, ok := groupOf[at]
		if !ok {
			g = len(groups)
			groupOf[at] = g
			groups = append(groups, variants{fold: f, ids: []int32{at}})
		}
		groups[g].ids = append(groups[g].ids, int32(id))
	}
	slices.SortFunc(groups, func(a, b variants) int { return strings.Compare(a.fold, b.fold) })
	var out []runfolder.Problem
	for i, g := range groups {
		if i == maxVariantNotes {
			out = append(out, runfolder.Problem{Stage: "read", Severity: "warning", Code: runfolder.CodeKeyVariants,
				Message: fmt.Sprintf("… and %d more keys with several spellings", len(groups)-maxVariantNotes)})
			break
		}
		spell := make([]string, len(g.ids))
		for j, id := range g.ids {
			spell[j] = quotedKey(names, keys[id])
		}
		slices.Sort(spell)
		out = append(out, runfolder.Problem{Stage: "read", Severity: "warning", Code: runfolder.CodeKeyVariants,
			Message: fmt.Sprintf("keys differ only by surrounding whitespace or letter case and form separate series: %s (shaping.key_variants: trim or lower merges them)", strings.Join(spell, " and "))})
	}
	return out
}

// quotedKey renders a key with each value quoted, so that whitespace shows.
func quotedKey(names, key []string) string {
	if len(names) == 0 {
		return "(the only series)"
	}
	parts := make([]string, len(names))
	for i := range names {
		parts[i] = fmt.Sprintf("%s=%q", names[i], key[i])
	}
	return strings.Join(parts, ", ")
}

// Guard runs the checks that need the whole input: the time window (stray
// dates, an incomplete last period), the last forecast period's year, keys
// spelled several ways, and report.series against the keys read. It sets
// the periods the run uses (see TimeStats) and adds run-level notes.
func Guard(rs *Rows, s *spec.Spec, cal calendar.Calendar) error {
	notes, err := rs.Times.decideWindow(s.Shaping, cal, rs.files_)
	if err != nil {
		return err
	}
	rs.Notes = append(rs.Notes, notes...)
	if t := rs.Times; t.WinHi != math.MaxInt64 {
		rs.PanelLast = t.WinHi
		if end := cal.EndDays(t.WinHi + int64(s.Horizon)); end > calendar.MaxDay || end < calendar.MinDay {
			return fmt.Errorf("the forecasts would run past 9999-12-31 (the data end in %s, horizon %d); almanac handles the years 1 to 9999", cal.Label(t.WinHi), s.Horizon)
		}
	}
	if s.Shaping.KeyVariants == spec.KeyVariantsWarn {
		rs.Notes = append(rs.Notes, keyVariantNotes(rs.Keys, s.Columns.Keys)...)
	}
	if rs.shardCount <= 1 {
		return checkReportSeries(s, rs.Keys)
	}
	return nil
}

// checkReportSeries refuses report.series entries that name no series of
// the data (a typo would otherwise drop the chart without a word).
func checkReportSeries(s *spec.Spec, keys [][]string) error {
	if s.Report == nil || len(s.Report.Series) == 0 {
		return nil
	}
	have := make(map[string]bool, len(keys))
	for _, k := range keys {
		have[strings.Join(k, " / ")] = true
	}
	var msgs []string
	for i, want := range s.Report.Series {
		if have[want] {
			continue
		}
		msg := fmt.Sprintf("%s: report.series[%d]: %q is not a series of the data (key values joined by \" / \" in the order of columns.keys: %s)",
			s.File, i, want, strings.Join(s.Columns.Keys, ", "))
		best, bestD := "", 4
		for k := range have {
			if d := spec.EditDistance(strings.ToLower(want), strings.ToLower(k)); d < bestD || (d == bestD && k < best) {
				best, bestD = k, d
			}
		}
		if best != "" {
			msg += fmt.Sprintf("; did you mean %q?", best)
		}
		msgs = append(msgs, msg)
	}
	if len(msgs) > 0 {
		return &DataError{Msgs: msgs}
	}
	return nil
}
