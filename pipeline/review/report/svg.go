package report

import (
	"fmt"
	"html"
	"math"
	"sort"
	"strings"
	"time"
)

// Colours, chosen to stay apart for the common colour-vision deficiencies
// and to print legibly in grey: every series is also told apart by its
// dash pattern or shape.
const (
	colInk      = "#1d1d1d"
	colGrid     = "#e3e3e3"
	colAxis     = "#6b6b6b"
	colObserved = "#1d1d1d"
	colTrend    = "#b15a00"
	colForecast = "#1b5fa6"
	colPrevious = "#7a7a7a"
	colBar      = "#4d6f94"
	colBarAlt   = "#8a6d3b"
	colBarHi    = "#a33b3b"
)

// svg builds one inline SVG figure.
type svg struct {
	b      strings.Builder
	w, h   float64
	id     string
	closed bool
}

var esc = html.EscapeString

// newSVG opens an SVG of w×h user units whose accessible name is title and
// whose description is desc.
func newSVG(id, class string, w, h float64, title, desc string) *svg {
	s := &svg{w: w, h: h, id: id}
	fmt.Fprintf(&s.b, `<svg xmlns="http://www.w3.org/2000/svg" class="%s" id="%s" viewBox="0 0 %g %g" width="%g" height="%g" role="img" aria-labelledby="%s-t %s-d" preserveAspectRatio="xMinYMin meet">`,
		class, id, w, h, w, h, id, id)
	fmt.Fprintf(&s.b, `<title id="%s-t">%s</title><desc id="%s-d">%s</desc>`, id, esc(title), id, esc(desc))
	return s
}

func (s *svg) raw(format string, args ...any) { fmt.Fprintf(&s.b, format, args...) }

func (s *svg) line(x1, y1, x2, y2 float64, stroke string, width float64, dash string) {
	d := ""
	if dash != "" {
		d = fmt.Sprintf(` stroke-dasharray="%s"`, dash)
	}
	s.raw(`<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="%s" stroke-width="%g"%s/>`, x1, y1, x2, y2, stroke, width, d)
}

func (s *svg) rect(x, y, w, h float64, fill string, extra string) {
	if w < 0 {
		x, w = x+w, -w
	}
	if h < 0 {
		y, h = y+h, -h
	}
	s.raw(`<rect x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="%s"%s/>`, x, y, w, h, fill, extra)
}

// text writes a label; anchor is start, middle or end.
func (s *svg) text(x, y float64, anchor, class, label string) {
	c := ""
	if class != "" {
		c = fmt.Sprintf(` class="%s"`, class)
	}
	s.raw(`<text x="%.1f" y="%.1f" text-anchor="%s"%s>%s</text>`, x, y, anchor, c, esc(label))
}

func (s *svg) String() string {
	if !s.closed {
		s.b.WriteString(`</svg>`)
		s.closed = true
	}
	return s.b.String()
}

// pathOf draws the points (x, y) as a path, lifting the pen over NaN.
func pathOf(xs, ys []float64) string {
	var b strings.Builder
	pen := false
	for i := range xs {
		if math.IsNaN(ys[i]) || math.IsNaN(xs[i]) {
			pen = false
			continue
		}
		if pen {
			fmt.Fprintf(&b, "L%.1f %.1f", xs[i], ys[i])
		} else {
			fmt.Fprintf(&b, "M%.1f %.1f", xs[i], ys[i])
			pen = true
		}
	}
	return b.String()
}

