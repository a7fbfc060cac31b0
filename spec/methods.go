package spec

import "sort"

// optionKind is the type of a method option.
type optionKind int

const (
	kindEnum optionKind = iota
	kindInt
	kindFloat
	kindBool
	kindIntOrWord // an integer, or one of Allowed
)

// optionDef describes one option of a method: its type, allowed values or
// range, and default.
type optionDef struct {
	Kind    optionKind
	Allowed []string // kindEnum, kindIntOrWord
	Min     float64  // kindInt, kindFloat, kindIntOrWord (inclusive)
	Max     float64
	Odd     bool // integers must be odd
	// Default is filled into the spec when the option is absent; nil means
	// the method works the default out from the series (documented in Doc).
	Default any
	Doc     string
	// ForecastOnly: the option matters only when the method forecasts, not
	// when it serves as the decomposition.
	ForecastOnly bool
}

// methodDef describes a method the spec may name.
type methodDef struct {
	Doc      string
	Seasonal bool // needs season_length ≥ 2
	// Decomposes: the method can serve as the spec's decomposition.
	Decomposes bool
	Options    map[string]optionDef
	// Check, when set, reports a rule across options ("" when they agree).
	Check func(opts map[string]any) string
}

var trendOptions = []string{"adjusted_line", "trend_line", "trend_step", "trend_flat"}

// seasonalAuto is the seasonal option of classical and stl.
var seasonalAuto = optionDef{Kind: kindEnum, Allowed: []string{"auto", "always"}, Default: "auto", ForecastOnly: true,
	Doc: "auto: the seasonal form only when the lag-m autocorrelation test (90%) finds a season, else the non-seasonal form (the model column says no season); always: without testing"}

var smoothingAlpha = optionDef{Kind: kindFloat, Min: 0.01, Max: 1, Default: 0.1,
	Doc: "smoothing constant, fixed (common practice for intermittent demand)"}

