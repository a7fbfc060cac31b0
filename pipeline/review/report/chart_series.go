package report

import (
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"almanac/pipeline/review/look"
)

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

	desc := seriesDescription(d, levels, allPeriods)
	s := newSVG(id, "chart series-chart", W, H, name+": history and forecast", desc)

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
		drawBands(s, d, levels, lv, xs, ys, freq, W, y0, y1)
	}

	drawLines(s, d, xs, ys, tmin)

	seriesLegend(s, d, lv, x0)
	return s.String()
}

// drawBands draws the forecast's interval bands, widest first, and marks
// where the forecast starts.
func drawBands(s *svg, d *seriesData, levels, lv []int, xs, ys linear, freq string, w, y0, y1 float64) {
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
	// The look (package look): the narrowest level a filled band, each
	// wider one its two edges, dotted, gaps longer the wider the level.
	sort.Slice(order, func(a, b int) bool { return levels[order[a]] < levels[order[b]] })
	for rank, j := range order {
		lo := make([]float64, len(d.forecast))
		up := make([]float64, len(d.forecast))
		for i, p := range d.forecast {
			lo[i], up[i] = ys.at(p.lower[j]), ys.at(p.upper[j])
			if math.IsNaN(p.lower[j]) || math.IsNaN(p.upper[j]) {
				lo[i], up[i] = math.NaN(), math.NaN()
			}
		}
		if rank == 0 {
			if path := bandOf(fx, lo, up); path != "" {
				s.raw(`<path d="%s" fill="%s" stroke="none" class="band"><title>%d%% interval</title></path>`, path, colBand, levels[j])
			}
			continue
		}
		if path := pathOf(fx, up) + pathOf(fx, lo); path != "" {
			s.raw(`<path d="%s" fill="none" stroke="%s" stroke-width="%g" stroke-dasharray="%s" class="fence"><title>%d%% interval</title></path>`,
				path, colForecast, look.FenceWidth, dashOf(look.FenceDash(rank)), levels[j])
		}
	}
	// where the forecast starts
	fs := xs.at(days(d.forecast[0].period)) - (xs.at(days(d.forecast[0].period))-xs.at(days(d.forecast[0].period)-periodDays(freq)))/2
	s.line(fs, y1-6, fs, y0, colAxis, 1, "3 3")
	label := "forecast from " + isoDate(d.forecast[0].period)
	if fs+4+float64(textWidth(label, 12)) > w-4 {
		s.text(fs-4, y1-8, "end", "small", label)
	} else {
		s.text(fs+4, y1-8, "start", "small", label)
	}
}

// drawLines draws the history (observed and trend), the previous run's
// forecast from tmin on, and the forecast with its points.
func drawLines(s *svg, d *seriesData, xs, ys linear, tmin time.Time) {
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
			s.raw(`<path d="%s" fill="none" stroke="%s" stroke-width="2" stroke-dasharray="%s"/>`, p, colTrend, dashOf(look.TrendDash))
		}
		if p := pathOf(px, py); p != "" {
			s.raw(`<path d="%s" fill="none" stroke="%s" stroke-width="%g" stroke-linejoin="round"/>`, p, colObserved, look.HistoryWidth)
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
			s.raw(`<path d="%s" fill="none" stroke="%s" stroke-width="2" stroke-dasharray="%s"/>`, p, colPrevious, dashOf(look.PreviousDash))
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
			s.raw(`<path d="%s" fill="none" stroke="%s" stroke-width="%g" stroke-linejoin="round"/>`, p, colForecast, look.ForecastWidth)
		}
		if len(d.forecast) <= 60 {
			m := look.MarkerSize
			for i := range fx {
				if !math.IsNaN(fy[i]) {
					s.raw(`<rect x="%.1f" y="%.1f" width="%g" height="%g" fill="%s"/>`, fx[i]-m/2, fy[i]-m/2, m, m, colForecast)
				}
			}
		}
	}
}

// seriesDescription is the chart's text alternative: what is drawn, from
// when to when, in which range.
func seriesDescription(d *seriesData, levels []int, allPeriods int) string {
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
			sort.Ints(lv)
			fmt.Fprintf(&desc, "Filled: the %d%% interval. ", lv[0])
			if len(lv) > 1 {
				fmt.Fprintf(&desc, "Dotted edges: the %s interval%s. ", joinLevels(lv[1:]), map[bool]string{true: "s", false: ""}[len(lv) > 2])
			}
		}
	} else {
		desc.WriteString("No forecast. ")
	}
	if len(d.previous) > 0 {
		fmt.Fprintf(&desc, "Dotted stone grey: the previous run's forecast by %s. ", d.prevWhat)
	}
	return strings.TrimSpace(desc.String())
}

// seriesLegend draws the legend of a series chart, one row above the plot
// from x0.
func seriesLegend(s *svg, d *seriesData, lv []int, x0 float64) {
	lx := x0
	item := func(draw func(x float64), label string) {
		draw(lx)
		s.text(lx+30, 20, "start", "small", label)
		lx += 30 + float64(textWidth(label, 12)) + 22
	}
	if len(d.periods) > 0 {
		item(func(x float64) { s.line(x, 16, x+24, 16, colObserved, look.HistoryWidth, "") }, "observed")
		hasTrend := false
		for _, v := range d.trend {
			if !math.IsNaN(v) {
				hasTrend = true
				break
			}
		}
		if hasTrend {
			item(func(x float64) { s.line(x, 16, x+24, 16, colTrend, 2, dashOf(look.TrendDash)) }, "trend ("+d.decomp+")")
		}
	}
	if len(d.forecast) > 0 {
		item(func(x float64) {
			s.line(x, 16, x+24, 16, colForecast, look.ForecastWidth, "")
			m := look.MarkerSize
			s.rect(x+12-m/2, 16-m/2, m, m, colForecast, "")
		}, "forecast: "+d.method)
		asc := append([]int(nil), lv...)
		sort.Ints(asc)
		for rank, l := range asc {
			item(func(x float64) {
				if rank == 0 {
					s.rect(x, 10, 24, 12, colBand, "")
					return
				}
				s.line(x, 11, x+24, 11, colForecast, look.FenceWidth, dashOf(look.FenceDash(rank)))
				s.line(x, 21, x+24, 21, colForecast, look.FenceWidth, dashOf(look.FenceDash(rank)))
			}, fmt.Sprintf("%d%% interval", l))
		}
	}
	if len(d.previous) > 0 {
		item(func(x float64) { s.line(x, 16, x+24, 16, colPrevious, 2, "2 3") }, "previous run: "+d.prevWhat)
	}
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

func joinLevels(lv []int) string {
	parts := make([]string, len(lv))
	for i, l := range lv {
		parts[i] = fmt.Sprintf("%d%%", l)
	}
	return strings.Join(parts, " and ")
}