// bandOf draws the area between lo and hi as closed shapes, one per run of
// points where both are known.
func bandOf(xs, lo, hi []float64) string {
	var b strings.Builder
	flush := func(idx []int) {
		if len(idx) == 0 {
			return
		}
		for j, i := range idx {
			c := "L"
			if j == 0 {
				c = "M"
			}
			fmt.Fprintf(&b, "%s%.1f %.1f", c, xs[i], hi[i])
		}
		for j := len(idx) - 1; j >= 0; j-- {
			i := idx[j]
			fmt.Fprintf(&b, "L%.1f %.1f", xs[i], lo[i])
		}
		b.WriteString("Z")
	}
	var run []int
	for i := range xs {
		if math.IsNaN(lo[i]) || math.IsNaN(hi[i]) {
			flush(run)
			run = run[:0]
			continue
		}
		run = append(run, i)
	}
	flush(run)
	return b.String()
}

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

	var desc strings.Builder
	desc.WriteString("Entries from lowest to highest mean MASE over the series scored: ")
	for i, e := range es {
		if i > 0 {
			desc.WriteString("; ")
		}
		fmt.Fprintf(&desc, "%s mean %s, median %s, chosen for %d series", e.label, fmtNum(e.mean, 3), fmtNum(e.median, 3), e.chosen)
	}
	desc.WriteString(".")
	s := newSVG(id, "chart leaderboard-chart", 1000, h, "Backtest MASE per entry, and the series each was chosen for", desc.String())
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
				fill = "#2f5477"
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
	step := closestStep(top-lo, bins)
	start := math.Floor(lo/step) * step
	nb := int(math.Ceil((top-start)/step + 1e-9))
	if nb < 1 {
		nb = 1
	}
	if top == start+float64(nb)*step && math.IsInf(overAt, 1) {
		nb++ // the maximum itself needs a bin
	}
	counts := make([]int, nb)
	over := 0
	for _, x := range v {
		if x >= start+float64(nb)*step {
			over++
			continue
		}
		i := int(math.Floor((x - start) / step))
		counts[max(0, min(i, nb-1))]++
	}
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

