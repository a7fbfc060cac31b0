package forecast

import (
	"math"
	"testing"

	"almanac/engines"
	"almanac/pipeline/runfolder"
	"almanac/pipeline/series"
	"almanac/spec"
)

var cycleWeek = []float64{-12, -4, 0, 2, 5, 15, -6}

// twoCycles is an invented daily series of n days: trend, a weekday
// pattern and a 28-day wave, each part returned for the checks; mult
// makes the parts factors (y = trend × week × wave).
func twoCycles(n int, mult bool) (y, trend, week, wave []float64) {
	y, trend, week, wave = make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for t := range y {
		trend[t] = 100 + 0.05*float64(t)
		week[t] = cycleWeek[t%7]
		wave[t] = 6 * math.Sin(2*math.Pi*float64(t)/28)
		y[t] = trend[t] + week[t] + wave[t]
		if mult {
			week[t], wave[t] = 1+week[t]/100, 1+wave[t]/100
			y[t] = trend[t] * week[t] * wave[t]
		}
	}
	return y, trend, week, wave
}

func logMean(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += math.Log(v)
	}
	return s / float64(len(x))
}

func maxDiff(a, b []float64, from, to int) float64 {
	d := 0.0
	for i := from; i < to; i++ {
		d = max(d, math.Abs(a[i]-b[i]))
	}
	return d
}

// With two season lengths the decomposition is MSTL: each cycle's part is
// recovered, the parts add up (or multiply) to the series, and the
// factors of the weekly cycle are the weekday pattern.
func TestDecomposeSeveral(t *testing.T) {
	for _, form := range []spec.Form{spec.Additive, spec.Multiplicative} {
		mult := form == spec.Multiplicative
		y, trend, week, wave := twoCycles(364, mult)
		d, cycles, filled, _, err := decomposeSeveral(y, []int{7, 28}, spec.Decomposition{Method: "classical", Form: form})
		if err != nil {
			t.Fatal(err)
		}
		if filled != 0 || len(cycles) != 2 || cycles[0].Season != 7 || cycles[1].Season != 28 {
			t.Fatalf("%s: filled %d, cycles %+v", form, filled, cycles)
		}
		if d.Form != string(form) {
			t.Errorf("form %s, want %s", d.Form, form)
		}
		for i, v := range y {
			s := cycles[0].Seasonal[i] + cycles[1].Seasonal[i]
			back := d.Trend[i] + d.Seasonal[i] + d.Remainder[i]
			adj := v - d.Seasonal[i]
			if mult {
				s = cycles[0].Seasonal[i] * cycles[1].Seasonal[i]
				back = d.Trend[i] * d.Seasonal[i] * d.Remainder[i]
				adj = v / d.Seasonal[i]
			}
			if math.Abs(s-d.Seasonal[i]) > 1e-9*math.Abs(s) || math.Abs(back-v) > 1e-9*v || math.Abs(adj-d.Adjusted[i]) > 1e-9*v {
				t.Fatalf("%s period %d: cycles %v, seasonal %v; parts give %v for %v", form, i, s, d.Seasonal[i], back, v)
			}
		}
		// Away from the ends (where loess extrapolates), each part is
		// the one the series was made of, to 2% of its range (27 for the
		// week, 12 for the wave; 0.27 and 0.12 as factors) and the trend
		// to 0.1. Largest errors when written: additive 0.018, 0.029 and
		// 0.001; multiplicative 0.0037, 0.0011 and 0.002. MSTL of log y
		// puts the mean of each log factor into the trend, so the
		// multiplicative trend is the true one times the factors'
		// geometric means.
		tolW, tolS, tolT := 0.02*27, 0.02*12, 0.1
		if mult {
			tolW, tolS = 0.02*0.27, 0.02*0.12
			g := math.Exp((logMean(week[:28]) + logMean(wave[:28])))
			for i := range trend {
				trend[i] *= g
			}
		}
		t.Logf("%s: largest errors: weekly %.3g, 28-day %.3g, trend %.3g", form, maxDiff(cycles[0].Seasonal, week, 28, 336), maxDiff(cycles[1].Seasonal, wave, 28, 336), maxDiff(d.Trend, trend, 28, 336))
		if e := maxDiff(cycles[0].Seasonal, week, 28, 336); e > tolW {
			t.Errorf("%s: weekly part off by %.4g", form, e)
		}
		if e := maxDiff(cycles[1].Seasonal, wave, 28, 336); e > tolS {
			t.Errorf("%s: 28-day part off by %.4g", form, e)
		}
		if e := maxDiff(d.Trend, trend, 28, 336); e > tolT {
			t.Errorf("%s: trend off by %.4g", form, e)
		}
		mean := 0.0
		for j, f := range cycles[0].Factors {
			want := cycleWeek[j]
			if mult {
				want = 1 + want/100
			}
			if math.Abs(f-want) > tolW {
				t.Errorf("%s: weekday factor %d = %.4f, want %.4f", form, j, f, want)
			}
			if cycles[0].Counts[j] != 52 {
				t.Errorf("count %d = %d", j, cycles[0].Counts[j])
			}
			mean += f / 7
		}
		if want := map[bool]float64{false: 0, true: 1}[mult]; math.Abs(mean-want) > 1e-12 {
			t.Errorf("%s: factors average %v", form, mean)
		}
		if &d.Factors[0] != &cycles[0].Factors[0] {
			t.Errorf("%s: Decomposition.Factors is not the primary cycle's", form)
		}
	}
}

