package spec

import (
	"strings"
	"testing"
)

const automaticBase = `version: 1
name: auto
sources: [data.csv]
columns: {time: date, value: qty}
horizon: 6
`

func labels(ms []MethodSpec) string {
	var out []string
	for _, m := range ms {
		out = append(out, m.Label)
	}
	return strings.Join(out, ",")
}

func TestAutomaticSpecWhenMethodsAreLeftOut(t *testing.T) {
	s, err := Parse([]byte(automaticBase+"calendar: {frequency: month}\n"), "auto.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if !s.Automatic {
		t.Error("Automatic = false for a spec without methods")
	}
	if got, want := labels(s.Methods), "smoothing_auto,theta,holt_winters_damped,stl"; got != want {
		t.Errorf("monthly pool = %s, want %s", got, want)
	}
	hw := s.Methods[2]
	if hw.Method != "holt_winters" || hw.Options["damped"] != true || hw.Options["seasonal"] != "auto" || hw.Options["trend"] != true {
		t.Errorf("damped member = %+v", hw)
	}
	if s.Methods[3].Options["seasonal"] != "auto" || s.Methods[3].Options["seasonal_window"] != "periodic" {
		t.Errorf("stl member options = %v", s.Methods[3].Options)
	}
	if b := s.Backtest; b.Folds != 2 || b.Horizon != 6 || b.Step != 6 || b.MinTrain != 24 || b.Window != Expanding {
		t.Errorf("backtest = %+v", b)
	}
	sel := s.Selection
	if sel.Metric != "mase" || sel.Choose != ChooseCombination || sel.Combine == nil ||
		sel.Combine.Kind != CombineWeighted || sel.Combine.Top != 4 || sel.Combine.Label != "combination" || sel.Fallback != "smoothing_auto" {
		t.Errorf("selection = %+v, combine %+v", sel, sel.Combine)
	}

	// Yearly data: no seasonal member, the damped trend is holt's.
	s, err = Parse([]byte(automaticBase+"calendar: {frequency: year}\n"), "auto.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if got, want := labels(s.Methods), "smoothing_auto,theta,holt_damped"; got != want {
		t.Errorf("yearly pool = %s, want %s", got, want)
	}
	if s.Methods[2].Method != "holt" || s.Methods[2].Options["damped"] != true || s.Selection.Combine.Top != 3 {
		t.Errorf("yearly damped member %+v, top %d", s.Methods[2], s.Selection.Combine.Top)
	}

	// The canonical form lists the pool; read back it is the same run (a
	// yearly spec too, though its canonical form carries the default
	// decomposition, which a season length of 1 may not name).
	back, err := FromCanonical(s.Canonical(), "manifest.json")
	if err != nil {
		t.Fatal(err)
	}
	if string(back.Canonical()) != string(s.Canonical()) {
		t.Errorf("round trip changed the canonical form:\n%s\n%s", s.Canonical(), back.Canonical())
	}
	if !strings.Contains(string(s.Canonical()), `"choose":"combination"`) || !strings.Contains(string(s.Canonical()), `"kind":"weighted"`) {
		t.Errorf("canonical form lacks the rule: %s", s.Canonical())
	}

	// A backtest or selection the spec gives is kept.
	s, err = Parse([]byte(automaticBase+"calendar: {frequency: quarter}\nbacktest: {folds: 4}\nselection: {metric: smape}\n"), "auto.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if s.Backtest.Folds != 4 || s.Selection.Metric != "smape" || s.Selection.Choose != ChooseBest || s.Selection.Combine != nil {
		t.Errorf("given backtest/selection not kept: %+v %+v", s.Backtest, s.Selection)
	}
	if got := labels(s.Methods); got != "smoothing_auto,theta,holt_winters_damped,stl" {
		t.Errorf("quarterly pool = %s", got)
	}
}

