package series

import (
	"fmt"
	"math"

	"almanac/pipeline/calendar"
	"almanac/pipeline/ingest"
	"almanac/pipeline/runfolder"
)

// Attacher gives series their events (README, "Events"): closures become
// missing, closed periods (Series.Closed, Series.FutureClosed) and drivers
// become regressor columns over the history and the horizon
// (Series.Drivers). It is built once per run and is safe for concurrent
// use.
type Attacher struct {
	cal      calendar.Calendar
	horizon  int
	names    []string // the run's drivers, sorted
	nameIdx  map[string]int
	closures []eventGroup
	drivers  []eventGroup
}

// eventGroup holds the events whose key patterns set the same key
// columns, by the values they set (joined with NUL).
type eventGroup struct {
	set    []bool
	events map[string][]*ingest.Event
}

// NewAttacher indexes ev for a run of the calendar cal with horizon
// periods of forecast.
func NewAttacher(ev *ingest.Events, cal calendar.Calendar, horizon int) *Attacher {
	a := &Attacher{cal: cal, horizon: horizon, names: ev.Names, nameIdx: map[string]int{}}
	for i, n := range ev.Names {
		a.nameIdx[n] = i
	}
	a.closures = group(ev.Closures)
	a.drivers = group(ev.Drivers)
	return a
}

func group(events []ingest.Event) []eventGroup {
	var out []eventGroup
	for i := range events {
		e := &events[i]
		g := -1
		for j := range out {
			if equalMask(out[j].set, e.Set) {
				g = j
				break
			}
		}
		if g < 0 {
			out = append(out, eventGroup{set: e.Set, events: map[string][]*ingest.Event{}})
			g = len(out) - 1
		}
		k := ingest.MaskedKey(e.Set, e.Keys)
		out[g].events[k] = append(out[g].events[k], e)
	}
	return out
}

func equalMask(a, b []bool) bool {
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// matching returns the events of groups that apply to key, in input order
// within each group.
func matching(groups []eventGroup, key []string) []*ingest.Event {
	var out []*ingest.Event
	for _, g := range groups {
		out = append(out, g.events[ingest.MaskedKey(g.set, key)]...)
	}
	return out
}

// Attach fills s.Closed, s.FutureClosed and s.Drivers. Every period a
// closure covers entirely is closed: in the history its value becomes NaN
// (a value there is overridden; one problems note per series counts the
// closed periods), in the horizon the step is marked. Skipped series are
// left alone.
func (a *Attacher) Attach(s *Series) {
	if s.Values == nil {
		return
	}
	n, h := len(s.Values), a.horizon
	end := s.Start + int64(n+h) - 1 // last period of the horizon
	s.Closed, s.FutureClosed = make([]bool, n), make([]bool, h)
	closed, held := 0, 0
	first := int64(math.MaxInt64)
	for _, e := range matching(a.closures, s.Key) {
		lo, hi := a.cal.Covered(e.First, e.Last)
		for p := max(lo, s.Start); p <= min(hi, end); p++ {
			i := int(p - s.Start)
			if i >= n {
				s.FutureClosed[i-n] = true
				continue
			}
			if !s.Closed[i] {
				closed++
				if !math.IsNaN(s.Values[i]) {
					held++
				}
				first = min(first, p)
			}
			s.Values[i], s.Closed[i] = math.NaN(), true
		}
	}
	if closed > 0 {
		s.Notes = append(s.Notes, Note{"warning", runfolder.CodeClosedPeriod,
			fmt.Sprintf("%d period(s) of the history are closed by events (the first %s): they count as missing, are not scored in backtests; %d of them held a value (from the data or the gap rule), now ignored",
				closed, a.cal.Label(first), held)})
	}
	s.Drivers = make([]Driver, len(a.names))
	for j, name := range a.names {
		s.Drivers[j] = Driver{Name: name, Values: make([]float64, n+h)}
	}
	startDay, endDay := a.cal.StartDays(s.Start), a.cal.EndDays(end)
	for _, e := range matching(a.drivers, s.Key) {
		col := s.Drivers[a.nameIdx[e.Name]].Values
		v := e.Value
		a.cal.Shares(max(e.First, startDay), min(e.Last, endDay), func(p int64, share float64) {
			col[p-s.Start] += v * share
		})
	}
}
