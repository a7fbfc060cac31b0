// Package rundiff compares two almanac run folders — typically the run of
// the main line ("base") and the run of a proposed change ("head") — so a
// reviewer can see what the change does to the forecasts before accepting
// it.
//
// # What is compared
//
// When both runs have a backtest (both wrote choices.parquet) the diff has
// one row per series: the entry chosen for the series on each side (the
// choices table's chosen label), the total of that entry's forecasts over
// the run's horizon, and the chosen entry's backtest score
// (choices.score). A series whose chosen label differs between the runs has
// switched method.
//
// When either run has no backtest, there is no chosen entry to follow on
// both sides, so the diff has one row per series × method instead (every
// method label found in either run's forecasts.parquet): the total of that
// method's forecasts over the horizon on each side. Scores are not compared
// and nothing switches. Row.Method names the method, and BaseMethod and
// HeadMethod both hold it on the sides where the method has forecasts.
//
// A forecast total is the sum of the entry's values over all its steps. It
// is undefined (NaN, NULL in Parquet) when the entry has no rows for the
// series or any of its values is NULL. When the runs' horizons differ each
// total covers its own run's horizon; Diff.Notes says so.
//
// Rows are "added" (only in head), "removed" (only in base), "changed"
// (present in both, and the total, the chosen label or the score differ;
// floats are compared exactly, an undefined value equals only an undefined
// value) or "unchanged".
//
// The relative change is (head − base) / |base|. With a base total of zero
// it is 0 when the head total is zero too and ±Inf otherwise (written as
// NULL to Parquet, "from 0" in the reports).
//
// # Ordering
//
// Rows are sorted by key (byte order of the key strings, column by column,
// as in every run table), then in per-method mode by method: head's spec
// order, then methods only base has in base's spec order, then any other
// label (a combination entry) in byte order. The largest movers are the
// changed rows with a defined, non-zero change, by absolute relative change
// (largest first, ±Inf before any finite value), ties in row order.
//
// # Command line (proposal)
//
//	almanac diff BASE HEAD [--format text|markdown] [--parquet FILE] [--top N]
//	    [--max-rel-change F] [--max-switch-share F] [--max-score-worsening F]
//	    [--max-added N] [--max-removed N]
//
// Exit codes: 0 when the diff is within every threshold given (or none is
// given); 1 when Exceeds returns any reason (each printed on stderr);
// 2 for usage errors and folders Compare cannot read (not a run folder,
// different key columns, unreadable tables).
package rundiff

import (
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"almanac/pipeline/runfolder"
)

// Mode says what one row of a Diff stands for.
type Mode string

// Modes.
const (
	// ModeChosen: both runs have a backtest; one row per series, following
	// the chosen entry on each side.
	ModeChosen Mode = "chosen"
	// ModePerMethod: at least one run has no backtest; one row per series ×
	// method.
	ModePerMethod Mode = "per_method"
)

// Status of a row.
type Status string

// Row statuses.
const (
	Added     Status = "added"
	Removed   Status = "removed"
	Changed   Status = "changed"
	Unchanged Status = "unchanged"
)

// Options tune Compare.
type Options struct {
	// Top is how many of the largest movers to keep; 0 means 10, a
	// negative value keeps none.
	Top int
	// ListLimit caps the per-series rows of the switches table in the
	// reports (the transition counts are always complete); 0 means 50, a
	// negative value means no cap.
	ListLimit int
}

// DefaultTop is the number of largest movers kept when Options.Top is 0.
const DefaultTop = 10

// DefaultListLimit is the switches-table cap when Options.ListLimit is 0.
const DefaultListLimit = 50

// RunInfo describes one side of the comparison.
type RunInfo struct {
	Dir        string
	SpecName   string
	SpecSHA256 string
	Almanac    string // almanac version that wrote the run
	Series     int    // series in the run's tables
	Horizon    int
	Backtest   bool   // the run has choices.parquet
	Metric     string // selection metric; "" without a backtest
	Methods    []string
}

