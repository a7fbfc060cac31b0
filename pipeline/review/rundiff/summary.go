package rundiff

import (
	"math"
	"sort"
)

func (d *Diff) summarise(b, h *side) {
	c := &d.Counts
	c.BaseSeries, c.HeadSeries = len(b.series), len(h.series)
	for k := range b.series {
		if _, ok := h.series[k]; ok {
			c.CommonSeries++
		} else {
			c.RemovedSeries++
		}
	}
	c.AddedSeries = c.HeadSeries - c.CommonSeries
	c.Rows = len(d.Rows)
	var scoreSum float64
	trans := map[[2]string]int{}
	for _, r := range d.Rows {
		switch r.Status {
		case Added:
			c.Added++
		case Removed:
			c.Removed++
		case Changed:
			c.Changed++
		case Unchanged:
			c.Unchanged++
		}
		if r.Status == Added || r.Status == Removed {
			continue
		}
		if !sameFloat(r.BaseTotal, r.HeadTotal) {
			c.TotalsChanged++
		}
		if !math.IsNaN(r.AbsChange) {
			c.BaseSum += r.BaseTotal
			c.HeadSum += r.HeadTotal
			if math.IsInf(r.RelChange, 0) {
				c.FromZero++
			}
		}
		if !math.IsNaN(r.ScoreChange) {
			c.ScoresCompared++
			scoreSum += r.ScoreChange
			if r.ScoreChange > 0 {
				c.ScoreWorse++
			} else if r.ScoreChange < 0 {
				c.ScoreBetter++
			}
		}
		if r.Switched {
			c.Switched++
			d.Switches = append(d.Switches, r)
			trans[[2]string{r.BaseMethod, r.HeadMethod}]++
		}
	}
	c.MeanScoreChange = math.NaN()
	if c.ScoresCompared > 0 {
		c.MeanScoreChange = scoreSum / float64(c.ScoresCompared)
	}
	for ft, n := range trans {
		d.Transitions = append(d.Transitions, Transition{From: ft[0], To: ft[1], Series: n})
	}
	sort.Slice(d.Transitions, func(i, j int) bool {
		a, b := d.Transitions[i], d.Transitions[j]
		if a.Series != b.Series {
			return a.Series > b.Series
		}
		if a.From != b.From {
			return a.From < b.From
		}
		return a.To < b.To
	})
}

// movers keeps the top changed rows by absolute relative change.
func (d *Diff) movers(top int) {
	var idx []int
	for i, r := range d.Rows {
		if r.Status == Changed && !math.IsNaN(r.RelChange) && r.AbsChange != 0 {
			idx = append(idx, i)
		}
	}
	sort.SliceStable(idx, func(a, b int) bool {
		return math.Abs(d.Rows[idx[a]].RelChange) > math.Abs(d.Rows[idx[b]].RelChange)
	})
	if top < 0 {
		top = 0
	}
	if len(idx) > top {
		idx = idx[:top]
	}
	for _, i := range idx {
		d.Movers = append(d.Movers, d.Rows[i])
	}
}
