package engines

import "fmt"

// Seasonal modes of the seasonal methods that take a `seasonal` option of
// auto or always (classical, stl).
const (
	// SeasonalAuto fits the seasonal form only where SeasonalityTest says
	// the series is seasonal, and the non-seasonal form otherwise.
	SeasonalAuto = "auto"
	// SeasonalAlways fits the seasonal form without testing.
	SeasonalAlways = "always"
)

// seasonalMode reads the `seasonal` option of method (auto or always;
// absent means auto) and reports whether it is always.
func seasonalMode(method string, o Options) (always bool, err error) {
	v, ok := o["seasonal"]
	if !ok {
		return false, nil
	}
	s, isStr := v.(string)
	switch {
	case !isStr:
		return false, fmt.Errorf("%s: option seasonal must be a string, got %T", method, v)
	case s == SeasonalAuto:
		return false, nil
	case s == SeasonalAlways:
		return true, nil
	}
	return false, fmt.Errorf("%s: seasonal %q: want auto or always", method, s)
}

// noSeason reports whether a seasonal method in auto mode should fit its
// non-seasonal form on y: SeasonalityTest at lag m finds no season.
func noSeason(y []float64, m int) bool {
	_, seasonal := SeasonalityTest(y, m)
	return !seasonal
}

// dropSeason turns the decomposition d of y into its non-seasonal form:
// factors and seasonal component 1 (multiplicative) or 0 (additive), the
// adjusted series y itself, the remainder y ÷ trend (or y − trend). The
// trend is kept.
func dropSeason(d *Decomposition, y []float64) {
	mult := d.Form == FormMultiplicative
	one := 0.0
	if mult {
		one = 1
	}
	for j := range d.Factors {
		d.Factors[j] = one
	}
	for i, v := range y {
		d.Adjusted[i] = v
		if v != v {
			d.Seasonal[i] = v
			d.Remainder[i] = v
			continue
		}
		d.Seasonal[i] = one
		if mult {
			d.Remainder[i] = v / d.Trend[i]
		} else {
			d.Remainder[i] = v - d.Trend[i]
		}
	}
}
