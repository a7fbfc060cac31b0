package report

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"almanac/pipeline/runfolder"
)

// drawnMethod is the entry whose forecast a run's charts show: the chosen
// rows with a backtest, else opt.Method or the first method of the spec.
func drawnMethod(r *runfolder.Run, opt Options) (label string, useChosen bool, err error) {
	cols, err := r.Columns(runfolder.TableForecasts)
	if err != nil {
		return "", false, err
	}
	for _, c := range cols {
		if c == "chosen" {
			return "", true, nil
		}
	}
	if opt.Method != "" {
		return opt.Method, false, nil
	}
	if len(r.Manifest.Methods) > 0 {
		return r.Manifest.Methods[0].Label, false, nil
	}
	return "", false, nil
}

// drawn is the forecast of one series that a chart shows.
type drawn struct {
	method string
	model  string
	source string // interval_source of the first row ("" when none)
	points []fcPoint
}

// chosenForecasts reads, per series, the drawn entry's forecast of a run
// (only the series in want, when want is not nil).
func chosenForecasts(r *runfolder.Run, keys []string, opt Options, levels []int, want map[string]bool) (map[string]*drawn, error) {
	out := map[string]*drawn{}
	if !r.HasTable(runfolder.TableForecasts) {
		return out, nil
	}
	label, useChosen, err := drawnMethod(r, opt)
	if err != nil {
		return nil, err
	}
	cols := append([]string{}, keys...)
	cols = append(cols, runfolder.ColMethod, runfolder.ColModel, runfolder.ColPeriod, runfolder.ColValue)
	if useChosen {
		cols = append(cols, runfolder.ColChosen)
	}
	for _, l := range levels {
		cols = append(cols, runfolder.ColLower(l), runfolder.ColUpper(l))
	}
	if len(levels) > 0 {
		cols = append(cols, runfolder.ColIntervalSource)
	}
	f := runfolder.ScanFilter{Columns: cols}
	if want != nil && len(keys) > 0 {
		f.KeyColumn, f.KeyValues = keys[0], firstParts(want, len(keys))
	}
	err = r.Scan(runfolder.TableForecasts, f, func(t *runfolder.Table) error {
		for i := 0; i < t.Rows; i++ {
			if useChosen {
				if !t.Bool(runfolder.ColChosen, i) {
					continue
				}
			} else if m, _ := t.Str(runfolder.ColMethod, i); m != label {
				continue
			}
			k := t.Key(keys, i)
			if want != nil && !want[k] {
				continue
			}
			p, ok := t.Date(runfolder.ColPeriod, i)
			if !ok {
				continue
			}
			pt := fcPoint{period: p, value: t.Float(runfolder.ColValue, i)}
			for _, l := range levels {
				pt.lower = append(pt.lower, t.Float(runfolder.ColLower(l), i))
				pt.upper = append(pt.upper, t.Float(runfolder.ColUpper(l), i))
			}
			d := out[k]
			if d == nil {
				d = &drawn{method: strClone(t, runfolder.ColMethod, i), model: strClone(t, runfolder.ColModel, i)}
				if len(levels) > 0 {
					d.source = strClone(t, runfolder.ColIntervalSource, i)
				}
				out[strings.Clone(k)] = d
			}
			d.points = append(d.points, pt)
		}
		return nil
	})
	return out, err
}

// firstParts are the first key values of the keys in want, for skipping
// row groups; nil (no skipping) when a key does not split into nkeys parts
// (a key value that itself holds " / ").
func firstParts(want map[string]bool, nkeys int) map[string]bool {
	out := map[string]bool{}
	for k := range want {
		parts := strings.Split(k, " / ")
		if len(parts) != nkeys {
			return nil
		}
		out[parts[0]] = true
	}
	return out
}

// comparePrevious ranks the series by how much their drawn forecast moved
// since the previous run, and returns the previous run's forecasts.
func (m *model) comparePrevious(dir string) (map[string]*drawn, error) {
	pr, err := runfolder.Open(dir)
	if err != nil {
		return nil, err
	}
	psp, err := pr.Spec()
	if err != nil {
		return nil, err
	}
	if strings.Join(psp.Columns.Keys, "\x00") != strings.Join(m.keys, "\x00") {
		return nil, fmt.Errorf("the previous run %s has key columns [%s], this run [%s]: its series cannot be matched",
			dir, strings.Join(psp.Columns.Keys, ", "), strings.Join(m.keys, ", "))
	}
	prev, err := chosenForecasts(pr, psp.Columns.Keys, Options{Method: m.opt.Method}, nil, nil)
	if err != nil {
		return nil, err
	}
	now, err := chosenForecasts(m.run, m.keys, m.opt, nil, nil)
	if err != nil {
		return nil, err
	}
	for k, d := range now {
		pts := d.points
		old, ok := prev[k]
		if !ok {
			m.newOnly++
			continue
		}
		byDay := map[int64]float64{}
		for _, p := range old.points {
			byDay[p.period.Unix()] = p.value
		}
		var diff, base float64
		n := 0
		for _, p := range pts {
			o, ok := byDay[p.period.Unix()]
			if !ok || math.IsNaN(o) || math.IsNaN(p.value) {
				continue
			}
			diff += math.Abs(p.value - o)
			base += math.Abs(o)
			n++
		}
		if n == 0 {
			continue
		}
		rel := 0.0
		switch {
		case base > 0:
			rel = diff / base
		case diff > 0:
			rel = math.Inf(1)
		}
		m.changes = append(m.changes, change{key: k, rel: rel, periods: n, prevMethod: old.method, nowMethod: d.method})
	}
	for k := range prev {
		if _, ok := now[k]; !ok {
			m.prevOnly++
		}
	}
	sort.Slice(m.changes, func(i, j int) bool {
		if m.changes[i].rel != m.changes[j].rel {
			return m.changes[i].rel > m.changes[j].rel
		}
		return m.changes[i].key < m.changes[j].key
	})
	return prev, nil
}

