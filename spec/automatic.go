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
// season length: smoothing_auto, theta and a damped trend (holt with
// damped: true, labelled holt_damped) for every series; with a season
// length of 2 or more the damped trend is holt_winters (damped: true,
// seasonal: auto, labelled holt_winters_damped) and stl (seasonal: auto)
// joins. Options are the catalogue's defaults unless named here.
func DefaultMethods(season int) []MethodSpec {
	type member struct {
		method, label string
		opts          map[string]any
	}
	pool := []member{
		{"smoothing_auto", "smoothing_auto", nil},
		{"theta", "theta", nil},
	}
	if season < 2 {
		pool = append(pool, member{"holt", "holt_damped", map[string]any{"damped": true}})
	} else {
		pool = append(pool,
			member{"holt_winters", "holt_winters_damped", map[string]any{"damped": true, "seasonal": "auto"}},
			member{"stl", "stl", map[string]any{"seasonal": "auto"}})
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

// DefaultAutomaticBacktest is the backtest of the default automatic spec
// when the spec gives none: two origins, each forecasting the spec's
// horizon (further defaults as for any backtest).
var DefaultAutomaticBacktest = Backtest{Folds: 2, Window: Expanding}

// DefaultAutomaticSelection returns the selection of the default automatic
// spec for a pool of n members, when the spec gives none: rank by MASE,
// combine all n members weighted by the reciprocal of their backtest MASE,
// and choose that combination for every series.
func DefaultAutomaticSelection(n int) Selection {
	return Selection{Metric: "mase", Choose: ChooseCombination,
		Combine: &Combination{Kind: CombineWeighted, Top: n, Label: "combination"}}
}
