package spec

import (
	"fmt"

	"gopkg.in/yaml.v3"
)

// Window is how a backtest's training window moves.
type Window string

// Training windows.
const (
	// Expanding: every fold trains on all history before its origin.
	Expanding Window = "expanding"
	// Sliding: every fold trains on the same number of periods just
	// before its origin.
	Sliding Window = "sliding"
)

// Windows lists the allowed values of Window.
var Windows = []string{string(Expanding), string(Sliding)}

// Backtest configures rolling-origin evaluation. Folds == 0 means no
// backtest (and no selection).
type Backtest struct {
	Folds        int    // number of forecast origins, counted back from the end
	Step         int    // periods between consecutive origins; default the backtest horizon
	Horizon      int    // periods forecast at each origin; default the spec's horizon
	Window       Window // expanding (default) or sliding
	MinTrain     int    // fewest training periods a fold may have; default 2 seasons (at least 3 periods)
	WindowLength int    // sliding only: training periods per fold; default the first fold's training length
}

// DemandClasses are the demand patterns of Syntetos, Boylan & Croston
// (2005), by average inter-demand interval (cut-off 1.32) and squared
// coefficient of variation of demand sizes (cut-off 0.49).
var DemandClasses = []string{"smooth", "erratic", "intermittent", "lumpy"}

// labelRef is a label named somewhere in the spec, checked once all
// methods are known.
type labelRef struct {
	node  *yaml.Node
	path  string
	label string
}

// Metrics a selection may rank by.
var Metrics = []string{"mase", "rmsse", "mae", "rmse", "mape", "smape", "wape"}

// Selection chooses a method per series from the backtest.
type Selection struct {
	Metric  string       // default mase
	Combine *Combination // optional combination entry, backtested like a method
	// Route maps a demand class (smooth, erratic, intermittent, lumpy) to
	// the labels that may be chosen for series of that class; classes not
	// listed let every method compete.
	Route map[string][]string
	// Fallback is the label chosen for a series that no backtest fold fits
	// (or on which no entry could be scored); default seasonal_naive when
	// the spec has it, else the first method.
	Fallback string
	// Choose is the rule: ChooseBest (default) or ChooseCombination.
	Choose string
}

// Choice rules.
const (
	// ChooseBest: the entry (a method or the combination) with the best
	// backtest score wins, per series.
	ChooseBest = "best"
	// ChooseCombination: the combination entry is chosen for every series
	// where it has a forecast (with equal weights and every member where
	// the series has no backtest fold); the backtest still scores every
	// entry. Needs selection.combine.
	ChooseCombination = "combination"
)

// ChooseRules lists the allowed values of Selection.Choose.
var ChooseRules = []string{ChooseBest, ChooseCombination}

// DefaultSelection ranks by MASE and chooses the best entry.
var DefaultSelection = Selection{Metric: "mase", Choose: ChooseBest}

// Combination kinds.
const (
	CombineMeanKind   = "mean"
	CombineMedianKind = "median"
	// CombineWeighted weights each member by the reciprocal of its mean
	// backtest score (the selection metric) over the folds.
	CombineWeighted = "weighted"
)

// CombinationKinds lists the allowed values of Combination.Kind.
var CombinationKinds = []string{CombineMeanKind, CombineMedianKind, CombineWeighted}

// Combination averages the k best methods of each series.
type Combination struct {
	Kind  string `json:"kind"`  // mean, median or weighted
	Top   int    `json:"top"`   // how many of the series' best methods to combine; default 3
	Label string `json:"label"` // the entry's method label; default "combination"
}

// IntervalSources lists where prediction intervals may come from.
var IntervalSources = []string{"empirical", "model"}

// Intervals configures prediction intervals around the forecasts.
type Intervals struct {
	Levels []int // coverage levels in percent, e.g. 80 and 95; empty means none
	// Source: empirical — quantiles of the backtest errors at each step
	// ahead, scaled to the series (needs a backtest); model — the method's
	// own forecast variance where it has one, empirical otherwise.
	Source     string
	AllMethods bool // intervals for every method, not only the chosen one
	// AllowNegative lets bounds go below zero for every series. By default
	// a series whose history never goes below zero gets bounds at or above
	// zero (its predictive distribution is read as censored at zero).
	AllowNegative bool
}

