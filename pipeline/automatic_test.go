package pipeline

import (
	"context"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/array"
)

// A spec without methods runs almanac's default pool, backtest and
// selection: the combination weighted by 1/MASE is chosen for every
// series; a series too short for any fold gets every member with equal
// weights. The weights and values are recomputed here from the accuracy
// and forecasts tables.
func TestAutomaticSpecChoosesTheWeightedCombination(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	s := loadFixture(t, dir, `version: 1
name: auto
sources: [data/sales.csv]
columns: {time: month, value: qty, keys: [store, item]}
calendar: {frequency: month}
horizon: 6
output: out/run
`)
	if !s.Automatic || len(s.Methods) != 4 {
		t.Fatalf("automatic %v, methods %d", s.Automatic, len(s.Methods))
	}
	if _, err := Run(context.Background(), s, Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out", "run")
	acc := readTable(t, filepath.Join(out, "accuracy.parquet"))
	fc := readTable(t, filepath.Join(out, "forecasts.parquet"))
	ch := readTable(t, filepath.Join(out, "choices.parquet"))
	members := []string{"smoothing_auto", "theta", "holt_winters_damped", "stl"}

	// Mean fold MASE per series and member.
	mase := map[string]map[string][]float64{}
	for i := 0; i < acc.rows; i++ {
		key := acc.str("store", i) + "/" + acc.str("item", i)
		if mase[key] == nil {
			mase[key] = map[string][]float64{}
		}
		mase[key][acc.str("method", i)] = append(mase[key][acc.str("method", i)], acc.f64("mase", i))
	}
	values := map[string]map[string][]float64{}
	chosen := map[string]string{}
	model := map[string]string{}
	for i := 0; i < fc.rows; i++ {
		key := fc.str("store", i) + "/" + fc.str("item", i)
		if values[key] == nil {
			values[key] = map[string][]float64{}
		}
		m := fc.str("method", i)
		values[key][m] = append(values[key][m], fc.f64("value", i))
		if fc.cols["chosen"].(*array.Boolean).Value(i) {
			chosen[key] = m
			model[key] = fc.str("model", i)
		}
	}
	for _, key := range []string{"S1/A", "S1/B", "S2/A", "S2/B"} {
		if chosen[key] != "combination" {
			t.Errorf("%s: chosen %q, want combination", key, chosen[key])
			continue
		}
		// Members that forecast the full history (stl needs two seasons:
		// S2/A has 18 months), weighted ∝ 1/mean fold MASE; members with
		// a MASE of 0 (S2/B is an exact sine on a line) share all the
		// weight, the limit of the rule.
		equal := key == "S2/A" // 18 months: no fold leaves 24 to train on
		var use []string
		for _, m := range members {
			if len(values[key][m]) == 6 {
				use = append(use, m)
			}
		}
		w := make([]float64, len(use))
		zeros := 0
		for j, m := range use {
			w[j] = 1
			if !equal {
				f := mase[key][m]
				if len(f) != 2 {
					t.Fatalf("%s %s: %d folds, want 2", key, m, len(f))
				}
				w[j] = (f[0] + f[1]) / 2
				if w[j] == 0 {
					zeros++
				}
			}
		}
		total := 0.0
		for j := range w {
			switch {
			case equal:
			case zeros > 0 && w[j] == 0:
				w[j] = 1
			case zeros > 0:
				w[j] = 0
			default:
				w[j] = 1 / w[j]
			}
			total += w[j]
		}
		if equal != strings.Contains(model[key], "equal weights") || equal == strings.HasPrefix(model[key], "combination(weighted by 1/mase: ") {
			t.Errorf("%s: model %q", key, model[key])
		}
		if (key == "S2/A") != (len(use) == 3) {
			t.Errorf("%s: %d members forecast the full history", key, len(use))
		}
		for step, v := range values[key]["combination"] {
			want := 0.0
			for j, m := range use {
				want += w[j] / total * values[key][m][step]
			}
			if math.Abs(v-want) > 1e-9*math.Abs(want) {
				t.Errorf("%s step %d: combination %v, want %v", key, step+1, v, want)
			}
		}
	}
	for i := 0; i < ch.rows; i++ {
		key := ch.str("store", i) + "/" + ch.str("item", i)
		want := "choose: combination"
		if key == "S2/A" {
			want = "every method with equal weights"
		}
		if ch.str("chosen", i) != "combination" || !strings.Contains(ch.str("reason", i), want) {
			t.Errorf("%s: choices row chosen %q, reason %q", key, ch.str("chosen", i), ch.str("reason", i))
		}
	}
}

// A strictly positive series that falls fast: drift and holt extrapolate
// below zero; the forecasts are floored at 0 and the model column says so.
// A series with a zero in its history is not floored.
func TestPositiveHistoryFlooredAtZero(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("year,sku,qty\n")
	for i, v := range []float64{200, 185, 168, 150, 139, 120, 104, 90, 71, 60, 45, 30, 22, 12, 8, 5} {
		b.WriteString(strings.Join([]string{itoa(2000 + i), "falling", ftoa(v)}, ",") + "\n")
		z := v
		if i == 3 {
			z = 0
		}
		b.WriteString(strings.Join([]string{itoa(2000 + i), "with-zero", ftoa(z)}, ",") + "\n")
	}
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	s := loadFixture(t, dir, `version: 1
name: floor
sources: [d.csv]
columns: {time: year, value: qty, keys: [sku]}
calendar: {frequency: year}
methods: [drift, holt, naive]
horizon: 8
output: out/run
`)
	if _, err := Run(context.Background(), s, Options{Workers: 1}); err != nil {
		t.Fatal(err)
	}
	fc := readTable(t, filepath.Join(dir, "out", "run", "forecasts.parquet"))
	floored := map[string]bool{}
	for i := 0; i < fc.rows; i++ {
		sku, m, v, model := fc.str("sku", i), fc.str("method", i), fc.f64("value", i), fc.str("model", i)
		isFloored := strings.Contains(model, "floored at 0")
		switch sku {
		case "falling":
			if v < 0 {
				t.Errorf("falling %s: forecast %v < 0", m, v)
			}
			if isFloored {
				floored[m] = true
			}
		case "with-zero":
			if isFloored {
				t.Errorf("with-zero %s: floored (%q) though its history has a zero", m, model)
			}
		}
	}
	if !floored["drift"] || !floored["holt"] || floored["naive"] {
		t.Errorf("floored methods on the falling series: %v; want drift and holt, not naive", floored)
	}
}

func itoa(i int) string { return strings.TrimSpace(strings.Repeat(" ", 0) + fmtInt(i)) }

func fmtInt(i int) string {
	if i == 0 {
		return "0"
	}
	var d []byte
	for i > 0 {
		d = append([]byte{byte('0' + i%10)}, d...)
		i /= 10
	}
	return string(d)
}

func ftoa(v float64) string { return fmtInt(int(v)) }