// seriesChart draws a series' history, trend, drawn forecast with its
// interval bands, and the previous run's forecast when there is one.
// At most maxHist periods of history are drawn (0: all), the latest.
func seriesChart(id string, d *seriesData, levels []int, freq string, maxHist int) string {
	allPeriods := len(d.periods)
	if maxHist > 0 && len(d.periods) > maxHist {
		cut := len(d.periods) - maxHist
		dd := *d
		dd.periods, dd.observed, dd.trend = d.periods[cut:], d.observed[cut:], d.trend[cut:]
		d = &dd
	}
	const (
		W, H   = 1000.0, 360.0
		x0, x1 = 78.0, 980.0
		y0, y1 = 312.0, 50.0
	)
	var tmin, tmax time.Time
	seen := false
	note := func(t time.Time) {
		if !seen || t.Before(tmin) {
			tmin = t
		}
		if !seen || t.After(tmax) {
			tmax = t
		}
		seen = true
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	val := func(v float64) {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	for i, t := range d.periods {
		note(t)
		val(d.observed[i])
		val(d.trend[i])
	}
	for _, p := range d.forecast {
		note(p.period)
		val(p.value)
		for j := range p.lower {
			val(p.lower[j])
			val(p.upper[j])
		}
	}
	for _, p := range d.previous {
		if seen && !p.period.Before(tmin) {
			note(p.period)
			val(p.value)
		}
	}
	name := displayKey(d.key)
	if !seen || math.IsInf(lo, 1) {
		s := newSVG(id, "chart series-chart", W, 120, name+": no values", "The run holds no history or forecast values for this series.")
		s.text(W/2, 64, "middle", "axis", "No history or forecast values to draw for this series.")
		return s.String()
	}
	if lo >= 0 {
		lo = 0
	}
	yt, ystep := niceTicks(lo, hi, 5)
	ys := linear{yt[0], yt[len(yt)-1], y0, y1}
	// Half a period of room at each end so the first and last points do
	// not sit on the frame.
	pad := periodDays(freq) / 2
	xs := linear{days(tmin) - pad, days(tmax) + pad, x0, x1}

	var desc strings.Builder
	obsN, obsLo, obsHi := 0, math.Inf(1), math.Inf(-1)
	for _, v := range d.observed {
		if !math.IsNaN(v) {
			obsN++
			obsLo, obsHi = math.Min(obsLo, v), math.Max(obsHi, v)
		}
	}
	if len(d.periods) < allPeriods {
		fmt.Fprintf(&desc, "The last %d of %d periods of history are drawn. ", len(d.periods), allPeriods)
	}
	if len(d.periods) > 0 {
		fmt.Fprintf(&desc, "History: %d periods from %s to %s, %d observed values from %s to %s. ",
			len(d.periods), isoDate(d.periods[0]), isoDate(d.periods[len(d.periods)-1]), obsN, fmtAuto(obsLo), fmtAuto(obsHi))
	} else {
		desc.WriteString("No history in the components table. ")
	}
	if len(d.forecast) > 0 {
		fv := make([]float64, 0, len(d.forecast))
		for _, p := range d.forecast {
			if !math.IsNaN(p.value) {
				fv = append(fv, p.value)
			}
		}
		fmt.Fprintf(&desc, "Forecast by %s: %d periods from %s to %s", d.method, len(d.forecast), isoDate(d.forecast[0].period), isoDate(d.forecast[len(d.forecast)-1].period))
		if len(fv) > 0 {
			sort.Float64s(fv)
			fmt.Fprintf(&desc, ", values from %s to %s", fmtAuto(fv[0]), fmtAuto(fv[len(fv)-1]))
		}
		desc.WriteString(". ")
		if lv := drawnLevels(d, levels); len(lv) > 0 {
			fmt.Fprintf(&desc, "Shaded: the %s interval%s. ", joinLevels(lv), map[bool]string{true: "s", false: ""}[len(lv) > 1])
		}
	} else {
		desc.WriteString("No forecast. ")
	}
	if len(d.previous) > 0 {
		fmt.Fprintf(&desc, "Dotted grey: the previous run's forecast by %s. ", d.prevWhat)
	}
	s := newSVG(id, "chart series-chart", W, H, name+": history and forecast", strings.TrimSpace(desc.String()))

	// grid and axes
	for _, t := range yt {
		y := ys.at(t)
		stroke := colGrid
		if t == 0 && yt[0] < 0 {
			stroke = colAxis
		}
		s.line(x0, y, x1, y, stroke, 1, "")
		s.text(x0-8, y+4, "end", "tick", fmtNum(t, decimalsFor(ystep)))
	}
	padDur := time.Duration(pad * 24 * float64(time.Hour))
	for _, t := range dateTicks(tmin.Add(-padDur), tmax.Add(padDur), 9) {
		x := xs.at(days(t.at))
		s.line(x, y0, x, y0+5, colAxis, 1, "")
		s.line(x, y1, x, y0, colGrid, 1, "2 4")
		s.text(x, y0+19, "middle", "tick", t.label)
	}
	s.line(x0, y0, x1, y0, colAxis, 1, "")

	// forecast bands, widest first
	lv := drawnLevels(d, levels)
	if len(d.forecast) > 0 {
		fx := make([]float64, len(d.forecast))
		for i, p := range d.forecast {
			fx[i] = xs.at(days(p.period))
		}
		drawnSet := map[int]bool{}
		for _, l := range lv {
			drawnSet[l] = true
		}
		order := make([]int, 0, len(levels))
		for j := range levels {
			if drawnSet[levels[j]] {
				order = append(order, j)
			}
		}
		sort.Slice(order, func(a, b int) bool { return levels[order[a]] > levels[order[b]] })
		for rank, j := range order {
			lo := make([]float64, len(d.forecast))
			up := make([]float64, len(d.forecast))
			for i, p := range d.forecast {
				lo[i], up[i] = ys.at(p.lower[j]), ys.at(p.upper[j])
				if math.IsNaN(p.lower[j]) || math.IsNaN(p.upper[j]) {
					lo[i], up[i] = math.NaN(), math.NaN()
				}
			}
			if path := bandOf(fx, lo, up); path != "" {
				op := 0.14 + 0.14*float64(rank)
				s.raw(`<path d="%s" fill="%s" fill-opacity="%.2f" stroke="none"><title>%d%% interval</title></path>`, path, colForecast, op, levels[j])
			}
		}
		// where the forecast starts
		fs := xs.at(days(d.forecast[0].period)) - (xs.at(days(d.forecast[0].period))-xs.at(days(d.forecast[0].period)-periodDays(freq)))/2
		s.line(fs, y1-6, fs, y0, colAxis, 1, "3 3")
		label := "forecast from " + isoDate(d.forecast[0].period)
		if fs+4+float64(textWidth(label, 12)) > W-4 {
			s.text(fs-4, y1-8, "end", "small", label)
		} else {
			s.text(fs+4, y1-8, "start", "small", label)
		}
	}

	if len(d.periods) > 0 {
		px := make([]float64, len(d.periods))
		py := make([]float64, len(d.periods))
		pt := make([]float64, len(d.periods))
		for i, t := range d.periods {
			px[i] = xs.at(days(t))
			py[i] = scaleOrNaN(ys, d.observed[i])
			pt[i] = scaleOrNaN(ys, d.trend[i])
		}
		if p := pathOf(px, pt); p != "" {
			s.raw(`<path d="%s" fill="none" stroke="%s" stroke-width="2" stroke-dasharray="7 4"/>`, p, colTrend)
		}
		if p := pathOf(px, py); p != "" {
			s.raw(`<path d="%s" fill="none" stroke="%s" stroke-width="1.4" stroke-linejoin="round"/>`, p, colObserved)
		}
	}
	if len(d.previous) > 0 {
		var qx, qy []float64
		for _, p := range d.previous {
			if p.period.Before(tmin) {
				continue
			}
			qx = append(qx, xs.at(days(p.period)))
			qy = append(qy, scaleOrNaN(ys, p.value))
		}
		if p := pathOf(qx, qy); p != "" {
			s.raw(`<path d="%s" fill="none" stroke="%s" stroke-width="2" stroke-dasharray="2 3"/>`, p, colPrevious)
		}
	}
	if len(d.forecast) > 0 {
		fx := make([]float64, len(d.forecast))
		fy := make([]float64, len(d.forecast))
		for i, p := range d.forecast {
			fx[i] = xs.at(days(p.period))
			fy[i] = scaleOrNaN(ys, p.value)
		}
		if p := pathOf(fx, fy); p != "" {
			s.raw(`<path d="%s" fill="none" stroke="%s" stroke-width="2.2" stroke-linejoin="round"/>`, p, colForecast)
		}
		if len(d.forecast) <= 60 {
			for i := range fx {
				if !math.IsNaN(fy[i]) {
					s.raw(`<circle cx="%.1f" cy="%.1f" r="2.4" fill="%s"/>`, fx[i], fy[i], colForecast)
				}
			}
		}
	}

	// legend, one row above the plot
	lx := x0
	item := func(draw func(x float64), label string) {
		draw(lx)
		s.text(lx+30, 20, "start", "small", label)
		lx += 30 + float64(textWidth(label, 12)) + 22
	}
	if len(d.periods) > 0 {
		item(func(x float64) { s.line(x, 16, x+24, 16, colObserved, 1.6, "") }, "observed")
		hasTrend := false
		for _, v := range d.trend {
			if !math.IsNaN(v) {
				hasTrend = true
				break
			}
		}
		if hasTrend {
			item(func(x float64) { s.line(x, 16, x+24, 16, colTrend, 2, "7 4") }, "trend ("+d.decomp+")")
		}
	}
	if len(d.forecast) > 0 {
		item(func(x float64) { s.line(x, 16, x+24, 16, colForecast, 2.2, "") }, "forecast: "+d.method)
		for rank, l := range sortedDesc(lv) {
			item(func(x float64) {
				// inner bands lie over the outer ones: show the sum
				for r := 0; r <= rank; r++ {
					s.rect(x, 10, 24, 12, colForecast, fmt.Sprintf(` fill-opacity="%.2f"`, 0.14+0.14*float64(r)))
				}
			}, fmt.Sprintf("%d%% interval", l))
		}
	}
	if len(d.previous) > 0 {
		item(func(x float64) { s.line(x, 16, x+24, 16, colPrevious, 2, "2 3") }, "previous run: "+d.prevWhat)
	}
	return s.String()
}

func scaleOrNaN(s linear, v float64) float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return math.NaN()
	}
	return s.at(v)
}