// fillSeries reads the history, forecast, factors and problems of the
// listed series.
func (m *model) fillSeries(prev map[string]*drawn) error {
	if len(m.series) == 0 {
		return nil
	}
	by := map[string]*seriesData{}
	want := map[string]bool{}
	for _, s := range m.series {
		by[s.key] = s
		want[s.key] = true
	}
	filter := func(cols ...string) runfolder.ScanFilter {
		f := runfolder.ScanFilter{Columns: append(append([]string{}, m.keys...), cols...)}
		if len(m.keys) > 0 {
			f.KeyColumn, f.KeyValues = m.keys[0], firstParts(want, len(m.keys))
		}
		return f
	}
	r := m.run
	if err := m.loadComponents(r, by, filter); err != nil {
		return err
	}
	if r.HasTable(runfolder.TableForecasts) {
		fc, err := chosenForecasts(r, m.keys, m.opt, m.levels, want)
		if err != nil {
			return err
		}
		for k, d := range fc {
			s := by[k]
			s.found = true
			s.forecast = d.points
			s.method, s.model, s.source = d.method, d.model, d.source
		}
	}
	if err := m.loadTotals(r, by, filter); err != nil {
		return err
	}
	if err := m.loadFactors(r, by, filter); err != nil {
		return err
	}
	for i := range m.choices {
		if s := by[m.choices[i].key]; s != nil {
			s.found = true
			s.choice = &m.choices[i]
		}
	}
	for _, p := range m.problems {
		if s := by[p.key]; s != nil && p.hasKey {
			s.problems = append(s.problems, p)
		}
	}
	for k, s := range by {
		if d, ok := prev[k]; ok {
			s.previous = d.points
			s.prevWhat = d.method
		}
	}
	return nil
}

// loadComponents reads the observed values and trend of the listed series.
func (m *model) loadComponents(r *runfolder.Run, by map[string]*seriesData, filter func(cols ...string) runfolder.ScanFilter) error {
	if !r.HasTable(runfolder.TableComponents) {
		return nil
	}
	return r.Scan(runfolder.TableComponents, filter(runfolder.ColDecomposition, runfolder.ColForm, runfolder.ColPeriod, runfolder.ColObserved, runfolder.ColTrend), func(t *runfolder.Table) error {
		for i := 0; i < t.Rows; i++ {
			s := by[t.Key(m.keys, i)]
			if s == nil {
				continue
			}
			p, ok := t.Date(runfolder.ColPeriod, i)
			if !ok {
				continue
			}
			s.foundIn(t, i)
			s.periods = append(s.periods, p)
			s.observed = append(s.observed, t.Float(runfolder.ColObserved, i))
			s.trend = append(s.trend, t.Float(runfolder.ColTrend, i))
		}
		return nil
	})
}

// loadFactors reads the seasonal factors of the listed series.
func (m *model) loadFactors(r *runfolder.Run, by map[string]*seriesData, filter func(cols ...string) runfolder.ScanFilter) error {
	if !r.HasTable(runfolder.TableSeasonalFactors) {
		return nil
	}
	cols := []string{runfolder.ColDecomposition, runfolder.ColForm, runfolder.ColPosition, runfolder.ColFactor, runfolder.ColCount}
	// With several season lengths the table holds each cycle's factors
	// (season_length ascending within a series); the chart shows the
	// primary, shortest cycle.
	have, err := r.Columns(runfolder.TableSeasonalFactors)
	if err != nil {
		return err
	}
	several := slices.Contains(have, runfolder.ColSeasonLength)
	if several {
		cols = append(cols, runfolder.ColSeasonLength)
	}
	return r.Scan(runfolder.TableSeasonalFactors, filter(cols...), func(t *runfolder.Table) error {
		for i := 0; i < t.Rows; i++ {
			s := by[t.Key(m.keys, i)]
			if s == nil {
				continue
			}
			if several {
				sl, _ := t.Int(runfolder.ColSeasonLength, i)
				if s.factorSeason == 0 {
					s.factorSeason = sl
				}
				if sl != s.factorSeason {
					continue
				}
			}
			pos, ok := t.Int(runfolder.ColPosition, i)
			if !ok {
				continue
			}
			s.foundIn(t, i)
			c, _ := t.Int(runfolder.ColCount, i)
			s.factors = append(s.factors, factor{position: pos, value: t.Float(runfolder.ColFactor, i), count: c})
		}
		return nil
	})
}

// foundIn marks the series as found in a decomposition table (components
// or seasonal factors) and takes its decomposition and form from row i
// the first time.
func (s *seriesData) foundIn(t *runfolder.Table, i int) {
	s.found = true
	if s.decomp == "" {
		s.decomp = strClone(t, runfolder.ColDecomposition, i)
		s.form = strClone(t, runfolder.ColForm, i)
	}
}