func TestChooseCombination(t *testing.T) {
	good := minimal + "backtest: {folds: 2}\nselection: {choose: combination, combine: {kind: weighted, top: 2}}\n"
	good = strings.Replace(good, "methods: [naive]", "methods: [naive, drift]", 1)
	s, err := Parse([]byte(good), "c.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if s.Selection.Choose != ChooseCombination || s.Selection.Combine.Kind != CombineWeighted || s.Automatic {
		t.Errorf("selection = %+v", s.Selection)
	}
	// A spec without choose keeps today's canonical form (no choose key).
	plain := minimal + "backtest: {folds: 2}\n"
	s, err = Parse([]byte(plain), "c.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(s.Canonical()), "choose") {
		t.Errorf("canonical form of a spec without choose mentions it: %s", s.Canonical())
	}
	bad := minimal + "backtest: {folds: 2}\nselection: {choose: combination}\n"
	_, err = Parse([]byte(bad), "c.yaml")
	if err == nil || !strings.Contains(err.Error(), "c.yaml:9:21: selection.choose: choose: combination needs a combine section") {
		t.Errorf("choose without combine: error %v", err)
	}
	bad = minimal + "backtest: {folds: 2}\nselection: {choose: lowest}\n"
	_, err = Parse([]byte(bad), "c.yaml")
	if err == nil || !strings.Contains(err.Error(), `"lowest" is not a valid choice rule; allowed: best, combination`) {
		t.Errorf("choose: lowest: error %v", err)
	}
}

// TestAutomaticSpecEventAware: a spec that leaves out methods but knows
// drivers or several cycles gets the methods that use them, and each series
// takes its best backtest entry instead of the combination everywhere.
func TestAutomaticSpecEventAware(t *testing.T) {
	drivers := "events:\n  - {path: d.csv, kind: driver, columns: {date: day, name: event}}\n"
	closures := "events:\n  - {path: c.csv, kind: closure, columns: {date: day}}\n"
	for _, c := range []struct {
		name, extra, pool string
		choose            string
	}{
		{"closures only", "calendar: {frequency: day}\n" + closures,
			"smoothing_auto,theta,holt_winters_damped,stl", ChooseCombination},
		{"drivers", "calendar: {frequency: day}\n" + drivers,
			"smoothing_auto,theta,holt_winters_damped,stl,regression_arima,uplift", ChooseBest},
		{"several cycles", "calendar: {frequency: day, season_length: [7, 365]}\n",
			"smoothing_auto,theta,holt_winters_damped,stl,regression_arima,mstl", ChooseBest},
		{"drivers and several cycles", "calendar: {frequency: day, season_length: [365, 7]}\n" + drivers,
			"smoothing_auto,theta,holt_winters_damped,stl,regression_arima,uplift,mstl", ChooseBest},
		{"yearly with drivers", "calendar: {frequency: year}\n" + drivers,
			"smoothing_auto,theta,holt_damped,regression_arima,uplift", ChooseBest},
	} {
		t.Run(c.name, func(t *testing.T) {
			s, err := Parse([]byte(automaticBase+c.extra), "auto.yaml")
			if err != nil {
				t.Fatal(err)
			}
			if got := labels(s.Methods); got != c.pool {
				t.Errorf("pool = %s, want %s", got, c.pool)
			}
			sel := s.Selection
			if sel.Choose != c.choose || sel.Combine == nil || sel.Combine.Top != len(s.Methods) || sel.Combine.Kind != CombineWeighted {
				t.Errorf("selection = %+v, combine %+v; want choose %s over all %d", sel, sel.Combine, c.choose, len(s.Methods))
			}
		})
	}
}

// TestCombineTopErrorPointsAtTop: the error about a combination wider than
// the method list names the line and column of top itself.
func TestCombineTopErrorPointsAtTop(t *testing.T) {
	src := minimal + "backtest: {folds: 2}\nselection:\n  metric: mase\n  combine: {kind: mean, top: 5}\n"
	_, err := Parse([]byte(src), "c.yaml")
	if err == nil || !strings.Contains(err.Error(), "c.yaml:11:30: selection.combine.top: top is 5 but the spec names only 1 method(s)") {
		t.Fatalf("error = %v", err)
	}
}