// Catalog is every method a spec may name, with its options. The engines
// package registers an implementation under each name; a test keeps the two
// in agreement.
var catalog = map[string]methodDef{
	"naive": {
		Doc: "last observed value, held flat",
	},
	"seasonal_naive": {
		Doc:      "value of the same season position one season earlier",
		Seasonal: true,
	},
	"naive2": {
		Doc: "naive forecast of the seasonally adjusted series (classical multiplicative factors when the 90% autocorrelation test finds a season), re-seasonalised: the M-competition Naive2 benchmark",
	},
	"drift": {
		Doc: "last value plus the average change per period between the first and last values",
	},
	"mean": {
		Doc: "mean of the history",
	},
	"classical": {
		Doc:        "classical seasonal decomposition; projected trend combined with the seasonal factor",
		Seasonal:   true,
		Decomposes: true,
		Options: map[string]optionDef{
			"form": {Kind: kindEnum, Allowed: Forms, Default: string(Multiplicative),
				Doc: "multiplicative: actual = trend × factor; additive: actual = trend + component"},
			"trend": {Kind: kindEnum, Allowed: trendOptions, Default: "adjusted_line", ForecastOnly: true,
				Doc: "how the trend is projected: least-squares line through the seasonally adjusted series (adjusted_line), least-squares line through the moving-average trend (trend_line), average change per period of the moving-average trend stepped from its last value (trend_step), or the last moving-average value held flat (trend_flat)"},
			"average": {Kind: kindEnum, Allowed: []string{"mean", "median"}, Default: "mean",
				Doc: "how detrended values are averaged per season position"},
			"seasonal": seasonalAuto,
		},
	},
	"stl": {
		Doc:        "STL decomposition (loess); the seasonally adjusted series forecast by SES or drift, plus the last seasonal cycle",
		Seasonal:   true,
		Decomposes: true,
		Options: map[string]optionDef{
			"seasonal_window": {Kind: kindIntOrWord, Allowed: []string{"periodic"}, Min: 7, Max: 1e6, Odd: true, Default: "periodic",
				Doc: "loess window of the cycle-subseries, an odd integer ≥ 7, or periodic: the seasonal pattern is the same every cycle"},
			"seasonal_degree": {Kind: kindInt, Min: 0, Max: 1, Default: 0, Doc: "degree of the cycle-subseries loess (0 with periodic)"},
			"trend_window": {Kind: kindInt, Min: 3, Max: 1e6, Odd: true,
				Doc: "loess window of the trend, odd; default the smallest odd integer ≥ 1.5·m / (1 − 1.5/seasonal window)"},
			"trend_degree":   {Kind: kindInt, Min: 0, Max: 1, Default: 1, Doc: "degree of the trend (and low-pass) loess"},
			"lowpass_window": {Kind: kindInt, Min: 3, Max: 1e6, Odd: true, Doc: "loess window of the low-pass filter, odd; default the smallest odd integer ≥ m"},
			"robust":         {Kind: kindBool, Default: false, Doc: "robustness passes that down-weight outliers (bisquare weights)"},
			"inner":          {Kind: kindInt, Min: 1, Max: 100, Doc: "inner-loop passes; default 2, or 1 when robust"},
			"outer":          {Kind: kindInt, Min: 0, Max: 100, Doc: "robustness passes; default 0, or 15 when robust (must be 0 when not robust)"},
			"adjusted_method": {Kind: kindEnum, Allowed: []string{"ses", "drift"}, Default: "ses", ForecastOnly: true,
				Doc: "how the seasonally adjusted series is forecast: simple exponential smoothing or drift"},
			"seasonal": seasonalAuto,
		},
		Check: func(o map[string]any) string {
			if w, ok := o["seasonal_window"].(string); ok && w == "periodic" && o["seasonal_degree"] == 1 {
				return "seasonal_degree 1 needs a numeric seasonal_window; periodic uses degree 0"
			}
			if out, ok := o["outer"].(int); ok && out > 0 && o["robust"] != true {
				return "outer robustness passes need robust: true"
			}
			if out, ok := o["outer"].(int); ok && out == 0 && o["robust"] == true {
				return "robust: true needs at least one outer pass"
			}
			return ""
		},
	},
	"ses": {
		Doc: "simple exponential smoothing (level only), a state-space model; smoothing weight and initial level fitted by maximum likelihood",
	},
	"holt": {
		Doc: "Holt's linear trend (level + trend), optionally damped, a state-space model; weights and initial states fitted by maximum likelihood",
		Options: map[string]optionDef{
			"damped": {Kind: kindBool, Default: false, Doc: "damped trend (Gardner & McKenzie), damping fitted in [0.8, 0.98]"},
		},
	},
	"holt_winters": {
		Doc:      "Holt-Winters (level + trend + season), a state-space model; season tested (auto), additive or multiplicative; optionally damped; weights and initial states fitted by maximum likelihood",
		Seasonal: true,
		Options: map[string]optionDef{
			"seasonal": {Kind: kindEnum, Allowed: []string{"auto", string(Additive), string(Multiplicative)}, Default: "auto",
				Doc: "auto (default): the lag-m autocorrelation test (90%) decides; no season found — level + trend only, season found — the additive or multiplicative form with the lower AICc (multiplicative only for strictly positive series); additive; multiplicative (needs strictly positive values, else additive with a warning)"},
			"damped": {Kind: kindBool, Default: false, Doc: "damped trend, damping fitted in [0.8, 0.98]"},
			"trend":  {Kind: kindBool, Default: true, Doc: "false drops the trend (level + season)"},
		},
		Check: func(o map[string]any) string {
			if o["damped"] == true && o["trend"] == false {
				return "damped needs trend: true"
			}
			return ""
		},
	},
	"smoothing_auto": {
		Doc: "exponential smoothing as state-space models (ETS), form chosen per series by AICc among the admissible error × trend × season forms (named in the model column)",
	},
	"theta": {
		Doc: "Theta method (simple exponential smoothing with drift of half the fitted slope), deseasonalised when the series tests seasonal",
		Options: map[string]optionDef{
			"deseasonalize": {Kind: kindEnum, Allowed: []string{"auto", "always", "never"}, Default: "auto",
				Doc: "auto: classical multiplicative deseasonalising when the lag-m autocorrelation test (90%) says seasonal; always; never"},
		},
	},
	"arima": {
		Doc: "seasonal ARIMA fitted by exact maximum likelihood; orders chosen per series by unit-root and seasonal-strength tests and a stepwise AICc search, or fixed (named in the model column)",
		Options: map[string]optionDef{
			"p": {Kind: kindIntOrWord, Allowed: []string{"auto"}, Min: 0, Max: 5, Default: "auto",
				Doc: "autoregressive order: auto (chosen by the stepwise AICc search) or 0 to 5"},
			"d": {Kind: kindIntOrWord, Allowed: []string{"auto"}, Min: 0, Max: 2, Default: "auto",
				Doc: "number of first differences: auto (repeated KPSS tests at 5%) or 0 to 2"},
			"q": {Kind: kindIntOrWord, Allowed: []string{"auto"}, Min: 0, Max: 5, Default: "auto",
				Doc: "moving-average order: auto or 0 to 5"},
			"seasonal_p": {Kind: kindIntOrWord, Allowed: []string{"auto"}, Min: 0, Max: 2, Default: "auto",
				Doc: "seasonal autoregressive order (lags of the season length): auto or 0 to 2; above 0 needs season_length ≥ 2"},
			"seasonal_d": {Kind: kindIntOrWord, Allowed: []string{"auto"}, Min: 0, Max: 1, Default: "auto",
				Doc: "number of seasonal differences: auto (1 when the seasonal strength of a classical decomposition exceeds 0.64) or 0 to 1"},
			"seasonal_q": {Kind: kindIntOrWord, Allowed: []string{"auto"}, Min: 0, Max: 2, Default: "auto",
				Doc: "seasonal moving-average order: auto or 0 to 2"},
			"constant": {Kind: kindBool, Default: true,
				Doc: "allow a constant (the mean when no differencing, a drift with one difference; never with two or more)"},
		},
	},
	"regression_arima": {
		Doc: "regression on the drivers of the event sources and on Fourier terms of cycles longer than 24 periods, with ARIMA errors chosen automatically (dynamic regression); without drivers or long cycles the automatic ARIMA",
		Options: map[string]optionDef{
			"harmonics": {Kind: kindInt, Min: 1, Max: 50,
				Doc: "sine–cosine pairs per long cycle (at most half the cycle length); default chosen per series, 1 to 10, by the AICc of a least-squares fit"},
		},
	},
	"uplift": {
		Doc: "a multiplicative uplift per driver of the event sources (sales in its periods ÷ the same season positions without drivers), laid on a simple seasonal baseline fitted to the history with the uplifts divided out; for short series",
		Options: map[string]optionDef{
			"base": {Kind: kindEnum, Allowed: []string{"stl", "seasonal_naive", "ses"}, Default: "stl",
				Doc: "the baseline: stl (periodic STL, the adjusted series by SES), seasonal_naive, or ses; without a season ses"},
		},
	},
	"mstl": {
		Doc:      "MSTL decomposition over every season length of the calendar; the seasonally adjusted series forecast by a damped trend, each seasonal component's last cycle carried forward",
		Seasonal: true,
	},
	"croston": {
		Doc:     "Croston's method for intermittent demand: smoothed size ÷ smoothed interval",
		Options: map[string]optionDef{"alpha": smoothingAlpha},
	},
	"sba": {
		Doc:     "Syntetos–Boylan approximation: Croston's forecast × (1 − α/2)",
		Options: map[string]optionDef{"alpha": smoothingAlpha},
	},
	"tsb": {
		Doc: "Teunter–Syntetos–Babai: smoothed demand probability × smoothed size",
		Options: map[string]optionDef{
			"alpha": {Kind: kindFloat, Min: 0.01, Max: 1, Default: 0.1, Doc: "smoothing constant of the demand size"},
			"beta":  {Kind: kindFloat, Min: 0.01, Max: 1, Default: 0.1, Doc: "smoothing constant of the demand probability"},
		},
	},
}

// MethodNames lists the methods a spec may name, sorted.
func MethodNames() []string {
	out := make([]string, 0, len(catalog))
	for n := range catalog {
		out = append(out, n)
	}
	sort.Strings(out)
	return out
}

// MethodIsSeasonal reports whether the named method needs a season length of
// at least 2.
func MethodIsSeasonal(name string) bool { return catalog[name].Seasonal }

// MethodDoc returns the one-line description of a method.
func MethodDoc(name string) string { return catalog[name].Doc }

// MethodOptionNames lists the option names of a method, sorted.
func MethodOptionNames(name string) []string {
	def := catalog[name]
	out := make([]string, 0, len(def.Options))
	for n := range def.Options {
		out = append(out, n)
	}
	sort.Strings(out)
	return out
}
