package ingest

import (
	"fmt"
	"math"
	"strings"

	"almanac/pipeline/calendar"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// eventsUseKeys reports whether some event source names key columns, so
// that the readers must keep every key value seen (see Rows.keyValues).
func eventsUseKeys(s *spec.Spec) bool {
	for _, ev := range s.Events {
		if len(ev.Columns.Keys) > 0 {
			return true
		}
	}
	return false
}

// noteKeyValues records the values of a key seen in the data, whatever its
// shard, for the events' unknown-key check.
func (r *Rows) noteKeyValues(parts []string) {
	for i, p := range parts {
		r.keyValues[i][p] = true
	}
}

// firstPeriod is the first period the run uses.
func (t *TimeStats) firstPeriod() int64 {
	if t.WinLo != math.MinInt64 {
		return t.WinLo
	}
	lo := int64(math.MaxInt64)
	for p := range t.periods {
		lo = min(lo, p)
	}
	return lo
}

// Check checks the events against the data once the guards have decided
// the periods a run uses (call it after Guard): every key value an event
// names is a value of some series, and each driver source is known up to
// the end of the forecast horizon. It counts the events dated entirely
// outside [first period of the data, end of the horizon] (they are
// ignored) and, on calendars coarser than a day, the closures that cover
// only part of a period, which become run-level problems rows.
func (ev *Events) Check(rs *Rows, s *spec.Spec, cal calendar.Calendar) error {
	var msgs []string
	for _, list := range [][]Event{ev.Closures, ev.Drivers} {
		for i := range list {
			e := &list[i]
			for k, set := range e.Set {
				if set && !rs.keyValues[k][e.Keys[k]] && len(msgs) < MaxDataErrors {
					msgs = append(msgs, fmt.Sprintf("%s: %q is not a value of the key column %q in any series of the data; an event's key cells must name series that exist (leave the cell empty for every series)",
						e.Where, e.Keys[k], s.Columns.Keys[k]))
				}
			}
		}
	}
	if len(msgs) == 0 && rs.shardCount <= 1 {
		// Each value exists; with several key columns, the combination
		// must be a series too (a shard knows only its own series).
		msgs = unmatchedEvents(ev, rs.Keys, s.Columns.Keys)
	}
	if len(msgs) > 0 {
		return &DataError{Msgs: msgs}
	}
	lastPeriod := rs.PanelLast + int64(s.Horizon)
	firstDay, lastDay := cal.StartDays(rs.Times.firstPeriod()), cal.EndDays(lastPeriod)
	for i := range ev.Sources {
		info := &ev.Sources[i]
		if info.Kind == spec.EventDriver && len(info.Drivers) > 0 && info.KnownUntil < lastDay {
			how := "its last date"
			if s.Events[i].KnownUntil != "" {
				how = "its known_until"
			}
			end := calendar.LabelDay(lastDay)
			if cal.Freq != spec.Day {
				end += fmt.Sprintf(" (the end of %s)", cal.Label(lastPeriod))
			}
			msgs = append(msgs, fmt.Sprintf("%s: the driver(s) %s are known only until %s (%s), but the forecast horizon runs to %s; add their future rows up to that day (rows of 0 are fine), or set known_until in events[%d] of %s if the source is complete",
				info.Path, strings.Join(info.Drivers, ", "), calendar.LabelDay(info.KnownUntil), how, end, i, s.File))
		}
	}
	if len(msgs) > 0 {
		return &DataError{Msgs: msgs}
	}
	ev.PartialClosures = make([]int, len(ev.Sources))
	ev.firstPartial = make([]string, len(ev.Sources))
	for _, list := range [][]Event{ev.Closures, ev.Drivers} {
		for _, e := range list {
			if e.Last < firstDay || e.First > lastDay {
				ev.Sources[e.Source].Ignored++
			}
		}
	}
	if cal.Freq != spec.Day {
		for _, e := range ev.Closures {
			if cal.StartDays(cal.FromDays(e.First)) != e.First || cal.EndDays(cal.FromDays(e.Last)) != e.Last {
				if ev.PartialClosures[e.Source]++; ev.firstPartial[e.Source] == "" {
					ev.firstPartial[e.Source] = e.Where
				}
			}
		}
	}
	for i, n := range ev.PartialClosures {
		if n > 0 {
			rs.Notes = append(rs.Notes, runfolder.Problem{Stage: "read", Severity: "warning", Code: runfolder.CodePartialClosure,
				Message: fmt.Sprintf("%d closure row(s) of %s cover only part of a %s period (the first at %s); a closure closes only the periods it covers entirely, so those periods stay open",
					n, ev.Sources[i].Path, cal.Freq, ev.firstPartial[i])})
		}
	}
	return nil
}

// unmatchedEvents names the events that set more than one key column and
// whose combination of values is no series' key.
func unmatchedEvents(ev *Events, keys [][]string, names []string) []string {
	seen := map[string]map[string]bool{} // mask → masked keys of the series
	var msgs []string
	for _, list := range [][]Event{ev.Closures, ev.Drivers} {
		for i := range list {
			e := &list[i]
			if countSet(e.Set) < 2 {
				continue
			}
			mask := fmt.Sprint(e.Set)
			have := seen[mask]
			if have == nil {
				have = map[string]bool{}
				for _, k := range keys {
					have[MaskedKey(e.Set, k)] = true
				}
				seen[mask] = have
			}
			if !have[MaskedKey(e.Set, e.Keys)] && len(msgs) < MaxDataErrors {
				msgs = append(msgs, fmt.Sprintf("%s: no series has %s (each value exists, but not together); an event's key cells must name series that exist", e.Where, e.Pattern(names)))
			}
		}
	}
	return msgs
}

func countSet(set []bool) int {
	n := 0
	for _, s := range set {
		if s {
			n++
		}
	}
	return n
}

// MaskedKey joins the values of key at the columns set marks (an
// event's key pattern, or a series' key read at those columns).
func MaskedKey(set []bool, key []string) string {
	var b strings.Builder
	for i, s := range set {
		if s {
			b.WriteString(key[i])
			b.WriteByte(0)
		}
	}
	return b.String()
}