// drawnLevels are the interval levels with at least one bound in d's
// forecast.
func drawnLevels(d *seriesData, levels []int) []int {
	var out []int
	for j, l := range levels {
		for _, p := range d.forecast {
			if j < len(p.lower) && !math.IsNaN(p.lower[j]) && !math.IsNaN(p.upper[j]) {
				out = append(out, l)
				break
			}
		}
	}
	return out
}

func sortedDesc(v []int) []int {
	out := append([]int(nil), v...)
	sort.Sort(sort.Reverse(sort.IntSlice(out)))
	return out
}

func joinLevels(lv []int) string {
	parts := make([]string, len(lv))
	for i, l := range lv {
		parts[i] = fmt.Sprintf("%d%%", l)
	}
	return strings.Join(parts, " and ")
}

// textWidth estimates the width of a label in a sans-serif face of size px.
func textWidth(s string, px float64) int {
	n := 0.0
	for _, r := range s {
		switch {
		case strings.ContainsRune("il.,:;|!'()[]", r):
			n += 0.3
		case strings.ContainsRune("mwMW", r):
			n += 0.85
		case r >= 'A' && r <= 'Z':
			n += 0.66
		default:
			n += 0.55
		}
	}
	return int(math.Ceil(n * px))
}

func periodDays(freq string) float64 {
	switch freq {
	case "day":
		return 1
	case "week":
		return 7
	case "month":
		return 30.44
	case "quarter":
		return 91.31
	case "year":
		return 365.25
	}
	return 1
}

