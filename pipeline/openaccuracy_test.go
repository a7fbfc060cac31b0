package pipeline

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"almanac/engines"
)

// holdoutFixture is engines/testdata/reference/holdout/<dataset>.json: an
// open dataset from R's datasets package, split so the last season is held
// out, with R's forecasts and MASE for the held-out season.
type holdoutFixture struct {
	Source    string    `json:"source"`
	Dataset   string    `json:"dataset"`
	Frequency int       `json:"frequency"`
	Start     []int     `json:"start"`
	X         []float64 `json:"x"`
	NTrain    int       `json:"n_train"`
	Test      []float64 `json:"test"`
	Methods   []struct {
		Name string  `json:"name"`
		MASE float64 `json:"mase"`
	} `json:"methods"`
}

// The automatic choice, on open data. For AirPassengers, nottem, UKgas and
// USAccDeaths (R's datasets package), holding out the last season:
// almanac's per-series choice, made from backtests on the training part
// only, must have a lower mean MASE on the held-out seasons than seasonal
// naive and than R's HoltWinters() with its defaults (R 4.2.2, figures in
// the fixtures, made by engines/testdata/reference/holdout/make_holdout.R).
func TestOpenDataChoiceBeatsBenchmarks(t *testing.T) {
	var ours, snaive, rhw []float64
	var table strings.Builder
	fmt.Fprintf(&table, "| dataset | m | almanac choice | almanac MASE | seasonal naive | R HoltWinters() |\n|---|---|---|---|---|---|\n")
	for _, ds := range []string{"AirPassengers", "nottem", "UKgas", "USAccDeaths"} {
		b, err := os.ReadFile(filepath.Join("..", "engines", "testdata", "reference", "holdout", ds+".json"))
		if err != nil {
			t.Fatal(err)
		}
		var fx holdoutFixture
		if err := json.Unmarshal(b, &fx); err != nil {
			t.Fatal(err)
		}
		m := fx.Frequency
		freq := map[int]string{12: "month", 4: "quarter"}[m]
		dir := t.TempDir()
		var csv strings.Builder
		csv.WriteString("t,v\n")
		for i := 0; i < fx.NTrain; i++ {
			k := fx.Start[1] - 1 + i
			y := fx.Start[0] + k/m
			if m == 12 {
				fmt.Fprintf(&csv, "%04d-%02d,%.10g\n", y, k%m+1, fx.X[i])
			} else {
				fmt.Fprintf(&csv, "%04d-Q%d,%.10g\n", y, k%m+1, fx.X[i])
			}
		}
		os.WriteFile(filepath.Join(dir, "train.csv"), []byte(csv.String()), 0o644)
		spec := fmt.Sprintf(`version: 1
name: open-%s
sources: [train.csv]
columns: {time: t, value: v}
calendar: {frequency: %s}
methods:
  - seasonal_naive
  - {method: classical, form: multiplicative}
  - {method: classical, form: additive, label: classical_add}
  - {method: holt_winters, seasonal: additive, label: hw_add}
  - {method: holt_winters, seasonal: multiplicative, label: hw_mult}
  - {method: holt_winters, seasonal: multiplicative, damped: true, label: hw_mult_damped}
  - smoothing_auto
  - theta
  - stl
horizon: %d
backtest: {folds: 4, step: %d}
selection: {metric: mase, combine: {kind: mean, top: 3}}
output: run
`, ds, freq, m, max(1, m/4))
		s := loadFixture(t, dir, spec)
		if _, err := Run(context.Background(), s, Options{}); err != nil {
			t.Fatal(err)
		}
		fc := readTable(t, filepath.Join(dir, "run", "forecasts.parquet"))
		var f []float64
		chosen := ""
		for i := 0; i < fc.rows; i++ {
			if fc.cols["chosen"].(interface{ Value(int) bool }).Value(i) {
				f = append(f, fc.f64("value", i))
				chosen = fc.str("model", i)
			}
		}
		if len(f) != m {
			t.Fatalf("%s: %d chosen forecasts", ds, len(f))
		}
		mase, _, err := engines.MASE(fx.Test, f, fx.X[:fx.NTrain], m)
		if err != nil {
			t.Fatal(err)
		}
		var sn, hw float64
		for _, r := range fx.Methods {
			switch r.Name {
			case "seasonal_naive":
				sn = r.MASE
			case "holtwinters_additive": // HoltWinters()'s default form
				hw = r.MASE
			}
		}
		ours, snaive, rhw = append(ours, mase), append(snaive, sn), append(rhw, hw)
		fmt.Fprintf(&table, "| %s | %d | %s | %.3f | %.3f | %.3f |\n", ds, m, chosen, mase, sn, hw)
	}
	mean := func(v []float64) float64 {
		s := 0.0
		for _, x := range v {
			s += x
		}
		return s / float64(len(v))
	}
	fmt.Fprintf(&table, "| **mean** | | | **%.3f** | %.3f | %.3f |\n", mean(ours), mean(snaive), mean(rhw))
	t.Logf("held-out last season, MASE (scale: in-sample seasonal naive MAE of the training part):\n%s", table.String())
	if !(mean(ours) < mean(snaive)) || !(mean(ours) < mean(rhw)) || math.IsNaN(mean(ours)) {
		t.Errorf("almanac's choice: mean MASE %.3f; seasonal naive %.3f; R HoltWinters %.3f", mean(ours), mean(snaive), mean(rhw))
	}
}
