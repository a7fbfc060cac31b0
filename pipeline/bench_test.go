package pipeline

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"almanac/pipeline/synth"
	"almanac/spec"
)

// BenchmarkRunGardenExample runs the shipped garden-supply example (48
// weekly series, nine methods, three backtest folds, a combination,
// intervals) end to end and reports the time per series.
func BenchmarkRunGardenExample(b *testing.B) {
	s, err := spec.Load(filepath.Join("..", "examples", "garden-supply", "spec.yaml"))
	if err != nil {
		b.Fatal(err)
	}
	out := filepath.Join(b.TempDir(), "run")
	var series int
	for b.Loop() {
		sum, err := Run(context.Background(), s, Options{Out: out, Workers: 1})
		if err != nil {
			b.Fatal(err)
		}
		series = sum.Manifest.Series
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*series), "ns/series")
}

// BenchmarkRunPanel5Methods3Folds: 2,000 synthetic weekly series × 156
// periods through five methods and three folds, one worker and two.
func BenchmarkRunPanel5Methods3Folds(b *testing.B) {
	dir := b.TempDir()
	panel := filepath.Join(dir, "panel.parquet")
	if err := synth.Write(panel, synth.Options{Series: 2000, Length: 156, Intermittent: 0.1}); err != nil {
		b.Fatal(err)
	}
	src := `version: 1
name: bench
sources: [panel.parquet]
columns: {time: period, value: units, keys: [region, item]}
calendar: {frequency: week}
methods: [naive, seasonal_naive, drift, {method: classical}, sba]
horizon: 13
backtest: {folds: 3}
output: run
`
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(src), 0o644)
	s, err := spec.Load(filepath.Join(dir, "spec.yaml"))
	if err != nil {
		b.Fatal(err)
	}
	for _, w := range []int{1, 2} {
		b.Run(map[int]string{1: "workers=1", 2: "workers=2"}[w], func(b *testing.B) {
			for b.Loop() {
				if _, err := Run(context.Background(), s, Options{Workers: w}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*2000), "ns/series")
		})
	}
}
