package engines

import "testing"

// TestSBAByHand: the Croston recursion of TestCrostonByHand times 1 − α/2
// (Syntetos and Boylan 2005; common practice: hand computation).
func TestSBAByHand(t *testing.T) {
	// α = 0.2: (1 − 0.1) · 13/9 = 1.3.
	s, err := NewSBA(0.2)
	if err != nil {
		t.Fatal(err)
	}
	got, f := baselineForecast(t, s, intermittentInvented, 1, 3)
	intermittentClose(t, "sba α=0.2", got, 1.3, 1e-15)
	if d := f.(Described).Describe(); d != "sba(alpha=0.2)" {
		t.Errorf("Describe() = %q", d)
	}
	// Default α = 0.1: 0.95 · 3.08/2.09.
	got, _ = baselineForecast(t, intermittentRegistered(t, "sba"), intermittentInvented, 1, 1)
	intermittentClose(t, "sba default", got, 0.95*3.08/2.09, 1e-15)
	// α = 1: half of Croston's 2/2.
	s, _ = NewSBA(1)
	got, _ = baselineForecast(t, s, intermittentInvented, 1, 1)
	intermittentClose(t, "sba α=1", got, 0.5, 1e-15)
	if _, err := NewSBA(0.001); err == nil {
		t.Error("NewSBA(0.001) succeeded")
	}
}

func TestSBACommon(t *testing.T) { intermittentCommon(t, "sba") }

func BenchmarkSBAWeekly156(b *testing.B) {
	intermittentBench(b, intermittentNew(b, "sba", nil), "weekly156")
}
func BenchmarkSBAMonthly60(b *testing.B) {
	intermittentBench(b, intermittentNew(b, "sba", nil), "monthly60")
}
func BenchmarkSBAIntermittent(b *testing.B) {
	intermittentBench(b, intermittentNew(b, "sba", nil), "intermittent")
}