// Row is one series (ModeChosen) or one series × method (ModePerMethod).
type Row struct {
	Key []string // key values, in key-column order
	// Method is the method label of a per-method row; "" in ModeChosen.
	Method string
	// BaseMethod and HeadMethod are the chosen labels (ModeChosen) or the
	// method where that side has forecasts for it (ModePerMethod); "" when
	// absent or when the run chose nothing for the series.
	BaseMethod, HeadMethod string
	BaseTotal, HeadTotal   float64 // forecast totals over the horizon; NaN when undefined
	AbsChange              float64 // HeadTotal − BaseTotal; NaN when either is undefined
	RelChange              float64 // AbsChange / |BaseTotal|; ±Inf from a zero base; NaN when undefined
	BaseScore, HeadScore   float64 // chosen entry's backtest score; NaN when none
	ScoreChange            float64 // HeadScore − BaseScore (positive is worse); NaN when not comparable
	Switched               bool
	Status                 Status
}

// Transition counts the series that moved from one chosen entry to another.
type Transition struct {
	From, To string // "" stands for "nothing chosen"
	Series   int
}

// Counts summarise a Diff.
type Counts struct {
	BaseSeries, HeadSeries     int // distinct series on each side
	CommonSeries               int // series in both runs
	AddedSeries, RemovedSeries int
	Rows                       int // rows of the diff (series, or series × method)
	Added, Removed             int // rows only in head / only in base
	Changed, Unchanged         int
	TotalsChanged              int     // rows in both whose forecast total differs
	Switched                   int     // series that switched chosen entry
	ScoresCompared             int     // rows in both with a score on each side (same metric)
	MeanScoreChange            float64 // mean ScoreChange over those rows; NaN when none
	BaseSum, HeadSum           float64 // sum of totals over rows in both with both totals defined
	ScoreWorse, ScoreBetter    int     // rows whose score rose / fell
	FromZero                   int     // rows in both whose total changed from a zero base (±Inf relative change)
}

// FieldChange is one top-level field of the canonical spec that differs.
type FieldChange struct {
	Field string
	Note  string // e.g. "6 → 12", or for methods "added drift; removed mean"
}

// InputChange is one input file that differs between the manifests.
// Inputs are matched by path; an input only in base and one only in head
// with the same content (SHA-256) are one "moved" input.
type InputChange struct {
	Path                   string // head's path (base's for a removed input)
	From                   string // base's path of a moved input
	Change                 string // added | removed | changed | moved
	BaseSHA256, HeadSHA256 string
	BaseRows, HeadRows     int64
	BaseSize, HeadSize     int64
}

// Diff is the comparison of two run folders.
type Diff struct {
	Base, Head RunInfo
	Keys       []string // key column names
	Mode       Mode
	Rows       []Row
	Counts     Counts
	// Movers are the largest movers (copies of rows), see the package doc.
	Movers []Row
	// Switches are the rows that switched method, in row order.
	Switches []Row
	// Transitions count switches by (from, to), most frequent first, ties
	// by from then to.
	Transitions []Transition
	SpecChanged bool
	SpecFields  []FieldChange
	Inputs      []InputChange
	// Notes are remarks on the comparison itself (mode, metric or horizon
	// change, almanac version change), in a fixed order.
	Notes []string

	listLimit int
}

// side is one run as read for the comparison.
type side struct {
	run     *runfolder.Run
	info    RunInfo
	canon   map[string]json.RawMessage
	series  map[string][]string        // joined key → key parts
	totals  map[string]map[string]*agg // joined key → method → total
	choices map[string]choice          // joined key → choice
}

type agg struct {
	sum  float64
	n    int
	null bool
}

func (a *agg) total() float64 {
	if a == nil || a.n == 0 || a.null {
		return math.NaN()
	}
	return a.sum
}

type choice struct {
	label string
	score float64
}

// Compare reads two run folders and compares them. It fails when either
// folder is not a readable run folder or when the runs' key columns differ.
func Compare(base, head string, opt Options) (*Diff, error) {
	b, err := load(base)
	if err != nil {
		return nil, fmt.Errorf("base: %w", err)
	}
	h, err := load(head)
	if err != nil {
		return nil, fmt.Errorf("head: %w", err)
	}
	bk, hk := b.run.Keys(), h.run.Keys()
	if !slices.Equal(bk, hk) {
		return nil, fmt.Errorf("the runs have different key columns: base [%s], head [%s]", strings.Join(bk, ", "), strings.Join(hk, ", "))
	}
	d := &Diff{Base: b.info, Head: h.info, Keys: slices.Clone(bk), Mode: ModePerMethod}
	if b.info.Backtest && h.info.Backtest {
		d.Mode = ModeChosen
	}
	d.listLimit = opt.ListLimit
	if d.listLimit == 0 {
		d.listLimit = DefaultListLimit
	}
	d.notes()
	d.specChanges(b, h)
	d.inputChanges(b, h)
	if d.Mode == ModeChosen {
		d.chosenRows(b, h)
	} else {
		d.methodRows(b, h)
	}
	d.summarise(b, h)
	top := opt.Top
	if top == 0 {
		top = DefaultTop
	}
	d.movers(top)
	return d, nil
}