// Totals asks for quantiles of forecast totals over lead times: for each
// lead time L, the total of the forecast over steps 1..L and the values the
// actual total stays at or below with each probability in Levels. They come
// from the errors of totals over L consecutive steps of the backtest
// windows, so they need a backtest whose horizon reaches every lead time.
type Totals struct {
	LeadTimes []int // periods from the first forecast step, each 1 … backtest horizon
	Levels    []int // probabilities in percent, 1 to 99
}

func (d *decoder) backtest(n *yaml.Node, path string, b *Backtest) {
	var lengthNode *yaml.Node
	windowBad := false
	d.mapping(n, path, "backtest", []field{
		{"folds", true, func(n *yaml.Node, p string) {
			if d.integer(n, p, "the number of folds", &b.Folds) && (b.Folds < 1 || b.Folds > MaxFolds) {
				d.errAt(n, p, "folds must be between 1 and %d, found %d", MaxFolds, b.Folds)
			}
		}},
		{"step", false, func(n *yaml.Node, p string) {
			if d.integer(n, p, "the periods between origins", &b.Step) && (b.Step < 1 || b.Step > MaxHorizon) {
				d.errAt(n, p, "step must be between 1 and %d, found %d", MaxHorizon, b.Step)
			}
		}},
		{"horizon", false, func(n *yaml.Node, p string) {
			if d.integer(n, p, "the backtest horizon", &b.Horizon) && (b.Horizon < 1 || b.Horizon > MaxHorizon) {
				d.errAt(n, p, "horizon must be between 1 and %d, found %d", MaxHorizon, b.Horizon)
			}
		}},
		{"window", false, func(n *yaml.Node, p string) {
			windowBad = true
			d.enum(n, p, "window", Windows, (*string)(&b.Window))
			windowBad = b.Window == ""
		}},
		{"min_train", false, func(n *yaml.Node, p string) {
			if d.integer(n, p, "the minimum training length", &b.MinTrain) && b.MinTrain < 2 {
				d.errAt(n, p, "min_train must be at least 2, found %d", b.MinTrain)
			}
		}},
		{"window_length", false, func(n *yaml.Node, p string) {
			lengthNode = n
			if d.integer(n, p, "the sliding window length", &b.WindowLength) && b.WindowLength < 2 {
				d.errAt(n, p, "window_length must be at least 2, found %d", b.WindowLength)
			}
		}},
	})
	if lengthNode != nil && !windowBad && b.Window != Sliding {
		d.errAt(lengthNode, path+".window_length", "window_length applies only to window: sliding")
	}
	if b.Window == "" {
		b.Window = Expanding
	}
}

func (d *decoder) selection(n *yaml.Node, path string, s *Selection) {
	d.mapping(n, path, "selection", []field{
		{"metric", false, func(n *yaml.Node, p string) { d.enum(n, p, "metric", Metrics, &s.Metric) }},
		{"choose", false, func(n *yaml.Node, p string) {
			d.enum(n, p, "choice rule", ChooseRules, &s.Choose)
			d.chooseNode = n
		}},
		{"fallback", false, func(n *yaml.Node, p string) { d.str(n, p, "the label of a method", &s.Fallback) }},
		{"route", false, func(n *yaml.Node, p string) {
			s.Route = map[string][]string{}
			var fields []field
			for _, class := range DemandClasses {
				fields = append(fields, field{class, false, func(n *yaml.Node, p string) {
					n = d.resolve(n)
					if n == nil {
						return
					}
					if n.Kind != yaml.SequenceNode || len(n.Content) == 0 {
						d.errAt(n, p, "expected a list of method labels")
						return
					}
					for i, item := range n.Content {
						var l string
						d.str(item, fmt.Sprintf("%s[%d]", p, i), "a method label", &l)
						if l != "" {
							s.Route[class] = append(s.Route[class], l)
							d.routeNodes = append(d.routeNodes, labelRef{item, fmt.Sprintf("%s[%d]", p, i), l})
						}
					}
				}})
			}
			d.mapping(n, p, "route (demand class → method labels)", fields)
		}},
		{"combine", false, func(n *yaml.Node, p string) {
			c := &Combination{Top: 3, Label: "combination"}
			d.mapping(n, p, "combine", []field{
				{"kind", true, func(n *yaml.Node, p string) { d.enum(n, p, "combination kind", CombinationKinds, &c.Kind) }},
				{"top", false, func(n *yaml.Node, p string) {
					if d.integer(n, p, "how many methods to combine", &c.Top) && c.Top < 2 {
						d.errAt(n, p, "top must be at least 2, found %d", c.Top)
					}
				}},
				{"label", false, func(n *yaml.Node, p string) {
					d.str(n, p, "a label", &c.Label)
					if c.Label != "" && !nameRE.MatchString(c.Label) {
						d.errAt(n, p, "label %q may hold only letters, digits, '.', '_' and '-', starting with a letter or digit", c.Label)
					}
				}},
			})
			s.Combine = c
		}},
	})
}

