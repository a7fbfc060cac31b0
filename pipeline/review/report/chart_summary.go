package report

import (
	"almanac/pipeline/review/look"

	"fmt"
	"math"
	"sort"
	"strings"
)

// lbEntry is one bar of the leaderboard chart.
type lbEntry struct {
	label          string
	scored         int
	mean, median   float64
	chosen         int
	lowest, hasLow bool
}

// leaderboardChart draws mean (bar) and median (tick) MASE per entry,
// lowest mean first, and beside it the series each entry was chosen for.
func leaderboardChart(id string, entries []lbEntry) string {
	es := append([]lbEntry(nil), entries...)
	sort.SliceStable(es, func(i, j int) bool {
		a, b := es[i].mean, es[j].mean
		if math.IsNaN(a) != math.IsNaN(b) {
			return !math.IsNaN(a)
		}
		return a < b
	})
	const (
		labelW = 190.0
		ax0    = 200.0
		ax1    = 690.0
		bx0    = 770.0
		bx1    = 970.0
		top    = 58.0
		rowH   = 26.0
		barH   = 14.0
	)
	h := top + rowH*float64(len(es)) + 44
	maxV, maxC := 1.0, 1
	for _, e := range es {
		for _, v := range []float64{e.mean, e.median} {
			if !math.IsNaN(v) && !math.IsInf(v, 0) && v > maxV {
				maxV = v
			}
		}
		maxC = max(maxC, e.chosen)
	}
	ticks, step := niceTicks(0, maxV*1.08, 6)
	xs := linear{0, ticks[len(ticks)-1], ax0, ax1}
	cticks, cstep := countTicks(float64(maxC), 4)
	cs := linear{0, cticks[len(cticks)-1], bx0, bx1}

	s := newSVG(id, "chart leaderboard-chart", 1000, h, "Backtest MASE per entry, and the series each was chosen for", leaderboardDescription(es))
	bottom := top + rowH*float64(len(es))

	s.text(ax0, 18, "start", "head", "Mean MASE over series (bar) and median (black tick)")
	s.text(bx0, 18, "start", "head", "Series chosen for")
	// legend
	s.rect(ax0, 28, 18, 10, colBar, "")
	s.text(ax0+24, 37, "start", "small", "mean")
	s.line(ax0+76, 26, ax0+76, 40, colInk, 2.5, "")
	s.text(ax0+84, 37, "start", "small", "median")
	s.line(ax0+146, 26, ax0+146, 40, colAxis, 1, "4 3")
	s.text(ax0+154, 37, "start", "small", "MASE 1: the benchmark's in-sample error")

	for _, t := range ticks {
		x := xs.at(t)
		s.line(x, top-6, x, bottom, colGrid, 1, "")
		s.text(x, bottom+16, "middle", "tick", fmtNum(t, decimalsFor(step)))
	}
	s.text((ax0+ax1)/2, bottom+36, "middle", "axis", "MASE (lower is better)")
	for _, t := range cticks {
		x := cs.at(t)
		s.line(x, top-6, x, bottom, colGrid, 1, "")
		s.text(x, bottom+16, "middle", "tick", fmtNum(t, decimalsFor(cstep)))
	}
	s.text((bx0+bx1)/2, bottom+36, "middle", "axis", "series")
	if x := xs.at(1); x <= ax1 {
		s.line(x, top-6, x, bottom, colAxis, 1, "4 3")
	}
	for i, e := range es {
		y := top + rowH*float64(i)
		cy := y + rowH/2
		label := e.label
		if e.lowest {
			label += " (lowest)"
		}
		s.raw(`<text x="%.1f" y="%.1f" text-anchor="end" class="label%s">%s</text>`, labelW, cy+4, boolClass(e.lowest, " strong"), esc(label))
		if math.IsNaN(e.mean) {
			s.text(ax0+6, cy+4, "start", "small", "not scored")
		} else {
			fill := colBar
			if e.lowest {
				fill = look.History.Hex()
			}
			s.rect(ax0, cy-barH/2, xs.at(e.mean)-ax0, barH, fill, "")
			end := xs.at(e.mean)
			if !math.IsNaN(e.median) {
				mx := xs.at(e.median)
				s.line(mx, cy-barH/2-3, mx, cy+barH/2+3, colInk, 2.5, "")
				end = math.Max(end, mx)
			}
			s.text(end+6, cy+4, "start", "value", fmtNum(e.mean, 3))
		}
		if e.chosen > 0 {
			s.rect(bx0, cy-barH/2, cs.at(float64(e.chosen))-bx0, barH, colBarAlt, "")
		}
		s.text(cs.at(float64(e.chosen))+5, cy+4, "start", "value", fmt.Sprint(e.chosen))
	}
	s.line(ax0, top-6, ax0, bottom, colAxis, 1, "")
	s.line(bx0, top-6, bx0, bottom, colAxis, 1, "")
	return s.String()
}

// leaderboardDescription is the leaderboard chart's text alternative.
func leaderboardDescription(es []lbEntry) string {
	var desc strings.Builder
	desc.WriteString("Entries from lowest to highest mean MASE over the series scored: ")
	for i, e := range es {
		if i > 0 {
			desc.WriteString("; ")
		}
		fmt.Fprintf(&desc, "%s mean %s, median %s, chosen for %d series", e.label, fmtNum(e.mean, 3), fmtNum(e.median, 3), e.chosen)
	}
	desc.WriteString(".")
	return desc.String()
}

