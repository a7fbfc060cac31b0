package uncertainty

import (
	"math"
	"slices"
	"testing"
)

func TestHistogramQuantileAndCDF(t *testing.T) {
	h := NewHistogram()
	for i := 0; i < 100; i++ {
		h.Add(float64(i) / 10) // 0.0 … 9.9
	}
	h.Add(math.NaN())
	if h.N() != 100 {
		t.Fatalf("N = %d, want 100 (NaN ignored)", h.N())
	}
	// 50 of 100 values are below 5.0: the median lies in the bin of 4.9.
	if got := h.Quantile(0.5); math.Abs(got-4.9) > HistWidth {
		t.Errorf("median = %g, want 4.9 ± %g", got, HistWidth)
	}
	if got := h.Quantile(0.95); math.Abs(got-9.4) > HistWidth {
		t.Errorf("95%% quantile = %g, want 9.4 ± %g", got, HistWidth)
	}
	if got := h.CDF(4.95); math.Abs(got-0.5) > 1e-9 {
		t.Errorf("CDF(4.95) = %g, want 0.5", got)
	}
	h.Add(1e9)
	h.Add(math.Inf(-1))
	if got := h.Quantile(0.999); got > HistRange+HistWidth {
		t.Errorf("a huge value must count at the end bin, got quantile %g", got)
	}
	if !math.IsNaN(NewHistogram().Quantile(0.5)) {
		t.Error("empty histogram: want NaN")
	}
}

func TestHistogramMergeIsOrderFree(t *testing.T) {
	a, b, all := NewHistogram(), NewHistogram(), NewHistogram()
	for i := 0; i < 50; i++ {
		v := math.Sin(float64(i)) * 3
		if i%2 == 0 {
			a.Add(v)
		} else {
			b.Add(v)
		}
		all.Add(v)
	}
	b.Merge(a)
	for _, p := range []float64{0.05, 0.3, 0.5, 0.9} {
		if b.Quantile(p) != all.Quantile(p) {
			t.Errorf("p=%g: merged %g, whole %g", p, b.Quantile(p), all.Quantile(p))
		}
	}
}

func TestIsotonic(t *testing.T) {
	// Pool adjacent violators on a textbook case (worked by hand).
	y := []float64{1, 3, 2, 4, 3.5, 3.5}
	isotonic(y, []float64{1, 1, 1, 1, 1, 2})
	want := []float64{1, 2.5, 2.5, 3.625, 3.625, 3.625}
	for i := range y {
		if math.Abs(y[i]-want[i]) > 1e-12 {
			t.Fatalf("isotonic = %v, want %v", y, want)
		}
	}
}

// steps builds histograms where step s holds the values base[s]·{−2,−1,0,1,2}.
func steps(base ...float64) []*Histogram {
	var hs []*Histogram
	for _, b := range base {
		h := NewHistogram()
		for _, k := range []float64{-2, -1, 0, 1, 2} {
			for r := 0; r < 20; r++ {
				h.Add(b * k)
			}
		}
		hs = append(hs, h)
	}
	return hs
}

func TestStepQuantilesSmoothing(t *testing.T) {
	hs := steps(1, 3, 1, 2)
	probs := []float64{0.1, 0.9}
	raw := StepQuantiles(hs, probs, 4, Smoothing{})
	// Step 2 holds 3·{−2, …, 2}: 80 of 100 values are at or below 3, so
	// the 90% quantile lies in the run of 6s.
	if math.Abs(raw[1][1]-6) > 2*HistWidth {
		t.Fatalf("raw q90 at step 2 = %g, want 6", raw[1][1])
	}
	mono := StepQuantiles(hs, probs, 6, Smoothing{Monotone: true})
	for s := 1; s < 6; s++ {
		if mono[s][1] < mono[s-1][1]-1e-12 || mono[s][0] > mono[s-1][0]+1e-12 {
			t.Fatalf("monotone quantiles fall at step %d: %v", s+1, mono)
		}
	}
	// Steps 5 and 6 carry step 4's quantiles forward.
	if mono[5][1] != mono[3][1] {
		t.Errorf("carried forward q90 = %g, want %g", mono[5][1], mono[3][1])
	}
	nb := StepQuantiles(hs, probs, 4, Smoothing{Neighbours: 1})
	// Step 1 pools steps 1 and 2 (bases 1 and 3): 200 values whose 90%
	// quantile is 3 (the 180th value lies in the run of 3s).
	if math.Abs(nb[0][1]-3) > 2*HistWidth {
		t.Errorf("pooled q90 at step 1 = %g, want 3", nb[0][1])
	}
	// The spike at step 2 is damped by its neighbours: 300 values of which
	// 260 are at or below 2 and 20 are 3s, so the 90% quantile is 3.
	if math.Abs(nb[1][1]-3) > 2*HistWidth {
		t.Errorf("pooled q90 at step 2 = %g, want 3 (raw %g)", nb[1][1], raw[1][1])
	}
}

