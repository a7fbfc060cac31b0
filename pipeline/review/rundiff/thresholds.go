package rundiff

import (
	"fmt"
	"math"
	"strings"
)

// Thresholds are the limits a review may put on a diff. A check runs when
// its field is zero or positive and is skipped when it is negative (or
// NaN). The zero Thresholds is therefore the strictest: any change of a
// total, any switch, any worsening of the mean score, any added or removed
// series exceeds it. Start from NoLimits to turn on only some checks.
type Thresholds struct {
	// MaxRelChange is the largest allowed |relative change| of any row's
	// forecast total, as a fraction (0.2 = 20%). A change from a zero base
	// exceeds every limit.
	MaxRelChange float64
	// MaxSwitchShare is the largest allowed share (0…1) of the series in
	// both runs that switched chosen entry (chosen mode only).
	MaxSwitchShare float64
	// MaxMeanScoreWorsening is the largest allowed mean of head score −
	// base score over the series scored in both runs, in the metric's
	// units (chosen mode only; positive is worse).
	MaxMeanScoreWorsening float64
	// MaxAdded and MaxRemoved are the largest allowed numbers of series
	// only in head and only in base.
	MaxAdded, MaxRemoved int
}

// NoLimits returns Thresholds with every check turned off.
func NoLimits() Thresholds {
	return Thresholds{MaxRelChange: -1, MaxSwitchShare: -1, MaxMeanScoreWorsening: -1, MaxAdded: -1, MaxRemoved: -1}
}

func on(v float64) bool { return v >= 0 }

// Exceeds returns a reason for every threshold the diff passes, in a fixed
// order (relative change, switch share, score, added, removed); none when
// the diff is within all of them. A CLI exits 1 when the list is not empty.
func (d *Diff) Exceeds(th Thresholds) []string {
	var out []string
	if on(th.MaxRelChange) {
		n := 0
		var worst *Row
		for i := range d.Rows {
			r := &d.Rows[i]
			if r.Status != Changed || math.IsNaN(r.RelChange) || r.AbsChange == 0 {
				continue
			}
			if math.Abs(r.RelChange) > th.MaxRelChange {
				n++
				if worst == nil || math.Abs(r.RelChange) > math.Abs(worst.RelChange) {
					worst = r
				}
			}
		}
		if n > 0 {
			out = append(out, fmt.Sprintf("%d %s changed the forecast total by more than %s; largest %s on %s",
				n, d.rowNoun(n), pct(th.MaxRelChange), FormatRel(worst.RelChange), d.describe(*worst)))
		}
	}
	c := d.Counts
	if on(th.MaxSwitchShare) && d.Mode == ModeChosen && c.CommonSeries > 0 {
		share := float64(c.Switched) / float64(c.CommonSeries)
		if share > th.MaxSwitchShare {
			out = append(out, fmt.Sprintf("%d of %d series switched method (%s), more than %s",
				c.Switched, c.CommonSeries, pct(share), pct(th.MaxSwitchShare)))
		}
	}
	if on(th.MaxMeanScoreWorsening) && c.ScoresCompared > 0 && c.MeanScoreChange > th.MaxMeanScoreWorsening {
		out = append(out, fmt.Sprintf("mean %s of the chosen entries worsened by %s over %d series, more than %s",
			d.Head.Metric, FormatScoreChange(c.MeanScoreChange), c.ScoresCompared, FormatScore(th.MaxMeanScoreWorsening)))
	}
	if th.MaxAdded >= 0 && c.AddedSeries > th.MaxAdded {
		out = append(out, fmt.Sprintf("%d series added, more than %d", c.AddedSeries, th.MaxAdded))
	}
	if th.MaxRemoved >= 0 && c.RemovedSeries > th.MaxRemoved {
		out = append(out, fmt.Sprintf("%d series removed, more than %d", c.RemovedSeries, th.MaxRemoved))
	}
	return out
}

func pct(f float64) string { return fmt.Sprintf("%.1f%%", 100*f) }

func (d *Diff) rowNoun(n int) string {
	switch {
	case d.Mode == ModePerMethod && n == 1:
		return "series × method row"
	case d.Mode == ModePerMethod:
		return "series × method rows"
	}
	return "series"
}

// describe names a row: its key as column=value pairs, and the method.
func (d *Diff) describe(r Row) string {
	parts := make([]string, len(d.Keys))
	for i, k := range d.Keys {
		parts[i] = k + "=" + r.Key[i]
	}
	s := strings.Join(parts, " / ")
	if len(d.Keys) == 0 {
		s = "the series"
	}
	if m := d.methodCell(r, " -> "); m != "" {
		s += " (" + m + ")"
	}
	return s
}
