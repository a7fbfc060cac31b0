package uncertainty

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
)

// Paths are simulated futures of one series: Reps paths of H steps each.
// Quantiles are read from the simulated values at one step, or from the
// simulated totals over steps 1..L, by the inverse of the empirical
// distribution function (the smallest simulated value v with at least a
// share p of the values at or below v), which never understates the
// coverage of discrete demand.
type Paths struct {
	H, Reps int
	v       []float64 // v[r*H+s]
	steps   []column  // sorted simulated values per step, built on first use
	totals  map[int]column
}

// column is a sorted sample stored as its count of zeros and its sorted
// positive values: most simulated periods of a slow mover are zero, and
// only the rest need sorting.
type column struct {
	zeros int
	pos   []float64
}

func newColumn(vals []float64) column {
	c := column{pos: vals[:0]}
	for _, v := range vals {
		if v == 0 {
			c.zeros++
		} else {
			c.pos = append(c.pos, v)
		}
	}
	slices.Sort(c.pos)
	return c
}

// quantile is sampleQuantile over the whole sample.
func (c column) quantile(p float64) float64 {
	n := c.zeros + len(c.pos)
	k := int(math.Ceil(p*float64(n)-1e-9)) - 1 // 0-based rank
	k = max(0, min(k, n-1))
	if k < c.zeros {
		return 0
	}
	return c.pos[k-c.zeros]
}

// Jitter says how a resampled demand size is varied.
type Jitter int

const (
	// JitterNone reuses the observed sizes as they are.
	JitterNone Jitter = iota
	// JitterPublished is the jitter of Willemain, Smart & Schwarz (2004),
	// for whole-unit demand: J = 1 + INT(X + Z·√X) with Z standard normal,
	// and J = X when that is not positive.
	JitterPublished
)

// Resample simulates reps futures of h steps from the demand history y by
// the bootstrap of Willemain, Smart & Schwarz (2004):
//
//  1. Each observed period is in state 1 (demand > 0) or 0 (no demand);
//     the transition probabilities P(1 | 0) and P(1 | 1) of a two-state
//     Markov chain are estimated from consecutive observed periods (a
//     state never left in the history takes the overall share of demand
//     periods).
//  2. From the state of the last observed period, each path draws the
//     states of the h future periods.
//  3. Each period in state 1 takes a size drawn with replacement from the
//     observed positive demands, jittered as jitter says (the published
//     jitter only when every observed size is a whole number).
//
// Missing values (NaN) are left out of the history. The random stream is a
// PCG seeded with seed: the same history, h, reps and seed give the same
// paths on every run and every machine. It returns an error when the
// history has no positive demand.
//
// The steps and the jitter formula are as the paper gives them, from
// memory (the paper was not at hand); the tests check the chain and the
// jitter against values worked by hand.
//
// References:
//   - Willemain, T. R., Smart, C. N. & Schwarz, H. F. (2004). A new
//     approach to forecasting intermittent demand for service parts
//     inventories. International Journal of Forecasting 20(3), 375–387.
func Resample(y []float64, h, reps int, seed uint64, jitter Jitter) (*Paths, error) {
	if h < 1 || reps < 1 {
		panic(fmt.Sprintf("uncertainty: Resample with h=%d reps=%d", h, reps))
	}
	var obs, sizes []float64
	whole := true
	for _, v := range y {
		if v != v {
			continue
		}
		if v < 0 {
			return nil, fmt.Errorf("resample: negative demand %g", v)
		}
		obs = append(obs, v)
		if v > 0 {
			sizes = append(sizes, v)
			if v != math.Trunc(v) {
				whole = false
			}
		}
	}
	if len(sizes) == 0 {
		return nil, fmt.Errorf("resample: no positive demand in the history")
	}
	var n [2][2]float64 // n[from][to]
	for t := 1; t < len(obs); t++ {
		n[state(obs[t-1])][state(obs[t])]++
	}
	share := float64(len(sizes)) / float64(len(obs))
	var p1 [2]float64 // P(next = 1 | current)
	for from := 0; from < 2; from++ {
		if tot := n[from][0] + n[from][1]; tot > 0 {
			p1[from] = n[from][1] / tot
		} else {
			p1[from] = share
		}
	}
	last := state(obs[len(obs)-1])
	rng := rand.New(rand.NewPCG(seed, seed^0x9e3779b97f4a7c15))
	p := &Paths{H: h, Reps: reps, v: make([]float64, h*reps), totals: map[int]column{}}
	jit := jitter == JitterPublished && whole
	for r := 0; r < reps; r++ {
		st := last
		for s := 0; s < h; s++ {
			if rng.Float64() < p1[st] {
				st = 1
				x := sizes[rng.IntN(len(sizes))]
				if jit {
					j := 1 + math.Trunc(x+rng.NormFloat64()*math.Sqrt(x))
					if j > 0 {
						x = j
					}
				}
				p.v[r*h+s] = x
			} else {
				st = 0
			}
		}
	}
	return p, nil
}

func state(v float64) int {
	if v > 0 {
		return 1
	}
	return 0
}

// StepQuantile is the p-quantile of the simulated values at step s+1.
// Paths build their sorted columns on first use, so one Paths value must
// not be read from several goroutines at once.
func (p *Paths) StepQuantile(s int, prob float64) float64 {
	if p.steps == nil {
		p.steps = make([]column, p.H)
	}
	if p.steps[s].pos == nil {
		vals := make([]float64, p.Reps)
		for r := range vals {
			vals[r] = p.v[r*p.H+s]
		}
		p.steps[s] = newColumn(vals)
	}
	return p.steps[s].quantile(prob)
}

// Quantile implements Quantiler.
func (p *Paths) Quantile(step int, prob float64) float64 { return p.StepQuantile(step, prob) }

// TotalQuantile is the p-quantile of the simulated totals over steps 1..L.
func (p *Paths) TotalQuantile(l int, prob float64) float64 {
	if l < 1 || l > p.H {
		panic(fmt.Sprintf("uncertainty: lead time %d outside 1..%d", l, p.H))
	}
	col, ok := p.totals[l]
	if !ok {
		vals := make([]float64, p.Reps)
		for r := range vals {
			sum := 0.0
			for s := 0; s < l; s++ {
				sum += p.v[r*p.H+s]
			}
			vals[r] = sum
		}
		col = newColumn(vals)
		p.totals[l] = col
	}
	return col.quantile(prob)
}

// MeanTotal is the mean of the simulated totals over steps 1..L.
func (p *Paths) MeanTotal(l int) float64 {
	sum := 0.0
	for r := 0; r < p.Reps; r++ {
		for s := 0; s < l; s++ {
			sum += p.v[r*p.H+s]
		}
	}
	return sum / float64(p.Reps)
}
