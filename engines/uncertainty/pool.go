package uncertainty

import (
	"fmt"
	"math"
)

// Pool collects the backtest errors of one method across series: per step
// ahead, and per lead time the error of the total over steps 1..L. Every
// error is divided by its series' scale (almanac uses the in-sample
// seasonal naive MAE, the MASE denominator), so series of any size pool
// together; a lead-time total's error is also divided by L, so that it
// stays within the histogram's range.
//
// Counting is order-free: the pool's contents do not depend on the order
// in which windows are added, nor on how pools are merged.
type Pool struct {
	Steps  []*Histogram // Steps[s]: scaled errors at step s+1
	Leads  []int        // lead times, as given
	Totals []*Histogram // Totals[k]: scaled error of the total over 1..Leads[k], ÷ Leads[k]
}

// NewPool returns an empty pool for a backtest horizon and lead times.
func NewPool(horizon int, leads []int) *Pool {
	p := &Pool{Leads: append([]int(nil), leads...)}
	for s := 0; s < horizon; s++ {
		p.Steps = append(p.Steps, NewHistogram())
	}
	for _, l := range leads {
		if l < 1 {
			panic(fmt.Sprintf("uncertainty: lead time %d below 1", l))
		}
		p.Totals = append(p.Totals, NewHistogram())
	}
	return p
}

// AddWindow counts one backtest window: actuals y and forecasts f from
// the same origin (y may be shorter than f where the history ends), with
// the series' scale. A window with a scale that is not positive and finite
// is ignored. A step with a missing actual or forecast is skipped; a lead
// time is counted only when every step 1..L is present.
func (p *Pool) AddWindow(y, f []float64, scale float64) {
	if !(scale > 0) || math.IsInf(scale, 0) {
		return
	}
	n := min(len(y), len(f))
	for s := 0; s < min(n, len(p.Steps)); s++ {
		if y[s] == y[s] && f[s] == f[s] {
			p.Steps[s].Add((y[s] - f[s]) / scale)
		}
	}
	for k, l := range p.Leads {
		if l > n {
			continue
		}
		sum, ok := 0.0, true
		for s := 0; s < l; s++ {
			if y[s] != y[s] || f[s] != f[s] {
				ok = false
				break
			}
			sum += y[s] - f[s]
		}
		if ok {
			p.Totals[k].Add(sum / scale / float64(l))
		}
	}
}

// Merge adds o's counts to p; both must have the same horizon and leads.
func (p *Pool) Merge(o *Pool) {
	if len(o.Steps) != len(p.Steps) || len(o.Totals) != len(p.Totals) {
		panic("uncertainty: merging pools of different shapes")
	}
	for s := range p.Steps {
		p.Steps[s].Merge(o.Steps[s])
	}
	for k := range p.Totals {
		p.Totals[k].Merge(o.Totals[k])
	}
}

// TotalQuantile returns the p-quantile of the total over lead time
// p.Leads[k] for a series whose forecast total over that lead time is
// total and whose scale is scale, or NaN when the pool holds no window
// that long.
func (p *Pool) TotalQuantile(k int, total, scale, prob float64) float64 {
	return total + float64(p.Leads[k])*scale*p.Totals[k].Quantile(prob)
}
