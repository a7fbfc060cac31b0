package spec

import (
	"fmt"
	"slices"

	"gopkg.in/yaml.v3"
)

// EventKind says what every row of an event source is.
type EventKind string

// Event kinds.
const (
	// EventClosure: the series could not sell on those dates; the periods
	// the closure covers entirely are missing in the history and forecast
	// as 0 in the horizon.
	EventClosure EventKind = "closure"
	// EventDriver: a known-in-advance regressor (a holiday, a promotion, a
	// price), named by the row, with a value (default 1).
	EventDriver EventKind = "driver"
)

// EventKinds lists the allowed values of EventKind.
var EventKinds = []string{string(EventClosure), string(EventDriver)}

// EventSource is one file of dated events (README, "Events").
type EventSource struct {
	Source  // path (a glob is allowed), format and delimiter, as for data sources
	Kind    EventKind
	Columns EventColumns
	// KnownUntil (YYYY-MM-DD) is the last day a driver source is known to
	// be complete; "" means the source's own last date.
	KnownUntil string
}

// EventColumns names the columns of an event source.
type EventColumns struct {
	Date  string   // first day of the event; required
	Until string   // last day, inclusive; optional (an empty cell: the date alone)
	Name  string   // drivers only, required for them: the driver's name
	Value string   // drivers only, optional: the value on those dates (default 1)
	Keys  []string // a subset of the spec's key columns; an empty cell matches every value
}

// Names returns the columns of the source in a fixed order: date, until,
// name, value, keys (those given).
func (c EventColumns) Names() []string {
	var out []string
	for _, n := range []string{c.Date, c.Until, c.Name, c.Value} {
		if n != "" {
			out = append(out, n)
		}
	}
	return append(out, c.Keys...)
}

// events decodes the events section: a list of event sources.
func (d *decoder) events(n *yaml.Node, path string) ([]EventSource, []*yaml.Node) {
	var out []EventSource
	var nodes []*yaml.Node
	d.items(n, path, "event sources", func(item *yaml.Node, p string) {
		if ev, ok := d.eventSource(item, p); ok {
			out = append(out, ev)
			nodes = append(nodes, item)
		}
	})
	return out, nodes
}

// eventSource decodes one event source; ok is false when it is unusable
// (the errors are recorded).
func (d *decoder) eventSource(item *yaml.Node, p string) (EventSource, bool) {
	var ev EventSource
	var formatGiven bool
	var columnsNode, knownNode *yaml.Node
	before := len(d.errs)
	d.mapping(item, p, "an event source", []field{
		{"path", true, func(n *yaml.Node, p string) { d.str(n, p, "a file path or glob", &ev.Path) }},
		{"format", false, func(n *yaml.Node, p string) {
			formatGiven = true
			d.enum(n, p, "format", Formats, (*string)(&ev.Format))
		}},
		{"delimiter", false, func(n *yaml.Node, p string) { d.delimiter(n, p, &ev.Delimiter) }},
		{"kind", true, func(n *yaml.Node, p string) { d.enum(n, p, "event kind", EventKinds, (*string)(&ev.Kind)) }},
		{"columns", true, func(n *yaml.Node, p string) {
			columnsNode = n
			d.eventColumns(n, p, &ev.Columns)
		}},
		{"known_until", false, func(n *yaml.Node, p string) {
			knownNode = n
			d.day(n, p, "the last day the source is known to be complete", &ev.KnownUntil)
		}},
	})
	if ev.Path != "" {
		d.sourceFile(item, p, &ev.Source, formatGiven)
	}
	c := ev.Columns
	switch ev.Kind {
	case EventDriver:
		if columnsNode != nil && c.Name == "" && c.Date != "" {
			d.errAt(columnsNode, p+".columns", "a driver source needs columns.name: the column naming each row's driver")
		}
	case EventClosure:
		if c.Name != "" || c.Value != "" {
			d.errAt(columnsNode, p+".columns", "name and value apply only to kind: driver; a closure has neither")
		}
		if knownNode != nil {
			d.errAt(knownNode, p+".known_until", "known_until applies only to kind: driver")
		}
	}
	return ev, len(d.errs) == before
}