func isoDate(t time.Time) string { return t.Format("2006-01-02") }

// positionLabels names the season positions 1…m for the axis of the
// factor chart, "" where a position gets no label. For weekly data a second
// row names months.
func positionLabels(freq string, m int, lastPeriod time.Time, hasLast bool) (names, months []string) {
	names = make([]string, m+1)
	switch {
	case freq == "month" && m == 12:
		for i := 1; i <= 12; i++ {
			names[i] = monthAbbr[i-1]
		}
		return names, nil
	case freq == "quarter" && m == 4:
		for i := 1; i <= 4; i++ {
			names[i] = fmt.Sprintf("Q%d", i)
		}
		return names, nil
	case freq == "day" && m == 7:
		for i, d := range []string{"Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"} {
			names[i+1] = d
		}
		return names, nil
	}
	step := max(1, int(math.Ceil(float64(m)/14)))
	for p := 1; p <= m; p += step {
		names[p] = fmt.Sprint(p)
	}
	if freq != "week" || !hasLast {
		return names, nil
	}
	// Positions count ISO weeks from Monday 1969-12-29 modulo m, so they
	// need not start in January: name, at the first position of each month,
	// the month its week began in during the last season of the history.
	month := make([]int, m+1)
	for k := 0; k < m; k++ {
		t := lastPeriod.AddDate(0, 0, -7*k)
		month[weekPosition(t, m)] = int(t.Month())
	}
	months = make([]string, m+1)
	last := -100
	minGap := max(2, int(math.Ceil(float64(m)/20)))
	for p := 1; p <= m; p++ {
		if month[p] == 0 || (p > 1 && month[p] == month[p-1]) {
			continue
		}
		if p-last < minGap {
			continue
		}
		months[p] = monthAbbr[month[p]-1]
		last = p
	}
	return names, months
}

// weekPosition is the season position of the week starting on Monday t, as
// the pipeline numbers it: weeks since Monday 1969-12-29, modulo m, plus 1.
func weekPosition(t time.Time, m int) int {
	d := int64(math.Floor(days(t) + 0.5))
	w := floorDiv(d+3, 7)
	return int(((w%int64(m))+int64(m))%int64(m)) + 1
}

func floorDiv(a, b int64) int64 {
	q := a / b
	if (a%b != 0) && ((a < 0) != (b < 0)) {
		q--
	}
	return q
}

