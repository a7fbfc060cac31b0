package engines

import (
	"fmt"
	"math"
)

// esModel is a fitted exponential smoothing model.
type esModel struct {
	name     string // the method's registered name, for messages and Describe
	form     esForm
	m        int
	p        esParams
	l0, b0   float64
	s0       []float64 // initial seasonal terms (seasonal forms)
	final    esState
	fitted   []float64
	stats    esStats
	k        int // smoothing parameters + free initial states (not σ²)
	loglik   float64
	aicc     float64
	note     string // appended to Describe, e.g. "no season found"
	warnings []string
}

var (
	_ Fitted            = (*esModel)(nil)
	_ Described         = (*esModel)(nil)
	_ Warner            = (*esModel)(nil)
	_ InSampler         = (*esModel)(nil)
	_ Parameterized     = (*esModel)(nil)
	_ ForecastVariancer = (*esModel)(nil)
)

// model builds the fitted model of sol. It runs the recursions once more
// into buffers the model owns.
func (f *esFitter) model(name string, sol esSolution) *esModel {
	n, m := len(f.y), f.m
	mod := &esModel{name: name, form: sol.form, m: m, p: sol.p, l0: sol.l0, b0: sol.b0}
	var buf []float64
	if sol.form.season != esSeasonNone {
		buf = make([]float64, n+2*m)
		mod.s0 = buf[n : n+m : n+m]
		copy(mod.s0, sol.s0)
		mod.final.season = buf[n+m : n+2*m : n+2*m]
		copy(mod.final.season, sol.s0)
	} else {
		buf = make([]float64, n)
		mod.m = 1
	}
	mod.fitted = buf[:n:n]
	for i := 0; i < f.start; i++ {
		mod.fitted[i] = math.NaN()
	}
	mod.final.level, mod.final.slope = sol.l0, sol.b0
	mod.stats = esFilter(f.y, f.start, sol.form, sol.p, &mod.final, mod.fitted)
	mod.k = sol.form.nSmoothing() + sol.form.nStates(mod.m)
	mod.loglik = mod.stats.logLik(sol.form)
	mod.aicc = esAICc(mod.loglik, mod.stats.nobs, mod.k+1)
	if !sol.conv {
		mod.warnings = append(mod.warnings, fmt.Sprintf(
			"%s: the likelihood maximisation stopped after %d evaluations without converging; used the best parameters found",
			name, sol.evals))
	}
	return mod
}

// Forecast returns the point forecasts for the h periods after the
// training data (esForecast). It panics if h < 0.
func (mod *esModel) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: %s: negative horizon %d", mod.name, h))
	}
	out := make([]float64, h)
	st := mod.final
	esForecast(mod.form, mod.p.phi, &st, out)
	return out
}

// Describe names the method and the fitted form, for example
// "smoothing_auto(error=multiplicative, trend=damped, season=multiplicative)"
// or "holt_winters(error=additive, trend=additive, season=none; no season
// found)".
func (mod *esModel) Describe() string {
	s := mod.name + "(" + mod.form.describe()
	if mod.note != "" {
		s += "; " + mod.note
	}
	return s + ")"
}

// Warnings returns the caveats met while fitting, if any.
func (mod *esModel) Warnings() []string { return mod.warnings }

// InSample returns the one-step forecasts of the training values, one per
// value (also at missing values). The caller must not modify them.
func (mod *esModel) InSample() []float64 { return mod.fitted }

// Params lists the error-correction smoothing parameters of Hyndman et al.
// (2008) — alpha, beta (trend forms, β_e ≤ α), gamma (seasonal forms,
// γ_e ≤ 1−α), phi (damped forms) — then the fitted initial level and trend
// (initial_level, initial_trend) and the initial seasonal terms
// initial_season_1…initial_season_m (s_{1−m}…s_0, the first applying to
// the first value of the series).
func (mod *esModel) Params() []Param {
	a, be, ge, phi := mod.p.ec(mod.form)
	out := make([]Param, 0, 6+len(mod.s0))
	out = append(out, Param{"alpha", a})
	if mod.form.trend != esTrendNone {
		out = append(out, Param{"beta", be})
	}
	if mod.form.season != esSeasonNone {
		out = append(out, Param{"gamma", ge})
	}
	if mod.form.trend == esTrendDamped {
		out = append(out, Param{"phi", phi})
	}
	out = append(out, Param{"initial_level", mod.l0})
	if mod.form.trend != esTrendNone {
		out = append(out, Param{"initial_trend", mod.b0})
	}
	for j, s := range mod.s0 {
		out = append(out, Param{fmt.Sprintf("initial_season_%d", j+1), s})
	}
	return out
}

// SSE returns the in-sample sum of squared one-step errors y_t − μ_t.
func (mod *esModel) SSE() float64 { return mod.stats.sse }

// LogLik returns the maximised Gaussian log-likelihood (esStats.logLik).
func (mod *esModel) LogLik() float64 { return mod.loglik }

// AICc returns the corrected Akaike information criterion of the fit,
// −2·log L + 2k + 2k(k+1)/(n−k−1) with k the smoothing parameters, the free
// initial states and σ².
func (mod *esModel) AICc() float64 { return mod.aicc }

// ResidualVariance returns SSE/(n−k), n the number of observed values and
// k the smoothing parameters plus free initial states, of the one-step
// errors y_t − μ_t (for every form, also the multiplicative ones); NaN
// when n ≤ k.
func (mod *esModel) ResidualVariance() float64 {
	if mod.stats.nobs <= mod.k {
		return math.NaN()
	}
	return mod.stats.sse / float64(mod.stats.nobs-mod.k)
}

// relVariance is Σ(e_t/μ_t)²/(n−k), the variance of the relative errors of
// a multiplicative-error form.
func (mod *esModel) relVariance() float64 {
	if mod.stats.nobs <= mod.k {
		return math.NaN()
	}
	return mod.stats.sre / float64(mod.stats.nobs-mod.k)
}

// ForecastVariance returns the variance of the 1…h step forecast errors:
// analytic for the linear forms (additive error, additive or no season;
// esForecastVariance, σ² = ResidualVariance) and for the
// multiplicative-error forms without a multiplicative season
// (esForecastVarianceMultErr, σ² the relative-error variance); nil for the
// forms with a multiplicative season, which have no closed form. It panics
// if h < 0.
func (mod *esModel) ForecastVariance(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: %s: negative horizon %d", mod.name, h))
	}
	if mod.form.season == esSeasonMultiplicative {
		return nil
	}
	out := make([]float64, h)
	if mod.form.err == esErrorMultiplicative {
		esForecastVarianceMultErr(mod.form, mod.m, mod.p, mod.relVariance(), mod.Forecast(h), out)
		return out
	}
	esForecastVariance(mod.form, mod.m, mod.p, mod.ResidualVariance(), out)
	return out
}