// A cycle longer than half the series is left out (NULL column, no
// factors, a warning); a series with holes is filled first and its
// remainder and adjusted value stay missing there; values ≤ 0 turn a
// multiplicative form additive.
func TestDecomposeSeveralEdges(t *testing.T) {
	y, _, _, _ := twoCycles(100, false)
	d, cycles, _, _, err := decomposeSeveral(y, []int{7, 28, 60}, spec.Decomposition{Method: "stl"})
	if err != nil {
		t.Fatal(err)
	}
	if cycles[2].Seasonal != nil || cycles[2].Factors != nil || cycles[1].Seasonal == nil || len(d.Warnings) != 1 {
		t.Errorf("cycle 60 of 100 values kept: %v", d.Warnings)
	}
	holes := withHoles(y, []int{3, 50, 51, 52})
	holes[90] = -1
	s := &series.Series{Key: []string{"a"}, Values: holes}
	sp := &spec.Spec{Horizon: 7}
	sp.Calendar.SeasonLength, sp.Calendar.Seasons = 7, []int{7, 28}
	sp.Decomposition = spec.DefaultDecomposition
	w := &Work{Spec: sp, Decomposer: mustMethod(t, "classical", nil).(engines.Decomposer)}
	r := w.Run(s)
	if r.Decomp == nil || r.Decomp.Form != engines.FormAdditive || len(r.Cycles) != 2 {
		t.Fatalf("decomposition %+v, problems %+v", r.Decomp, r.Problems)
	}
	for _, h := range []int{3, 50, 51, 52} {
		if !math.IsNaN(r.Decomp.Remainder[h]) || !math.IsNaN(r.Decomp.Adjusted[h]) || math.IsNaN(r.Decomp.Trend[h]) || math.IsNaN(r.Cycles[1].Seasonal[h]) {
			t.Errorf("period %d: remainder %v adjusted %v trend %v", h, r.Decomp.Remainder[h], r.Decomp.Adjusted[h], r.Decomp.Trend[h])
		}
	}
	codes := map[string]string{}
	for _, p := range r.Problems {
		codes[p.Code] = p.Message
	}
	if codes[runfolder.CodeImputed] != "4 of 100 values missing; filled by seasonal interpolation before decomposing (the method needs a complete series)" {
		t.Errorf("imputed row %q", codes[runfolder.CodeImputed])
	}
	if codes[runfolder.CodeNonpositive] == "" {
		t.Errorf("no nonpositive row: %+v", r.Problems)
	}
}
