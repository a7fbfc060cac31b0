package ingest

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"almanac/pipeline/calendar"
	"almanac/spec"
)

// Event is one row of an event source (spec.EventSource): a closure or a
// driver, over the days First … Last (inclusive), for the series its key
// pattern matches.
type Event struct {
	Source      int    // index into spec.Events
	Where       string // file:line (CSV) or "file: row N" (Parquet)
	First, Last int64  // days since 1970-01-01
	// Keys holds one value per key column of the spec (columns.keys);
	// Set[i] false means the row matches every value of column i.
	Keys  []string
	Set   []bool
	Name  string  // drivers: the driver's name
	Value float64 // drivers: the value on each day (default 1)
}

// Global reports whether the event applies to every series.
func (e *Event) Global() bool { return !slices.Contains(e.Set, true) }

// Matches reports whether the event applies to the series with key.
func (e *Event) Matches(key []string) bool {
	for i, set := range e.Set {
		if set && key[i] != e.Keys[i] {
			return false
		}
	}
	return true
}

// Pattern renders the series an event applies to: store="S1", or "every series".
func (e *Event) Pattern(names []string) string {
	var parts []string
	for i, set := range e.Set {
		if set {
			parts = append(parts, fmt.Sprintf("%s=%q", names[i], e.Keys[i]))
		}
	}
	if len(parts) == 0 {
		return "every series"
	}
	return strings.Join(parts, ", ")
}

// EventSourceInfo is what `almanac plan` and `almanac check` show of one
// event source.
type EventSourceInfo struct {
	Path    string // as written in the spec
	Files   int
	Kind    spec.EventKind
	Rows    int
	Drivers []string // names the source's rows give, sorted
	// KnownUntil is the last day the source is known to be complete:
	// known_until, or the source's last event day (math.MinInt64 without
	// rows).
	KnownUntil int64
	Ignored    int // rows dated entirely outside the data and the horizon (set by Check)
}

// Events are every event source of a spec, read and validated row by row.
type Events struct {
	Files    []InputFile // every file read, in the order of spec.Events
	Closures []Event
	Drivers  []Event
	Names    []string // the run's drivers: the sorted union of names
	Sources  []EventSourceInfo
	// PartialClosures counts, per source, the closures that cover only
	// part of a period of the calendar (set by Check); those periods stay
	// open.
	PartialClosures []int
	firstPartial    []string
}

// ResolveEvents expands every event source's path or glob, relative to the
// spec's folder, into files in sorted order (InputFile.Source indexes
// spec.Events).
func ResolveEvents(s *spec.Spec) ([]InputFile, error) {
	pats := make([]pattern, len(s.Events))
	for i, ev := range s.Events {
		pats[i] = pattern{ev.Path, ev.Format}
	}
	return resolveFiles(s, "events", pats)
}

// dayCal reads event dates: days, whatever the run's calendar.
var dayCal = calendar.Calendar{Freq: spec.Day}

// ReadEvents reads and validates every event file (files as ResolveEvents
// gives them; their size, hash and row count are filled in). Every bad row
// is a DataError line naming file:line (CSV) or file and row (Parquet):
// an unreadable or out-of-range date, until before date, a driver row
// without a name, a value that is not a finite number, a missing column,
// and closures that overlap for the same series.
func ReadEvents(ctx context.Context, s *spec.Spec, files []InputFile) (*Events, error) {
	ev := &Events{Sources: make([]EventSourceInfo, len(s.Events))}
	for i, src := range s.Events {
		ev.Sources[i] = EventSourceInfo{Path: src.Path, Kind: src.Kind, KnownUntil: math.MinInt64}
	}
	var errs []string
	for i := range files {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		f := &files[i]
		src := s.Events[f.Source]
		r := &eventReader{s: s, src: src, f: f, keyPos: keyPositions(s, src)}
		var err error
		if f.Format == string(spec.FormatParquet) {
			err = r.readParquet(ctx)
		} else {
			err = r.readCSV(ctx)
		}
		if err != nil {
			if de, ok := err.(*DataError); ok {
				errs = append(errs, de.Msgs...)
				if len(errs) < MaxDataErrors {
					continue
				}
				break
			}
			return nil, err
		}
		info := &ev.Sources[f.Source]
		info.Files++
		info.Rows += len(r.rows)
		for _, e := range r.rows {
			info.KnownUntil = max(info.KnownUntil, e.Last)
			if src.Kind == spec.EventClosure {
				ev.Closures = append(ev.Closures, e)
			} else {
				ev.Drivers = append(ev.Drivers, e)
				if !slices.Contains(info.Drivers, e.Name) {
					info.Drivers = append(info.Drivers, e.Name)
				}
			}
		}
	}
	if len(errs) > 0 {
		return nil, &DataError{Msgs: errs}
	}
	ev.Files = files
	for i, src := range s.Events {
		info := &ev.Sources[i]
		slices.Sort(info.Drivers)
		if src.KnownUntil != "" {
			info.KnownUntil = calendar.DayOf(src.KnownUntil)
		}
		for _, n := range info.Drivers {
			if !slices.Contains(ev.Names, n) {
				ev.Names = append(ev.Names, n)
			}
		}
	}
	slices.Sort(ev.Names)
	if msgs := overlappingClosures(ev.Closures, s.Columns.Keys); len(msgs) > 0 {
		return nil, &DataError{Msgs: msgs}
	}
	return ev, nil
}

// keyPositions maps an event source's key columns to their positions in
// the spec's columns.keys.
func keyPositions(s *spec.Spec, src spec.EventSource) []int {
	pos := make([]int, len(src.Columns.Keys))
	for j, k := range src.Columns.Keys {
		pos[j] = slices.Index(s.Columns.Keys, k)
	}
	return pos
}