func load(dir string) (*side, error) {
	r, err := runfolder.Open(dir)
	if err != nil {
		return nil, err
	}
	cs, err := r.Spec()
	if err != nil {
		return nil, err
	}
	s := &side{run: r, series: map[string][]string{}, totals: map[string]map[string]*agg{}}
	if err := json.Unmarshal(r.Manifest.Spec.Canonical, &s.canon); err != nil {
		return nil, fmt.Errorf("%s: canonical spec: %v", dir, err)
	}
	s.info = RunInfo{Dir: dir, SpecName: r.Manifest.Spec.Name, SpecSHA256: r.Manifest.Spec.SHA256,
		Almanac: r.Manifest.Almanac, Horizon: cs.Horizon, Backtest: r.HasTable(runfolder.TableChoices)}
	for _, m := range r.Manifest.Methods {
		s.info.Methods = append(s.info.Methods, m.Label)
	}
	keys := cs.Columns.Keys
	fc, err := r.Table(runfolder.TableForecasts)
	if err != nil {
		return nil, err
	}
	for _, c := range append(slices.Clone(keys), runfolder.ColMethod, runfolder.ColValue) {
		if !fc.Has(c) {
			return nil, fmt.Errorf("%s: forecasts.parquet has no column %q", dir, c)
		}
	}
	for i := 0; i < fc.Rows; i++ {
		k := s.addSeries(fc, keys, i)
		m, _ := fc.Str(runfolder.ColMethod, i)
		ms := s.totals[k]
		if ms == nil {
			ms = map[string]*agg{}
			s.totals[k] = ms
		}
		a := ms[m]
		if a == nil {
			a = &agg{}
			ms[m] = a
		}
		v := fc.Float(runfolder.ColValue, i)
		a.n++
		if math.IsNaN(v) {
			a.null = true
		} else {
			a.sum += v
		}
	}
	if err := fc.Err(); err != nil {
		return nil, err
	}
	if s.info.Backtest {
		ch, err := r.Table(runfolder.TableChoices)
		if err != nil {
			return nil, err
		}
		for _, c := range append(slices.Clone(keys), runfolder.ColChosen, runfolder.ColMetric, runfolder.ColScore) {
			if !ch.Has(c) {
				return nil, fmt.Errorf("%s: choices.parquet has no column %q", dir, c)
			}
		}
		s.choices = map[string]choice{}
		for i := 0; i < ch.Rows; i++ {
			k := s.addSeries(ch, keys, i)
			label, _ := ch.Str(runfolder.ColChosen, i)
			s.choices[k] = choice{label: label, score: ch.Float(runfolder.ColScore, i)}
			if m, ok := ch.Str(runfolder.ColMetric, i); ok && s.info.Metric == "" {
				s.info.Metric = m
			}
		}
		if err := ch.Err(); err != nil {
			return nil, err
		}
		if s.info.Metric == "" {
			s.info.Metric = canonString(s.canon, "selection", "metric")
		}
	}
	s.info.Series = len(s.series)
	return s, nil
}

// addSeries records the key of row i and returns it joined.
func (s *side) addSeries(t *runfolder.Table, keys []string, i int) string {
	parts := t.KeyParts(keys, i)
	k := joinKey(parts)
	if _, ok := s.series[k]; !ok {
		s.series[k] = parts
	}
	return k
}

func joinKey(parts []string) string { return strings.Join(parts, "\x00") }

func canonString(c map[string]json.RawMessage, obj, field string) string {
	var m map[string]json.RawMessage
	if json.Unmarshal(c[obj], &m) != nil {
		return ""
	}
	var s string
	if json.Unmarshal(m[field], &s) != nil {
		return ""
	}
	return s
}

// sortedKeys returns the union of both sides' series in key order.
func sortedKeys(b, h *side) [][]string {
	var all [][]string
	for _, p := range b.series {
		all = append(all, p)
	}
	for k, p := range h.series {
		if _, ok := b.series[k]; !ok {
			all = append(all, p)
		}
	}
	sort.Slice(all, func(i, j int) bool { return slices.Compare(all[i], all[j]) < 0 })
	return all
}

