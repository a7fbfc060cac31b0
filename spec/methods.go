package spec

import "sort"

// optionKind is the type of a method option.
type optionKind int

const (
	kindEnum optionKind = iota
	kindInt
	kindFloat
	kindBool
)

// optionDef describes one option of a method: its type, allowed values or
// range, and default.
type optionDef struct {
	Kind    optionKind
	Allowed []string // kindEnum
	Min     float64  // kindInt, kindFloat (inclusive)
	Max     float64
	Default any
	Doc     string
}

// methodDef describes a method the spec may name.
type methodDef struct {
	Doc      string
	Seasonal bool // needs season_length ≥ 2
	Options  map[string]optionDef
}

var trendOptions = []string{"adjusted_line", "trend_line", "trend_step", "trend_flat"}

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
	"drift": {
		Doc: "last value plus the average change per period between the first and last values",
	},
	"mean": {
		Doc: "mean of the history",
	},
	"classical": {
		Doc:      "classical seasonal decomposition; projected trend combined with the seasonal factor",
		Seasonal: true,
		Options: map[string]optionDef{
			"form": {Kind: kindEnum, Allowed: Forms, Default: string(Multiplicative),
				Doc: "multiplicative: actual = trend × factor; additive: actual = trend + component"},
			"trend": {Kind: kindEnum, Allowed: trendOptions, Default: "adjusted_line",
				Doc: "how the trend is projected: least-squares line through the seasonally adjusted series (adjusted_line), least-squares line through the moving-average trend (trend_line), average change per period of the moving-average trend stepped from its last value (trend_step), or the last moving-average value held flat (trend_flat)"},
			"average": {Kind: kindEnum, Allowed: []string{"mean", "median"}, Default: "mean",
				Doc: "how detrended values are averaged per season position"},
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