func (d *decoder) intervals(n *yaml.Node, path string, iv *Intervals) {
	iv.Source = "empirical"
	sourceOK := true
	d.mapping(n, path, "intervals", []field{
		{"levels", true, func(n *yaml.Node, p string) {
			n = d.resolve(n)
			if n == nil {
				return
			}
			if n.Kind != yaml.SequenceNode || len(n.Content) == 0 {
				d.errAt(n, p, "expected a list of coverage levels in percent, such as [80, 95]")
				return
			}
			seen := map[int]bool{}
			for i, item := range n.Content {
				var v int
				ip := fmt.Sprintf("%s[%d]", p, i)
				if !d.integer(item, ip, "a coverage level in percent (an integer, 50 to 99)", &v) {
					continue
				}
				if v < 50 || v > 99 {
					d.errAt(item, ip, "coverage levels are percentages from 50 to 99, found %d", v)
					continue
				}
				if seen[v] {
					d.errAt(item, ip, "level %d is listed twice", v)
					continue
				}
				seen[v] = true
				iv.Levels = append(iv.Levels, v)
			}
		}},
		{"source", false, func(n *yaml.Node, p string) {
			iv.Source = ""
			d.enum(n, p, "interval source", IntervalSources, &iv.Source)
			sourceOK = iv.Source != ""
		}},
		{"all_methods", false, func(n *yaml.Node, p string) { d.boolean(n, p, &iv.AllMethods) }},
		{"allow_negative", false, func(n *yaml.Node, p string) { d.boolean(n, p, &iv.AllowNegative) }},
	})
	if !sourceOK {
		iv.Source = "invalid" // already reported; keeps the cross-section check quiet
	}
}

// boolean decodes true or false.
func (d *decoder) boolean(n *yaml.Node, p string, dst *bool) {
	sn, ok := d.scalar(n, p, "true or false")
	if !ok {
		return
	}
	if sn.Tag != "!!bool" {
		d.errAt(sn, p, "expected true or false, found %s", kindName(sn))
		return
	}
	*dst = sn.Value == "true"
}

// intList decodes a non-empty list of distinct integers from lo to hi.
func (d *decoder) intList(n *yaml.Node, p, what, example string, lo, hi int) []int {
	n = d.resolve(n)
	if n == nil {
		return nil
	}
	if n.Kind != yaml.SequenceNode || len(n.Content) == 0 {
		d.errAt(n, p, "expected a list of %s, such as %s", what, example)
		return nil
	}
	var out []int
	seen := map[int]bool{}
	for i, item := range n.Content {
		var v int
		ip := fmt.Sprintf("%s[%d]", p, i)
		if !d.integer(item, ip, fmt.Sprintf("one of the %s (an integer, %d to %d)", what, lo, hi), &v) {
			continue
		}
		if v < lo || v > hi {
			d.errAt(item, ip, "%s run from %d to %d, found %d", what, lo, hi, v)
			continue
		}
		if seen[v] {
			d.errAt(item, ip, "%d is listed twice", v)
			continue
		}
		seen[v] = true
		out = append(out, v)
	}
	return out
}

func (d *decoder) totals(n *yaml.Node, path string, t *Totals) {
	d.mapping(n, path, "totals", []field{
		{"lead_times", true, func(n *yaml.Node, p string) {
			t.LeadTimes = d.intList(n, p, "lead times in periods", "[4, 8, 13]", 1, 100000)
		}},
		{"levels", true, func(n *yaml.Node, p string) {
			t.Levels = d.intList(n, p, "levels in percent", "[50, 80, 95, 99]", 1, 99)
		}},
	})
}
