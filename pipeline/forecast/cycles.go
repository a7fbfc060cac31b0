package forecast

import (
	"fmt"
	"math"

	"almanac/engines"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// DecompositionSeveral is the components table's decomposition value when
// the calendar has several season lengths: MSTL.
const DecompositionSeveral = "mstl"

// Cycle is one seasonal cycle of a decomposition with several season
// lengths (Result.Cycles, in ascending order of Season).
type Cycle struct {
	Season int
	// Seasonal has one value per period of the series: the cycle's
	// component (additive) or factor (multiplicative); nil when the cycle
	// was left out because the series is shorter than two of its seasons.
	Seasonal []float64
	// Factors[j] summarises Seasonal over the periods i with i%Season == j
	// (positions count from the series' first period, as in
	// engines.Decomposition): normalised to mean 0 (additive) or 1
	// (multiplicative). Counts[j] is the number of periods averaged.
	Factors []float64
	Counts  []int
}

// decompose runs the decomposition stage on the series of r: MSTL with
// several season lengths, the spec's decomposer otherwise, on the history
// filled first where the decomposer needs a complete series. Trouble and
// fills become problems rows through add.
func (w *Work) decompose(r *Result, add func(stage, severity, code, method, msg string)) {
	y := r.Series.Values
	var (
		d      *engines.Decomposition
		filled int
		how    string
		err    error
	)
	if seasons := w.Spec.Calendar.Seasons; len(seasons) > 1 {
		d, r.Cycles, filled, how, err = decomposeSeveral(y, seasons, w.Spec.Decomposition)
	} else {
		d, filled, how, err = safeDecompose(w.Decomposer, y, w.Spec.Calendar.SeasonLength)
	}
	if err != nil {
		r.Cycles = nil
		add("decompose", "error", ErrorCode(err, runfolder.CodeDecomposeFailed), "", err.Error())
		return
	}
	if filled > 0 {
		blankMissing(d, y)
		add("decompose", "warning", runfolder.CodeImputed, "", ImputedMessage(filled, len(y), how, "decomposing"))
	}
	r.Decomp = d
	for _, msg := range d.Warnings {
		add("decompose", "warning", WarningCode(msg, runfolder.CodeDecomposeWarning), "", msg)
	}
}

// blankMissing sets the remainder and the adjusted value to NaN where the
// observed value is missing: the decomposition of a filled series has a
// trend and a seasonal there, but no observation to split.
func blankMissing(d *engines.Decomposition, y []float64) {
	for i, v := range y {
		if math.IsNaN(v) {
			d.Remainder[i], d.Adjusted[i] = math.NaN(), math.NaN()
		}
	}
}

// decomposeSeveral decomposes y by engines.MSTL with every season length.
// The form is the spec decomposition's: additive, or multiplicative —
// MSTL of log y, the parts exponentiated — when every observed value is
// positive (otherwise additive, with a warning). Missing values are filled
// first (engines.SeasonalInterpolate, in log space for the multiplicative
// form). The robust option of an stl decomposition carries over.
func decomposeSeveral(y []float64, seasons []int, ds spec.Decomposition) (d *engines.Decomposition, cycles []Cycle, filled int, how string, err error) {
	defer func() {
		if p := recover(); p != nil {
			d, cycles, err = nil, nil, panicError(p)
		}
	}()
	d = &engines.Decomposition{Form: engines.FormAdditive}
	z := y
	if ds.Form == spec.Multiplicative {
		if nonPositive := countNonPositive(y); nonPositive > 0 {
			d.Warnings = append(d.Warnings, fmt.Sprintf("mstl: multiplicative form needs strictly positive values; found %d values ≤ 0; used additive", nonPositive))
		} else {
			d.Form = engines.FormMultiplicative
			z = make([]float64, len(y))
			for i, v := range y {
				z[i] = math.Log(v) // NaN stays NaN
			}
		}
	}
	for _, v := range z {
		if math.IsNaN(v) {
			filled++
		}
	}
	if filled == len(z) {
		return nil, nil, 0, "", fmt.Errorf("mstl: %w", engines.ErrAllMissing)
	}
	if filled > 0 {
		if z, how, err = engines.SeasonalInterpolate(z, seasons); err != nil {
			return nil, nil, 0, "", err
		}
	}
	robust, _ := ds.Options["robust"].(bool)
	res, err := engines.MSTL(z, seasons, engines.MSTLOptions{Robust: robust && ds.Method == "stl"})
	if err != nil {
		return nil, nil, 0, "", err
	}
	d.Warnings = append(d.Warnings, res.Warnings...)
	cycles = mstlCycles(res, seasons, len(z))
	d.Trend, d.Remainder = res.Trend, res.Remainder
	d.Seasonal = make([]float64, len(z))
	for i := range z {
		for _, c := range cycles {
			if c.Seasonal != nil {
				d.Seasonal[i] += c.Seasonal[i]
			}
		}
	}
	d.Adjusted = make([]float64, len(z))
	for i, v := range y {
		d.Adjusted[i] = v - d.Seasonal[i]
	}
	if d.Form == engines.FormMultiplicative {
		exponentiate(d, cycles, y)
	}
	for _, c := range cycles {
		if c.Factors != nil {
			d.Factors, d.Counts = c.Factors, c.Counts // the primary cycle's
			break
		}
	}
	return d, cycles, filled, how, nil
}

// mstlCycles lays the components of res out per season length asked for
// (a left-out one has nil parts), with their factors: the mean of the
// component at each position, shifted to mean 0.
func mstlCycles(res *engines.MSTLResult, seasons []int, n int) []Cycle {
	cycles := make([]Cycle, len(seasons))
	for k, m := range seasons {
		cycles[k].Season = m
		for j, mj := range res.Seasons {
			if mj != m {
				continue
			}
			s := res.Seasonal[j]
			f, c := make([]float64, m), make([]int, m)
			for i := 0; i < n; i++ {
				f[i%m] += s[i]
				c[i%m]++
			}
			mean := 0.0
			for p := range f {
				f[p] /= float64(c[p])
				mean += f[p]
			}
			mean /= float64(m)
			for p := range f {
				f[p] -= mean
			}
			cycles[k].Seasonal, cycles[k].Factors, cycles[k].Counts = s, f, c
		}
	}
	return cycles
}

// exponentiate turns an additive decomposition of log y into the
// multiplicative one of y: every part exponentiated, the factors
// normalised to mean 1, Adjusted = y ÷ Seasonal.
func exponentiate(d *engines.Decomposition, cycles []Cycle, y []float64) {
	for _, part := range [][]float64{d.Trend, d.Seasonal, d.Remainder} {
		for i, v := range part {
			part[i] = math.Exp(v)
		}
	}
	for i, v := range y {
		d.Adjusted[i] = v / d.Seasonal[i]
	}
	for k := range cycles {
		c := &cycles[k]
		if c.Seasonal == nil {
			continue
		}
		exp := make([]float64, len(c.Seasonal))
		for i, v := range c.Seasonal {
			exp[i] = math.Exp(v)
		}
		c.Seasonal = exp
		mean := 0.0
		for p, v := range c.Factors {
			c.Factors[p] = math.Exp(v)
			mean += c.Factors[p]
		}
		mean /= float64(len(c.Factors))
		for p := range c.Factors {
			c.Factors[p] /= mean
		}
	}
}

func countNonPositive(y []float64) int {
	n := 0
	for _, v := range y {
		if v <= 0 {
			n++
		}
	}
	return n
}