func TestStepQuantilesEmpty(t *testing.T) {
	hs := []*Histogram{NewHistogram(), NewHistogram()}
	hs[1].Add(1)
	q := StepQuantiles(hs, []float64{0.5}, 3, DefaultSmoothing)
	for s := range q {
		if math.IsNaN(q[s][0]) {
			t.Fatalf("step %d has no quantile although step 2 has data: %v", s+1, q)
		}
	}
	if q := StepQuantiles([]*Histogram{NewHistogram()}, []float64{0.5}, 2, Smoothing{}); !math.IsNaN(q[1][0]) {
		t.Errorf("no data anywhere: want NaN, got %v", q)
	}
}

// normalQ is a normal predictive distribution with mean f[s] and sd sd[s].
type normalQ struct{ f, sd []float64 }

func (n normalQ) Quantile(s int, p float64) float64 {
	return n.f[s] + n.sd[s]*math.Sqrt2*math.Erfinv(2*p-1)
}

func TestBandsCoherent(t *testing.T) {
	f := []float64{10, 0.5, -1, 3}
	q := normalQ{f: []float64{10, 0.5, -1, 6}, sd: []float64{1, 1, 1, 0.1}}
	levels := []int{95, 80}
	fc, lo, hi := Bands(f, levels, q, true)
	if fc[2] != 0 || f[2] != -1 {
		t.Fatalf("negative forecast of a non-negative series: got %g (input must stay -1, is %g)", fc[2], f[2])
	}
	for s := range f {
		if lo[1][s] > fc[s] || hi[1][s] < fc[s] {
			t.Errorf("step %d: 80%% band [%g, %g] misses the forecast %g", s+1, lo[1][s], hi[1][s], fc[s])
		}
		if lo[0][s] > lo[1][s] || hi[0][s] < hi[1][s] {
			t.Errorf("step %d: 95%% band does not contain the 80%% band", s+1)
		}
		if lo[0][s] < 0 {
			t.Errorf("step %d: negative bound %g", s+1, lo[0][s])
		}
	}
	// Step 1: far from zero, the central band of N(10, 1): 10 ± 1.2816.
	if math.Abs(lo[1][0]-(10-1.2815516)) > 1e-6 || math.Abs(hi[1][0]-(10+1.2815516)) > 1e-6 {
		t.Errorf("80%% band at step 1 = [%g, %g], want 10 ∓ 1.2816", lo[1][0], hi[1][0])
	}
	// Step 2: N(0.5, 1) censored at 0: P(Y ≤ 0) = 0.31 ≥ 0.1, so the 80%
	// band is [0, Q(0.8)] = [0, 0.5 + 0.8416].
	if lo[1][1] != 0 || math.Abs(hi[1][1]-(0.5+0.8416212)) > 1e-6 {
		t.Errorf("censored 80%% band at step 2 = [%g, %g], want [0, 1.3416]", lo[1][1], hi[1][1])
	}
	// Step 4: the distribution sits above the forecast (a biased method):
	// the lower bound is moved onto the forecast.
	if lo[1][3] != 3 {
		t.Errorf("step 4 lower bound = %g, want the forecast 3", lo[1][3])
	}
	// Allowing negatives: the plain central band.
	_, lo, _ = Bands(f, levels, q, false)
	if math.Abs(lo[1][1]-(0.5-1.2815516)) > 1e-6 {
		t.Errorf("uncensored lower bound = %g, want %g", lo[1][1], 0.5-1.2815516)
	}
}