// eventColumns decodes an event source's columns mapping.
func (d *decoder) eventColumns(n *yaml.Node, path string, c *EventColumns) {
	var keysNode *yaml.Node
	d.mapping(n, path, "event columns", []field{
		{"date", true, func(n *yaml.Node, p string) {
			d.str(n, p, "the name of the column holding each event's first day", &c.Date)
		}},
		{"until", false, func(n *yaml.Node, p string) {
			d.str(n, p, "the name of the column holding each event's last day", &c.Until)
		}},
		{"name", false, func(n *yaml.Node, p string) {
			d.str(n, p, "the name of the column holding each driver's name", &c.Name)
		}},
		{"value", false, func(n *yaml.Node, p string) {
			d.str(n, p, "the name of the column holding each driver's value", &c.Value)
		}},
		{"keys", false, func(n *yaml.Node, p string) { c.Keys, keysNode = d.keyColumns(n, p) }},
	})
	seen := map[string]bool{}
	for _, name := range []string{c.Date, c.Until, c.Name, c.Value} {
		if name == "" {
			continue
		}
		if seen[name] {
			d.errAt(n, path, "column %q is named twice among date, until, name and value", name)
		}
		seen[name] = true
	}
	for i, k := range c.Keys {
		at := keysNode
		if keysNode != nil && keysNode.Kind == yaml.SequenceNode && i < len(keysNode.Content) {
			at = keysNode.Content[i]
		}
		if seen[k] {
			d.errAt(at, fmt.Sprintf("%s.keys[%d]", path, i), "column %q is listed twice among the event columns", k)
		}
		seen[k] = true
	}
}

// checkEvents checks the event sources against the rest of the spec: their
// key columns are among the spec's.
func (d *decoder) checkEvents(s *Spec, nodes []*yaml.Node) {
	for i, ev := range s.Events {
		for j, k := range ev.Columns.Keys {
			if !slices.Contains(s.Columns.Keys, k) {
				d.errAt(nodes[i], fmt.Sprintf("events[%d].columns.keys[%d]", i, j),
					"%q is not one of the spec's key columns (columns.keys: %s); an event's keys must be a subset of them", k, quoteList(s.Columns.Keys))
			}
		}
	}
}

// delimiter decodes a one-character CSV delimiter.
func (d *decoder) delimiter(n *yaml.Node, p string, dst *string) {
	sn, ok := d.scalar(n, p, "a one-character CSV delimiter")
	if !ok {
		return
	}
	s := sn.Value // not trimmed: a tab or a space is a delimiter
	if s == "\\t" || s == "tab" {
		s = "\t"
	}
	if len([]rune(s)) != 1 || s == "\"" || s == "\n" || s == "\r" {
		d.errAt(sn, p, "delimiter must be one character other than a quote or newline, found %q", s)
		return
	}
	*dst = s
}

// seasonLength decodes calendar.season_length: one whole number, or a list
// of them (several cycles), each from 1 to 1000.
func (d *decoder) seasonLength(n *yaml.Node, p string, c *Calendar) {
	n = d.resolve(n)
	if n == nil {
		return
	}
	const what = "the season length (periods per season)"
	if n.Kind != yaml.SequenceNode {
		if d.integer(n, p, what, &c.SeasonLength) && (c.SeasonLength < 1 || c.SeasonLength > 1000) {
			d.errAt(n, p, "season_length must be between 1 and 1000, found %d", c.SeasonLength)
			c.SeasonLength = 0
		}
		return
	}
	if len(n.Content) < 2 {
		d.errAt(n, p, "a list of season lengths needs at least two (several cycles, e.g. [7, 365]); for one cycle write a number, season_length: 7")
		return
	}
	var seasons []int
	ok := true
	for i, item := range n.Content {
		ip := fmt.Sprintf("%s[%d]", p, i)
		var v int
		if !d.integer(item, ip, what, &v) {
			ok = false
			continue
		}
		switch {
		case v < 1 || v > 1000:
			d.errAt(item, ip, "season_length must be between 1 and 1000, found %d", v)
			ok = false
		case v < 2:
			d.errAt(item, ip, "each season length of a list must be at least 2, found %d", v)
			ok = false
		case slices.Contains(seasons, v):
			d.errAt(item, ip, "season length %d is listed twice", v)
			ok = false
		}
		seasons = append(seasons, v)
	}
	if !ok {
		return
	}
	slices.Sort(seasons)
	c.SeasonLength = seasons[0]
	if len(seasons) > 1 {
		c.Seasons = seasons
	}
}
