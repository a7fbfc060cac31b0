package spec

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
)

// canonicalSpec is the canonical form's shape: every field explicit, defaults
// filled, in a fixed order. Paths appear as written in the spec, so the hash
// does not depend on where the checkout lives.
type canonicalSpec struct {
	Version       int                 `json:"version"`
	Name          string              `json:"name"`
	Sources       []canonicalSource   `json:"sources"`
	Events        []canonicalEvent    `json:"events,omitempty"`
	Columns       canonicalColumns    `json:"columns"`
	Calendar      canonicalCalendar   `json:"calendar"`
	Shaping       canonicalShaping    `json:"shaping"`
	Decomposition map[string]any      `json:"decomposition"`
	Methods       []canonicalMethod   `json:"methods"`
	Horizon       int                 `json:"horizon"`
	Output        string              `json:"output"`
	Limits        canonicalLimits     `json:"limits"`
	Backtest      *canonicalBacktest  `json:"backtest,omitempty"`
	Selection     *canonicalSelect    `json:"selection,omitempty"`
	Intervals     *canonicalIntervals `json:"intervals,omitempty"`
	Totals        *canonicalTotals    `json:"totals,omitempty"`
	Report        *canonicalReport    `json:"report,omitempty"`
	Problems      *canonicalProblems  `json:"problems,omitempty"`
}

type canonicalReport struct {
	Series []string `json:"series"`
	Picks  int      `json:"picks"`
}

type canonicalBacktest struct {
	Folds        int    `json:"folds"`
	Step         int    `json:"step"`
	Horizon      int    `json:"horizon"`
	Window       string `json:"window"`
	MinTrain     int    `json:"min_train"`
	WindowLength int    `json:"window_length"`
}

type canonicalSelect struct {
	Fallback string              `json:"fallback"`
	Route    map[string][]string `json:"route,omitempty"`
	Metric   string              `json:"metric"`
	Combine  *Combination        `json:"combine,omitempty"`
	// Choose is written only when it is not the default (best), so that
	// the canonical form, and the hash, of specs written before the
	// choose key existed do not change.
	Choose string `json:"choose,omitempty"`
}

type canonicalIntervals struct {
	Levels     []int  `json:"levels"`
	Source     string `json:"source"`
	AllMethods bool   `json:"all_methods"`
	// omitempty keeps the canonical form (and hash) of specs written
	// before the option existed.
	AllowNegative bool `json:"allow_negative,omitempty"`
}

type canonicalTotals struct {
	LeadTimes []int `json:"lead_times"`
	Levels    []int `json:"levels"`
}

type canonicalLimits struct {
	MaxSeries  int `json:"max_series"`
	MaxPeriods int `json:"max_periods"`
}

type canonicalSource struct {
	Path      string `json:"path"`
	Format    string `json:"format"`
	Delimiter string `json:"delimiter,omitempty"`
}

type canonicalColumns struct {
	Time  string   `json:"time"`
	Value string   `json:"value"`
	Keys  []string `json:"keys"`
}

// canonicalCalendar: season_length is an int with one season (as it has
// always been written) and the ascending list with several.
type canonicalCalendar struct {
	Frequency    string `json:"frequency"`
	SeasonLength any    `json:"season_length"`
}

// canonicalEvent is one event source; specs without events have no events
// key, so their canonical form and hash are what they always were.
type canonicalEvent struct {
	Path       string                `json:"path"`
	Format     string                `json:"format"`
	Delimiter  string                `json:"delimiter,omitempty"`
	Kind       string                `json:"kind"`
	Columns    canonicalEventColumns `json:"columns"`
	KnownUntil string                `json:"known_until,omitempty"`
}

type canonicalEventColumns struct {
	Date  string   `json:"date"`
	Until string   `json:"until,omitempty"`
	Name  string   `json:"name,omitempty"`
	Value string   `json:"value,omitempty"`
	Keys  []string `json:"keys"`
}

// canonicalShaping: the options added after the first release appear only
// when they differ from their defaults, so specs that do not use them keep
// the hash (and run id) they always had.
type canonicalShaping struct {
	Combine     string `json:"combine"`
	Gaps        string `json:"gaps"`
	End         string `json:"end"`
	Until       string `json:"until,omitempty"`
	StrayDates  string `json:"stray_dates,omitempty"`
	Partial     string `json:"partial_period,omitempty"`
	KeyVariants string `json:"key_variants,omitempty"`
}

type canonicalProblems struct {
	Detail string `json:"detail"`
}

func nonDefault[T ~string](v, def T) string {
	if v == def {
		return ""
	}
	return string(v)
}

// canonicalDecomposition is {"method": …, <options>…}; encoding/json sorts
// the keys.
func canonicalDecomposition(d Decomposition) map[string]any {
	out := map[string]any{"method": d.Method}
	for k, v := range d.Options {
		out[k] = v
	}
	return out
}

type canonicalMethod struct {
	Method  string         `json:"method"`
	Label   string         `json:"label"`
	Options map[string]any `json:"options"` // encoding/json sorts map keys
}