// As a forecast drifts towards zero, its censored band moves smoothly
// (no jump where the lower bound reaches zero) and covers between c and
// c + α/3 of the censored distribution (plus the error of interpolating
// p₀ and the quantiles linearly, within a point here); with p₀ outside
// (α/4, α/2) exactly c.
func TestBandsSlideToCensored(t *testing.T) {
	const c, alpha = 0.8, 0.2
	phi := func(x float64) float64 { return 0.5 * math.Erfc(-x/math.Sqrt2) }
	var prevLo, prevHi float64
	for i := 0; i <= 400; i++ {
		mu := 3 - float64(i)*0.01 // from 3 down to −1
		q := normalQ{f: []float64{mu}, sd: []float64{1}}
		_, lo, hi := Bands([]float64{math.Max(mu, 0)}, []int{80}, q, true)
		l, u := lo[0][0], hi[0][0]
		cover := phi(u - mu)
		if l > 0 {
			cover -= phi(l - mu)
		}
		p0 := phi(-mu)
		switch {
		case p0 < alpha/4 || p0 > alpha/2:
			if math.Abs(cover-c) > 1e-6 && l < math.Max(mu, 0) && u > math.Max(mu, 0) {
				t.Fatalf("μ=%.2f p0=%.3f: coverage %.4f, want %.2f", mu, p0, cover, c)
			}
		default:
			if cover < c-1e-6 || cover > c+alpha/3+0.01 {
				t.Fatalf("μ=%.2f p0=%.3f: coverage %.4f outside [%.2f, %.4f]", mu, p0, cover, c, c+alpha/3)
			}
		}
		if i > 0 && (math.Abs(l-prevLo) > 0.05 || math.Abs(u-prevHi) > 0.05) {
			t.Fatalf("μ=%.2f: band jumped from [%.3f, %.3f] to [%.3f, %.3f]", mu, prevLo, prevHi, l, u)
		}
		prevLo, prevHi = l, u
	}
}

func TestBandProbs(t *testing.T) {
	got := BandProbs([]int{95, 80})
	want := []float64{0.0125, 0.025, 0.05, 0.1, 0.8, 0.9, 0.95, 0.975}
	if !slices.Equal(got, want) {
		t.Errorf("BandProbs = %v, want %v", got, want)
	}
}

func TestTotalQuantiles(t *testing.T) {
	q := func(p float64) float64 { return 10 * (p - 0.6) } // negative below 0.6
	got := TotalQuantiles([]int{95, 50, 80}, q, true)
	want := []float64{3.5, 0, 2}
	for i := range got {
		if math.Abs(got[i]-want[i]) > 1e-9 {
			t.Fatalf("TotalQuantiles = %v, want %v", got, want)
		}
	}
	got = TotalQuantiles([]int{50}, q, false)
	if math.Abs(got[0]+1) > 1e-9 {
		t.Errorf("uncensored median = %g, want -1", got[0])
	}
}

