package engines

import (
	"math"
	"testing"
)

// TestTSBByHand follows the recursion of Teunter, Syntetos and Babai (2011)
// step by step on intermittentInvented (common practice: hand
// computation).
func TestTSBByHand(t *testing.T) {
	// α = 0.2 (size), β = 0.3 (probability). 3 demands in 10 periods:
	// π_0 = 0.3; z = 3, the first demand.
	//   t  y  π_t                                   z
	//   1  0  0.3·0.7 = 0.21                         3
	//   2  3  0.21 + 0.3·0.79 = 0.447                3 + 0.2·0 = 3
	//   3  0  0.447·0.7 = 0.3129                     3
	//   4  0  0.21903                                3
	//   5  5  0.21903 + 0.3·0.78097 = 0.453321       3 + 0.2·2 = 3.4
	//   6  0  0.3173247                              3.4
	//   7  2  0.3173247 + 0.3·0.6826753 = 0.52212729  3.4 − 0.2·1.4 = 3.12
	//   8  0  0.365489103                            3.12
	//   9  0  0.2558423721                           3.12
	//  10  0  0.17908966047                          3.12
	// forecast π_10 · z = 0.17908966047 · 3.12 = 0.5587597406664
	m, err := NewTSB(0.2, 0.3)
	if err != nil {
		t.Fatal(err)
	}
	got, f := baselineForecast(t, m, intermittentInvented, 1, 4)
	intermittentClose(t, "tsb α=0.2 β=0.3", got, 0.5587597406664, 1e-13)
	if d := f.(Described).Describe(); d != "tsb(alpha=0.2, beta=0.3)" {
		t.Errorf("Describe() = %q", d)
	}

	// Defaults α = β = 0.1, written out: π decays by 0.9 per empty period.
	p, z := 0.3, 3.0
	for _, y := range intermittentInvented {
		if y > 0 {
			p, z = p+0.1*(1-p), z+0.1*(y-z)
		} else {
			p *= 0.9
		}
	}
	got, f = baselineForecast(t, intermittentRegistered(t, "tsb"), intermittentInvented, 1, 1)
	intermittentClose(t, "tsb default", got, p*z, 1e-15)
	if d := f.(Described).Describe(); d != "tsb(alpha=0.1, beta=0.1)" {
		t.Errorf("Describe() = %q", d)
	}

	// β = 1: π is the indicator of the last period; a trailing zero gives 0,
	// a trailing demand gives the smoothed size (α = 1: the last size).
	m, _ = NewTSB(1, 1)
	got, _ = baselineForecast(t, m, intermittentInvented, 1, 1)
	intermittentClose(t, "tsb β=1, trailing zero", got, 0, 0)
	got, _ = baselineForecast(t, m, []float64{0, 3, 0, 7}, 1, 1)
	intermittentClose(t, "tsb β=1, trailing demand", got, 7, 1e-15)

	// Options: beta is checked like alpha.
	for _, o := range []Options{{"beta": 0.0}, {"beta": 1.01}, {"beta": "x"}} {
		if _, err := New("tsb", o); err == nil {
			t.Errorf("New(tsb, %v) succeeded", o)
		}
	}
	if m, err := NewTSB(0, 0.5); err != nil || m.alpha != 0.1 || m.beta != 0.5 {
		t.Errorf("NewTSB(0, 0.5) = %+v, %v", m, err)
	}
	if _, err := NewTSB(0.5, math.Inf(1)); err == nil {
		t.Error("NewTSB(0.5, +Inf) succeeded")
	}
}

func TestTSBCommon(t *testing.T) { intermittentCommon(t, "tsb") }

func BenchmarkTSBWeekly156(b *testing.B) {
	intermittentBench(b, intermittentNew(b, "tsb", nil), "weekly156")
}
func BenchmarkTSBMonthly60(b *testing.B) {
	intermittentBench(b, intermittentNew(b, "tsb", nil), "monthly60")
}
func BenchmarkTSBIntermittent(b *testing.B) {
	intermittentBench(b, intermittentNew(b, "tsb", nil), "intermittent")
}