func boolClass(b bool, c string) string {
	if b {
		return c
	}
	return ""
}

// histogramChart draws how the chosen entries' scores spread over series.
func histogramChart(id, metric string, scores []float64) string {
	v := append([]float64(nil), scores...)
	sort.Float64s(v)
	n := len(v)
	med := median(v)
	start, step, counts, over := binScores(v)
	nb := len(counts)
	total := nb
	if over > 0 {
		total++
	}
	const (
		x0, x1 = 70.0, 980.0
		y0, y1 = 250.0, 34.0
	)
	maxC := over
	for _, c := range counts {
		maxC = max(maxC, c)
	}
	yt, ystep := countTicks(float64(maxC), 5)
	ys := linear{0, yt[len(yt)-1], y0, y1}
	bw := (x1 - x0) / float64(total)
	dec := decimalsFor(step)

	desc := fmt.Sprintf("%d series scored. %s of the chosen entry from %s to %s, median %s. Bins %s wide starting at %s",
		n, strings.ToUpper(metric), fmtNum(v[0], 3), fmtNum(v[n-1], 3), fmtNum(med, 3), fmtNum(step, dec), fmtNum(start, dec))
	if over > 0 {
		desc += fmt.Sprintf("; %d series at %s or more share the last bar", over, fmtNum(start+float64(nb)*step, dec))
	}
	s := newSVG(id, "chart histogram-chart", 1000, 300, "How the chosen entries' backtest scores spread over the series", desc+".")
	for _, t := range yt {
		y := ys.at(t)
		s.line(x0, y, x1, y, colGrid, 1, "")
		s.text(x0-8, y+4, "end", "tick", fmtNum(t, decimalsFor(ystep)))
	}
	s.raw(`<text x="18" y="%.1f" text-anchor="middle" class="axis" transform="rotate(-90 18 %.1f)">series</text>`, (y0+y1)/2, (y0+y1)/2)
	for i, c := range counts {
		x := x0 + bw*float64(i)
		if c > 0 {
			s.rect(x+1, ys.at(float64(c)), bw-2, y0-ys.at(float64(c)), colBar, "")
			if bw >= 22 {
				s.text(x+bw/2, ys.at(float64(c))-4, "middle", "small", fmt.Sprint(c))
			}
		}
	}
	labelEvery := int(math.Ceil(float64(nb+1) * 44 / (x1 - x0)))
	for i := 0; i <= nb; i++ {
		x := x0 + bw*float64(i)
		s.line(x, y0, x, y0+4, colAxis, 1, "")
		if i%labelEvery == 0 {
			s.text(x, y0+17, "middle", "tick", fmtNum(start+step*float64(i), dec))
		}
	}
	if over > 0 {
		x := x0 + bw*float64(nb)
		s.rect(x+1, ys.at(float64(over)), bw-2, y0-ys.at(float64(over)), colBarHi, "")
		if bw >= 22 {
			s.text(x+bw/2, ys.at(float64(over))-4, "middle", "small", fmt.Sprint(over))
		}
		s.text(x+bw/2, y0+30, "middle", "tick", "more")
	}
	if med < start+float64(nb)*step {
		mx := x0 + (med-start)/step*bw
		s.line(mx, y1-8, mx, y0, colInk, 1.5, "5 3")
		anchor := "start"
		lx := mx + 5
		if mx > x1-140 {
			anchor, lx = "end", mx-5
		}
		s.text(lx, y1-2, anchor, "small", "median "+fmtNum(med, 3))
	}
	s.line(x0, y0, x1, y0, colAxis, 1, "")
	s.text((x0+x1)/2, 292, "middle", "axis", fmt.Sprintf("%s of the chosen entry, mean over the backtest folds (lower is better)", strings.ToUpper(metric)))
	return s.String()
}

// binScores bins sorted scores for the histogram: bins of width step from
// start, and how many scores fall past the last bin into the overflow bin.
func binScores(v []float64) (start, step float64, counts []int, over int) {
	n := len(v)
	lo, hi := v[0], v[n-1]
	if lo > 0 {
		lo = 0
	}
	// A few very bad series would squeeze the rest into one bar: past
	// three times the 95th percentile, values share an overflow bin.
	overAt := math.Inf(1)
	if n >= 10 {
		q95 := v[int(math.Ceil(0.95*float64(n)))-1]
		if q95 > 0 && hi > 3*q95 {
			overAt = q95 * 1.5
		}
	}
	top := hi
	if !math.IsInf(overAt, 1) {
		top = overAt
	}
	bins := int(math.Round(math.Sqrt(float64(n)) * 2))
	bins = max(8, min(bins, 40))
	step = closestStep(top-lo, bins)
	start = math.Floor(lo/step) * step
	nb := int(math.Ceil((top-start)/step + 1e-9))
	if nb < 1 {
		nb = 1
	}
	if top == start+float64(nb)*step && math.IsInf(overAt, 1) {
		nb++ // the maximum itself needs a bin
	}
	counts = make([]int, nb)
	for _, x := range v {
		if x >= start+float64(nb)*step {
			over++
			continue
		}
		i := int(math.Floor((x - start) / step))
		counts[max(0, min(i, nb-1))]++
	}
	return start, step, counts, over
}

func median(sorted []float64) float64 {
	n := len(sorted)
	if n == 0 {
		return math.NaN()
	}
	if n%2 == 1 {
		return sorted[n/2]
	}
	return (sorted[n/2-1] + sorted[n/2]) / 2
}