// factorChart draws a series' seasonal factors as bars from the neutral
// value (1 for multiplicative, 0 for additive factors).
func factorChart(id string, d *seriesData, freq string, season int) string {
	fs := append([]factor(nil), d.factors...)
	sort.Slice(fs, func(i, j int) bool { return fs[i].position < fs[j].position })
	m := season
	for _, f := range fs {
		m = max(m, f.position)
	}
	neutral := 0.0
	if d.form == "multiplicative" {
		neutral = 1
	}
	lo, hi := neutral, neutral
	for _, f := range fs {
		if !math.IsNaN(f.value) {
			lo, hi = math.Min(lo, f.value), math.Max(hi, f.value)
		}
	}
	const (
		W      = 1000.0
		x0, x1 = 78.0, 980.0
		y0, y1 = 150.0, 28.0
	)
	bw := (x1 - x0) / float64(m)
	if bw >= 40 {
		// room for the value labels above and below the bars
		pad := (hi - lo) * 0.15
		if lo < neutral {
			lo -= pad
		}
		if hi > neutral {
			hi += pad
		}
	}
	yt, ystep := niceTicks(lo, hi, 4)
	ys := linear{yt[0], yt[len(yt)-1], y0, y1}
	var last time.Time
	if len(d.periods) > 0 {
		last = d.periods[len(d.periods)-1]
	}
	labels, months := positionLabels(freq, m, last, len(d.periods) > 0)
	H := 200.0
	if months != nil {
		H = 222
	}

	var maxF, minF factor
	maxF.value, minF.value = math.Inf(-1), math.Inf(1)
	for _, f := range fs {
		if f.value > maxF.value {
			maxF = f
		}
		if f.value < minF.value {
			minF = f
		}
	}
	kind := "factor"
	if neutral == 0 {
		kind = "component"
	}
	desc := fmt.Sprintf("%d %s seasonal %ss (%s), neutral value %s. Highest at position %d (%s), lowest at position %d (%s).",
		len(fs), d.form, kind, d.decomp, fmtNum(neutral, 0), maxF.position, fmtAuto(maxF.value), minF.position, fmtAuto(minF.value))
	s := newSVG(id, "chart factor-chart", W, H, displayKey(d.key)+": seasonal "+kind+"s by season position", desc)
	s.text(x0, 16, "start", "head", fmt.Sprintf("Seasonal %ss (%s, %s), by season position", kind, d.decomp, d.form))
	for _, t := range yt {
		y := ys.at(t)
		s.line(x0, y, x1, y, colGrid, 1, "")
		s.text(x0-8, y+4, "end", "tick", fmtNum(t, decimalsFor(ystep)))
	}
	base := ys.at(neutral)
	for _, f := range fs {
		if math.IsNaN(f.value) {
			continue
		}
		x := x0 + bw*float64(f.position-1)
		gap := math.Min(2, bw*0.2)
		fill := colBar
		if f.value < neutral {
			fill = colBarAlt
		}
		s.raw(`<rect x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="%s"><title>position %d: %s (from %d values)</title></rect>`,
			x+gap/2, math.Min(base, ys.at(f.value)), math.Max(bw-gap, 0.5), math.Abs(ys.at(f.value)-base), fill, f.position, fmtAuto(f.value), f.count)
		if bw >= 40 {
			y := ys.at(f.value) - 4
			if f.value < neutral {
				y = ys.at(f.value) + 13
			}
			s.text(x+bw/2, y, "middle", "small", fmtNum(f.value, 2))
		}
	}
	s.line(x0, base, x1, base, colInk, 1.2, "")
	for p := 1; p <= m; p++ {
		if labels[p] == "" {
			continue
		}
		x := x0 + bw*(float64(p)-0.5)
		s.line(x, y0, x, y0+4, colAxis, 1, "")
		s.text(x, y0+17, "middle", "tick", labels[p])
	}
	for p := 1; p < len(months); p++ {
		if months[p] != "" {
			x := x0 + bw*float64(p-1)
			s.line(x, y0+22, x, y0+34, colAxis, 1, "")
			s.text(x+3, y0+33, "start", "small", months[p])
		}
	}
	axis := "season position"
	if months != nil {
		axis = fmt.Sprintf("season position 1–%d; below it, the month in which each position fell in the last year of history", m)
	}
	s.text((x0+x1)/2, H-8, "middle", "axis", axis)
	return s.String()
}