// overlappingClosures finds closures whose days overlap and that can apply
// to the same series (their key patterns agree wherever both are set).
func overlappingClosures(cs []Event, names []string) []string {
	order := make([]int, len(cs))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return int(cs[a].First - cs[b].First) })
	var active []int
	var msgs []string
	for _, i := range order {
		c := &cs[i]
		kept := active[:0]
		for _, j := range active {
			if cs[j].Last >= c.First {
				kept = append(kept, j)
			}
		}
		active = kept
		for _, j := range active {
			o := &cs[j]
			if !compatible(c, o) {
				continue
			}
			// The series both apply to: c's key pattern with o's added.
			both := Event{Set: slices.Clone(c.Set), Keys: slices.Clone(c.Keys)}
			for k := range both.Set {
				if o.Set[k] {
					both.Set[k], both.Keys[k] = true, o.Keys[k]
				}
			}
			msgs = append(msgs, fmt.Sprintf("%s: the closure %s … %s overlaps the closure at %s (%s … %s) for the same series (%s); a series' closures may not overlap — merge them into one row",
				c.Where, calendar.LabelDay(c.First), calendar.LabelDay(c.Last), o.Where, calendar.LabelDay(o.First), calendar.LabelDay(o.Last), both.Pattern(names)))
			if len(msgs) >= MaxDataErrors {
				return msgs
			}
		}
		active = append(active, i)
	}
	return msgs
}

// compatible reports whether two events can apply to one series.
func compatible(a, b *Event) bool {
	for k := range a.Set {
		if a.Set[k] && b.Set[k] && a.Keys[k] != b.Keys[k] {
			return false
		}
	}
	return true
}

// eventReader reads one event file.
type eventReader struct {
	s      *spec.Spec
	src    spec.EventSource
	f      *InputFile
	keyPos []int
	rows   []Event
	errs   []string
}

// cells is one row of an event file as text (Parquet values converted).
type cells struct {
	where       string
	date, until string
	first, last int64 // when the date columns were typed (Parquet DATE/TIMESTAMP)
	typed       bool
	name, value string
	valueNum    float64
	valueTyped  bool
	keys        []string
}

// add validates one row and keeps it, or records its errors; it returns
// false once too many errors were found.
func (r *eventReader) add(c *cells) bool {
	cols := r.src.Columns
	bad := func(col, format string, args ...any) {
		r.errs = append(r.errs, fmt.Sprintf("%s: column %q: %s", c.where, col, fmt.Sprintf(format, args...)))
	}
	e := Event{Source: r.f.Source, Where: c.where, Value: 1, Keys: make([]string, len(r.s.Columns.Keys)), Set: make([]bool, len(r.s.Columns.Keys))}
	ok := true
	if c.typed {
		e.First, e.Last = c.first, c.last
	} else {
		var err error
		if e.First, err = eventDay(c.date); err != nil {
			bad(cols.Date, "%v", err)
			ok = false
		}
		e.Last = e.First
		if cols.Until != "" && strings.TrimSpace(c.until) != "" {
			if e.Last, err = eventDay(c.until); err != nil {
				bad(cols.Until, "%v", err)
				ok = false
			}
		}
	}
	if ok && e.Last < e.First {
		bad(cols.Until, "the last day %s is before the first day %s (column %q)", calendar.LabelDay(e.Last), calendar.LabelDay(e.First), cols.Date)
		ok = false
	}
	if r.src.Kind == spec.EventDriver {
		e.Name = strings.TrimSpace(c.name)
		if e.Name == "" {
			bad(cols.Name, "the driver's name is empty; every row of a driver source names its driver")
			ok = false
		} else if msg := keyCharError(e.Name); msg != "" || !utf8.ValidString(e.Name) {
			bad(cols.Name, "%q is not a usable driver name (control characters or invalid UTF-8)", e.Name)
			ok = false
		}
		if cols.Value != "" {
			v, err := c.number()
			if err != nil {
				bad(cols.Value, "%v", err)
				ok = false
			}
			e.Value = v
		}
	}
	for j, pos := range r.keyPos {
		k := normaliseKey(r.s.Shaping.KeyVariants, c.keys[j])
		if k == "" {
			continue
		}
		if msg := keyCharError(k); msg != "" || !utf8.ValidString(k) {
			bad(cols.Keys[j], "%q is not a usable key value (control characters or invalid UTF-8)", k)
			ok = false
		}
		e.Keys[pos], e.Set[pos] = k, true
	}
	if ok {
		r.rows = append(r.rows, e)
	}
	return len(r.errs) < MaxDataErrors
}

// number is the row's driver value: a finite number.
func (c *cells) number() (float64, error) {
	if c.valueTyped {
		if math.IsNaN(c.valueNum) || math.IsInf(c.valueNum, 0) {
			return 0, fmt.Errorf("%v is not a finite number; a driver's value must be one (NULL is not accepted either)", c.valueNum)
		}
		return c.valueNum, nil
	}
	t := strings.TrimSpace(c.value)
	if t == "" {
		return 0, fmt.Errorf("the value is empty; write a number (a source without a value column gives every row the value 1)")
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || strings.ContainsAny(t, "xXpP_") {
		return 0, fmt.Errorf("%q is not a finite number; a driver's value must be one", c.value)
	}
	return v, nil
}

// eventDay reads an event date: YYYY-MM-DD (a timestamp's calendar date
// counts), years 1 to 9999.
func eventDay(v string) (int64, error) {
	t := strings.TrimSpace(v)
	rt, err := dayCal.ParseSpan(t)
	if err != nil {
		return 0, fmt.Errorf("%q is not a date of the years 1 to 9999; write YYYY-MM-DD, e.g. 2024-12-25", v)
	}
	return rt.First, nil
}
