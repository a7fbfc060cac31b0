package pipeline

import (
	"context"
	"fmt"
	"slices"

	"almanac/engines"
	"almanac/spec"
)

// SeriesParams refits every method of a stored run on one series and
// returns the fitted parameters of those that report them (label → name →
// value), for the explain command. The run is rebuilt from its manifest's
// canonical spec and its recorded inputs, so the parameters are those of the
// run's final forecasts.
func SeriesParams(ctx context.Context, runDir string, key []string) (map[string]map[string]float64, error) {
	m, err := ReadManifest(runDir)
	if err != nil {
		return nil, err
	}
	s, err := spec.FromCanonical(m.Spec.Canonical, runDir+"/manifest.json")
	if err != nil {
		return nil, err
	}
	s.File, s.Dir = m.Spec.File, m.Spec.Dir
	methods, _, err := compileMethods(s)
	if err != nil {
		return nil, err
	}
	files, err := resolveSources(s)
	if err != nil {
		return nil, err
	}
	cal := calendar{freq: s.Calendar.Frequency, season: s.Calendar.SeasonLength}
	rs, err := readInputs(ctx, s, files, cal, 0)
	if err != nil {
		return nil, err
	}
	series, err := shapeRows(rs, s.Shaping, s.Limits, cal, s.Columns.Keys)
	if err != nil {
		return nil, err
	}
	i := slices.IndexFunc(series, func(se *Series) bool { return slices.Equal(se.Key, key) })
	if i < 0 || series[i].Skip != "" {
		return nil, fmt.Errorf("series %v not found in the run's inputs", key)
	}
	out := map[string]map[string]float64{}
	for _, mr := range methods {
		fitted, err := safeFit(mr.method, series[i].Values, s.Calendar.SeasonLength)
		if err != nil {
			continue
		}
		if p, ok := fitted.(engines.Parameterized); ok {
			ps := map[string]float64{}
			for _, x := range p.Params() {
				ps[x.Name] = x.Value
			}
			out[mr.spec.Label] = ps
		}
	}
	return out, nil
}

func safeFit(m engines.Method, y []float64, season int) (f engines.Fitted, err error) {
	defer func() {
		if p := recover(); p != nil {
			f, err = nil, panicError(p)
		}
	}()
	return m.Fit(y, season)
}
