package pipeline

import (
	"context"
	"fmt"
	"path/filepath"
	"runtime"
	"slices"

	"almanac/engines"
	"almanac/pipeline/calendar"
	"almanac/pipeline/forecast"
	"almanac/pipeline/ingest"
	"almanac/pipeline/runfolder"
	"almanac/pipeline/series"
	"almanac/spec"
)

// SeriesParams refits every method of a stored run on one series and
// returns the fitted parameters of those that report them (label → name →
// value), for the explain command. The run is rebuilt from its manifest's
// canonical spec and its recorded inputs, so the parameters are those of the
// run's final forecasts.
func SeriesParams(ctx context.Context, runDir string, key []string) (map[string]map[string]float64, error) {
	m, err := runfolder.ReadManifest(runDir)
	if err != nil {
		return nil, err
	}
	s, err := spec.FromCanonical(m.Spec.Canonical, filepath.Join(runDir, runfolder.ManifestFile))
	if err != nil {
		return nil, err
	}
	s.File, s.Dir = m.Spec.File, m.Spec.Dir
	methods, _, err := forecast.Compile(s)
	if err != nil {
		return nil, err
	}
	files, err := ingest.ResolveSources(s)
	if err != nil {
		return nil, err
	}
	cal := calendar.Calendar{Freq: s.Calendar.Frequency, Season: s.Calendar.SeasonLength}
	rs, err := ingest.Read(ctx, s, files, cal, 0)
	if err != nil {
		return nil, err
	}
	all, err := series.Shape(rs, s.Shaping, s.Limits, cal, s.Columns.Keys, runtime.NumCPU())
	if err != nil {
		return nil, err
	}
	i := slices.IndexFunc(all, func(se *series.Series) bool { return slices.Equal(se.Key, key) })
	if i < 0 || all[i].Skip != "" {
		return nil, fmt.Errorf("series %v not found in the run's inputs", key)
	}
	if len(s.Events) > 0 {
		// The run checked the events; the refit sees the same closed
		// periods the run's fits did.
		evFiles, err := ingest.ResolveEvents(s)
		if err != nil {
			return nil, err
		}
		ev, err := ingest.ReadEvents(ctx, s, evFiles)
		if err != nil {
			return nil, err
		}
		series.NewAttacher(ev, cal, s.Horizon).Attach(all[i])
	}
	out := map[string]map[string]float64{}
	ec, err := forecast.Context(all[i], s.Calendar.AllSeasons(), 0, len(all[i].Values), s.Horizon)
	if err != nil {
		return nil, err
	}
	for _, mr := range methods {
		fitted, err := forecast.SafeFit(forecast.WithContext(mr.Engine, ec), all[i].Values, s.Calendar.AllSeasons())
		if err != nil {
			continue
		}
		if p, ok := fitted.(engines.Parameterized); ok {
			ps := map[string]float64{}
			for _, x := range p.Params() {
				ps[x.Name] = x.Value
			}
			out[mr.Spec.Label] = ps
		}
	}
	return out, nil
}

// Refit is SeriesParams bound to ctx, in the form explain.Options.Refit takes.
func Refit(ctx context.Context) func(runDir string, key []string) (map[string]map[string]float64, error) {
	return func(runDir string, key []string) (map[string]map[string]float64, error) {
		return SeriesParams(ctx, runDir, key)
	}
}