// Canonical returns the spec's canonical form: compact JSON with every
// default filled in and keys in a fixed order. Two specs that mean the same
// run have the same canonical form, whatever their comments, key order,
// short forms or spacing.
func (s *Spec) Canonical() []byte {
	c := canonicalSpec{
		Version: s.Version,
		Name:    s.Name,
		Columns: canonicalColumns{Time: s.Columns.Time, Value: s.Columns.Value, Keys: s.Columns.Keys},
		Calendar: canonicalCalendar{
			Frequency:    string(s.Calendar.Frequency),
			SeasonLength: canonicalSeasons(s.Calendar),
		},
		Shaping: canonicalShaping{Combine: string(s.Shaping.Combine), Gaps: string(s.Shaping.Gaps), End: string(s.Shaping.End),
			Until:       s.Shaping.Until,
			StrayDates:  nonDefault(s.Shaping.StrayDates, DefaultShaping.StrayDates),
			Partial:     nonDefault(s.Shaping.Partial, DefaultShaping.Partial),
			KeyVariants: nonDefault(s.Shaping.KeyVariants, DefaultShaping.KeyVariants)},
		Decomposition: canonicalDecomposition(s.Decomposition),
		Horizon:       s.Horizon,
		Output:        s.Output,
		Limits:        canonicalLimits{MaxSeries: s.Limits.MaxSeries, MaxPeriods: s.Limits.MaxPeriods},
	}
	if b := s.Backtest; b.Folds > 0 {
		c.Backtest = &canonicalBacktest{Folds: b.Folds, Step: b.Step, Horizon: b.Horizon, Window: string(b.Window), MinTrain: b.MinTrain, WindowLength: b.WindowLength}
		c.Selection = &canonicalSelect{Metric: s.Selection.Metric, Combine: s.Selection.Combine, Fallback: s.Selection.Fallback, Route: s.Selection.Route}
		if s.Selection.Choose != ChooseBest {
			c.Selection.Choose = s.Selection.Choose
		}
	}
	if len(s.Intervals.Levels) > 0 {
		c.Intervals = &canonicalIntervals{Levels: s.Intervals.Levels, Source: s.Intervals.Source, AllMethods: s.Intervals.AllMethods, AllowNegative: s.Intervals.AllowNegative}
	}
	if len(s.Totals.LeadTimes) > 0 {
		c.Totals = &canonicalTotals{LeadTimes: s.Totals.LeadTimes, Levels: s.Totals.Levels}
	}
	if r := s.Report; r != nil {
		c.Report = &canonicalReport{Series: r.Series, Picks: r.Picks}
		if c.Report.Series == nil {
			c.Report.Series = []string{}
		}
	}
	if s.Problems != "" && s.Problems != DetailSummary {
		c.Problems = &canonicalProblems{Detail: string(s.Problems)}
	}
	if c.Columns.Keys == nil {
		c.Columns.Keys = []string{}
	}
	for _, src := range s.Sources {
		c.Sources = append(c.Sources, canonicalSource{Path: src.Path, Format: string(src.Format), Delimiter: src.Delimiter})
	}
	for _, ev := range s.Events {
		c.Events = append(c.Events, canonicalEvent{Path: ev.Path, Format: string(ev.Format), Delimiter: ev.Delimiter, Kind: string(ev.Kind),
			Columns: canonicalEventColumns{Date: ev.Columns.Date, Until: ev.Columns.Until, Name: ev.Columns.Name, Value: ev.Columns.Value,
				Keys: append([]string{}, ev.Columns.Keys...)},
			KnownUntil: ev.KnownUntil})
	}
	for _, m := range s.Methods {
		opts := m.Options
		if opts == nil {
			opts = map[string]any{}
		}
		c.Methods = append(c.Methods, canonicalMethod{Method: m.Method, Label: m.Label, Options: opts})
	}
	b, err := json.Marshal(c)
	if err != nil {
		panic("spec: canonical form: " + err.Error())
	}
	return b
}

func canonicalSeasons(c Calendar) any {
	if c.SeveralCycles() {
		return c.Seasons
	}
	return c.SeasonLength
}

// Hash returns the hex SHA-256 of the canonical form.
func (s *Spec) Hash() string {
	sum := sha256.Sum256(s.Canonical())
	return hex.EncodeToString(sum[:])
}

// FromCanonical decodes a spec from its canonical form (as recorded in a
// run's manifest), so that a run can be reproduced from its manifest alone.
// The canonical form nests each method's options under "options" and writes
// every default; it is turned back into spec syntax and decoded by Parse,
// so the result has passed the same checks as any spec.
func FromCanonical(canonical []byte, file string) (*Spec, error) {
	var c map[string]any
	if err := json.Unmarshal(canonical, &c); err != nil {
		return nil, ErrorList{{File: file, Msg: "canonical spec: " + err.Error()}}
	}
	if ms, ok := c["methods"].([]any); ok {
		for i, m := range ms {
			mm, ok := m.(map[string]any)
			if !ok {
				continue
			}
			flat := map[string]any{}
			for k, v := range mm {
				if k != "options" {
					flat[k] = v
				}
			}
			if opts, ok := mm["options"].(map[string]any); ok {
				for k, v := range opts {
					flat[k] = v
				}
			}
			ms[i] = flat
		}
	}
	// The canonical form always carries the (default) decomposition, but a
	// spec with a season length below 2 may not name one: leave it out.
	if cal, ok := c["calendar"].(map[string]any); ok {
		if sl, ok := cal["season_length"].(float64); ok && sl < 2 {
			delete(c, "decomposition")
		}
	}
	if b, ok := c["backtest"].(map[string]any); ok {
		if wl, ok := b["window_length"].(float64); ok && wl == 0 {
			delete(b, "window_length")
		}
	}
	if sel, ok := c["selection"].(map[string]any); ok && sel["combine"] == nil {
		delete(sel, "combine")
	}
	src, err := json.Marshal(c)
	if err != nil {
		return nil, err
	}
	return Parse(src, file)
}