func TestPoolTotals(t *testing.T) {
	p := NewPool(4, []int{2, 4})
	// Errors of +1, +1, −1, −1 at scale 2: step errors ±0.5; the total over
	// 2 steps is 2 (÷ scale 2 ÷ L 2 = 0.5), over 4 steps 0.
	p.AddWindow([]float64{11, 11, 9, 9}, []float64{10, 10, 10, 10}, 2)
	p.AddWindow([]float64{11, 11, 9}, []float64{10, 10, 10, 10}, 2) // too short for L=4
	p.AddWindow([]float64{1, 1, 1, 1}, []float64{0, 0, 0, 0}, 0)    // no scale: ignored
	if p.Totals[0].N() != 2 || p.Totals[1].N() != 1 || p.Steps[3].N() != 1 {
		t.Fatalf("counts: totals %d, %d; step 4 %d", p.Totals[0].N(), p.Totals[1].N(), p.Steps[3].N())
	}
	// Total over 2 steps for a forecast total of 100 at scale 3: 100 + 2·3·0.5.
	if got := p.TotalQuantile(0, 100, 3, 0.5); math.Abs(got-103) > 2*3*HistWidth {
		t.Errorf("total quantile = %g, want 103", got)
	}
	if got := p.TotalQuantile(1, 100, 3, 0.5); math.Abs(got-100) > 4*3*HistWidth {
		t.Errorf("total quantile over 4 = %g, want 100", got)
	}
}

func TestResampleDeterministicChain(t *testing.T) {
	// Demand every other period: P(1|0) = 1, P(1|1) = 0. The last period
	// has demand, so every path is 0, 5, 0, 5, … and every total is fixed.
	y := []float64{5, 0, 5, 0, 5, 0, 5}
	p, err := Resample(y, 6, 200, 42, JitterNone)
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range []int{1, 4, 6} {
		for _, pr := range []float64{0.05, 0.5, 0.99} {
			if got, want := p.TotalQuantile(l, pr), float64(5*(l/2)); got != want {
				t.Errorf("L=%d p=%g: %g, want %g", l, pr, got, want)
			}
		}
	}
	if y[0] != 5 || y[6] != 5 {
		t.Error("input modified")
	}
}

func TestResampleSeededAndCalibrated(t *testing.T) {
	// Independent demand with probability 0.3 (history built so the chain
	// estimates P(1|0) and P(1|1) close to 0.3), sizes 1 or 3.
	var y []float64
	pattern := []float64{0, 0, 1, 0, 0, 0, 3, 0, 1, 0}
	for r := 0; r < 30; r++ {
		y = append(y, pattern...)
	}
	a, _ := Resample(y, 8, 4000, 7, JitterNone)
	b, _ := Resample(y, 8, 4000, 7, JitterNone)
	c, _ := Resample(y, 8, 4000, 8, JitterNone)
	if !slices.Equal(a.v, b.v) {
		t.Fatal("same seed, different paths")
	}
	if slices.Equal(a.v, c.v) {
		t.Fatal("different seeds, same paths")
	}
	// Mean total over 8 periods: 8 × 0.3 × mean size (5/3) = 4, within
	// simulation error (sd of the mean about 0.04).
	if m := a.MeanTotal(8); math.Abs(m-4) > 0.25 {
		t.Errorf("mean total = %g, want about 4", m)
	}
	// Share of single periods with no demand: 0.7 (so the 50% quantile of
	// one step is 0 and the 80% one is a positive size).
	if a.StepQuantile(0, 0.5) != 0 || a.StepQuantile(0, 0.8) == 0 {
		t.Errorf("step quantiles: 50%% %g, 80%% %g", a.StepQuantile(0, 0.5), a.StepQuantile(0, 0.8))
	}
	if _, err := Resample([]float64{0, 0, math.NaN()}, 3, 10, 1, JitterNone); err == nil {
		t.Error("no demand: want an error")
	}
}

func TestResampleJitterWholeUnits(t *testing.T) {
	y := []float64{4, 4, 4, 4, 4, 4}
	p, _ := Resample(y, 1, 2000, 3, JitterPublished)
	var distinct = map[float64]bool{}
	for _, v := range p.v {
		if v != math.Trunc(v) || v <= 0 {
			t.Fatalf("jittered size %g is not a positive whole number", v)
		}
		distinct[v] = true
	}
	if len(distinct) < 4 {
		t.Errorf("jitter produced only %d sizes", len(distinct))
	}
	// J = 1 + INT(4 + 2Z): E ≈ 4.5 (INT truncates toward zero).
	if m := p.MeanTotal(1); math.Abs(m-4.5) > 0.15 {
		t.Errorf("mean jittered size = %g, want about 4.5", m)
	}
}
