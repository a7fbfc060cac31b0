package spec

// The default automatic spec: what a spec that leaves out `methods` runs.
//
// Its pool and rule are the best configuration found on the M1
// competition data (pipeline/bench/m1; the evidence is in README.md):
// each pool member is backtested, and the forecast is the members'
// combination weighted by the reciprocal of each member's mean backtest
// MASE, chosen for every series. Members whose forecasts can run away
// (undamped trends: drift, holt, undamped holt_winters, classical's line)
// are left out.

// DefaultMethods returns the pool of the default automatic spec for a
// calendar: smoothing_auto, theta and a damped trend (holt with damped:
// true, labelled holt_damped) for every series; with a season length of 2
// or more the damped trend is holt_winters (damped: true, seasonal: auto,
// labelled holt_winters_damped) and stl (seasonal: auto) joins. Options are
// the catalogue's defaults unless named here.
//
// A spec that knows more than the series gets the methods that use it
// (EventAware): with driver event sources, regression_arima and uplift;
// with several season lengths, mstl and regression_arima (its Fourier
// terms carry the longer cycles).
func DefaultMethods(cal Calendar, drivers bool) []MethodSpec {
	type member struct {
		method, label string
		opts          map[string]any
	}
	pool := []member{
		{"smoothing_auto", "smoothing_auto", nil},
		{"theta", "theta", nil},
	}
	if cal.SeasonLength < 2 {
		pool = append(pool, member{"holt", "holt_damped", map[string]any{"damped": true}})
	} else {
		pool = append(pool,
			member{"holt_winters", "holt_winters_damped", map[string]any{"damped": true, "seasonal": "auto"}},
			member{"stl", "stl", map[string]any{"seasonal": "auto"}})
	}
	several := cal.SeveralCycles()
	if drivers || several {
		pool = append(pool, member{"regression_arima", "regression_arima", nil})
	}
	if drivers {
		pool = append(pool, member{"uplift", "uplift", nil})
	}
	if several {
		pool = append(pool, member{"mstl", "mstl", nil})
	}
	out := make([]MethodSpec, len(pool))
	for i, m := range pool {
		opts := defaults(catalog[m.method])
		for k, v := range m.opts {
			opts[k] = v
		}
		out[i] = MethodSpec{Method: m.method, Label: m.label, Options: opts}
	}
	return out
}

// EventAware reports whether the default automatic spec of s uses methods
// that see more than the series: driver event sources or several season
// lengths.
func EventAware(s *Spec) bool {
	return hasDrivers(s) || s.Calendar.SeveralCycles()
}

func hasDrivers(s *Spec) bool {
	for _, e := range s.Events {
		if e.Kind == EventDriver {
			return true
		}
	}
	return false
}

// DefaultAutomaticBacktest is the backtest of the default automatic spec
// when the spec gives none: two origins, each forecasting the spec's
// horizon (further defaults as for any backtest).
var DefaultAutomaticBacktest = Backtest{Folds: 2, Window: Expanding}

// DefaultAutomaticSelection returns the selection of the default automatic
// spec for a pool of n members, when the spec gives none: rank by MASE,
// combine all n members weighted by the reciprocal of their backtest MASE,
// and choose that combination for every series. An event-aware pool
// (EventAware) instead chooses per series the entry with the lowest
// backtest MASE, the combination among them: a method that sees the
// drivers or the longer cycles is worth more than its weight in a
// combination with methods that do not (examples/daily-grocer: 0.658
// against 0.976 for the combination chosen everywhere).
func DefaultAutomaticSelection(n int, eventAware bool) Selection {
	choose := ChooseCombination
	if eventAware {
		choose = ChooseBest
	}
	return Selection{Metric: "mase", Choose: choose,
		Combine: &Combination{Kind: CombineWeighted, Top: n, Label: "combination"}}
}