func (d *Diff) chosenRows(b, h *side) {
	for _, parts := range sortedKeys(b, h) {
		k := joinKey(parts)
		r := Row{Key: parts, BaseTotal: math.NaN(), HeadTotal: math.NaN(), BaseScore: math.NaN(), HeadScore: math.NaN()}
		bc, inB := b.choices[k]
		hc, inH := h.choices[k]
		if _, ok := b.series[k]; ok && !inB {
			// A series with forecasts but no choices row: treat it as
			// present with nothing chosen.
			inB = true
		}
		if _, ok := h.series[k]; ok && !inH {
			inH = true
		}
		if inB {
			r.BaseMethod, r.BaseScore = bc.label, scoreOf(bc)
			r.BaseTotal = b.totals[k][bc.label].total()
		}
		if inH {
			r.HeadMethod, r.HeadScore = hc.label, scoreOf(hc)
			r.HeadTotal = h.totals[k][hc.label].total()
		}
		r.Switched = inB && inH && r.BaseMethod != r.HeadMethod
		d.finishRow(&r, inB, inH, b.info.Metric == h.info.Metric)
		d.Rows = append(d.Rows, r)
	}
}

func scoreOf(c choice) float64 {
	if c.label == "" {
		return math.NaN()
	}
	return c.score
}

func (d *Diff) methodRows(b, h *side) {
	rank := map[string]int{}
	for _, l := range h.info.Methods {
		if _, ok := rank[l]; !ok {
			rank[l] = len(rank)
		}
	}
	for _, l := range b.info.Methods {
		if _, ok := rank[l]; !ok {
			rank[l] = len(rank)
		}
	}
	for _, parts := range sortedKeys(b, h) {
		k := joinKey(parts)
		var labels []string
		for l := range b.totals[k] {
			labels = append(labels, l)
		}
		for l := range h.totals[k] {
			if _, ok := b.totals[k][l]; !ok {
				labels = append(labels, l)
			}
		}
		sort.Slice(labels, func(i, j int) bool {
			ri, oki := rank[labels[i]]
			rj, okj := rank[labels[j]]
			switch {
			case oki && okj:
				return ri < rj
			case oki != okj:
				return oki
			}
			return labels[i] < labels[j]
		})
		for _, l := range labels {
			ba, inB := b.totals[k][l]
			ha, inH := h.totals[k][l]
			r := Row{Key: parts, Method: l, BaseTotal: ba.total(), HeadTotal: ha.total(),
				BaseScore: math.NaN(), HeadScore: math.NaN()}
			if inB {
				r.BaseMethod = l
			}
			if inH {
				r.HeadMethod = l
			}
			d.finishRow(&r, inB, inH, false)
			d.Rows = append(d.Rows, r)
		}
	}
}

// finishRow fills the changes and the status of a row.
func (d *Diff) finishRow(r *Row, inB, inH, sameMetric bool) {
	r.AbsChange, r.RelChange, r.ScoreChange = math.NaN(), math.NaN(), math.NaN()
	switch {
	case !inB:
		r.Status = Added
		return
	case !inH:
		r.Status = Removed
		return
	}
	if !math.IsNaN(r.BaseTotal) && !math.IsNaN(r.HeadTotal) {
		r.AbsChange = r.HeadTotal - r.BaseTotal
		switch {
		case r.BaseTotal != 0:
			r.RelChange = r.AbsChange / math.Abs(r.BaseTotal)
		case r.AbsChange == 0:
			r.RelChange = 0
		default:
			r.RelChange = math.Inf(int(math.Copysign(1, r.AbsChange)))
		}
	}
	if sameMetric && !math.IsNaN(r.BaseScore) && !math.IsNaN(r.HeadScore) {
		r.ScoreChange = r.HeadScore - r.BaseScore
	}
	if sameFloat(r.BaseTotal, r.HeadTotal) && sameFloat(r.BaseScore, r.HeadScore) && r.BaseMethod == r.HeadMethod {
		r.Status = Unchanged
	} else {
		r.Status = Changed
	}
}

func sameFloat(a, b float64) bool {
	return a == b || (math.IsNaN(a) && math.IsNaN(b))
}
