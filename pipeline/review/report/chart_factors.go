package report

import (
	"fmt"
	"math"
	"sort"
	"time"
)

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

// maxSeason is the longest season a spec may have (calendar.season_length).
const maxSeason = 1000

// factorChart draws a series' seasonal factors as bars from the neutral
// value (1 for multiplicative, 0 for additive factors).
func factorChart(id string, d *seriesData, freq string, season int) string {
	fs, season := shownFactors(d.factors, season)
	m := max(season, 1)
	neutral := 0.0
	if d.form == "multiplicative" {
		neutral = 1
	}
	lo, hi := factorRange(fs, neutral)
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

	kind := "factor"
	if neutral == 0 {
		kind = "component"
	}
	desc := factorDescription(d, fs, neutral, kind)
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

// factorDescription is the factor chart's text alternative.
func factorDescription(d *seriesData, fs []factor, neutral float64, kind string) string {
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
	return fmt.Sprintf("%d %s seasonal %ss (%s), neutral value %s. Highest at position %d (%s), lowest at position %d (%s).",
		len(fs), d.form, kind, d.decomp, fmtNum(neutral, 0), maxF.position, fmtAuto(maxF.value), minF.position, fmtAuto(minF.value))
}

// factorRange is the range of the factors and the neutral value.
func factorRange(fs []factor, neutral float64) (lo, hi float64) {
	lo, hi = neutral, neutral
	for _, f := range fs {
		if !math.IsNaN(f.value) {
			lo, hi = math.Min(lo, f.value), math.Max(hi, f.value)
		}
	}
	return lo, hi
}

// shownFactors gives the factors the chart shows, by position, and the
// season length it spans.
func shownFactors(factors []factor, season int) ([]factor, int) {
	// Positions run 1…season (at most maxSeason, the spec's limit); a
	// table holding others (a damaged run folder) must not size the chart.
	if season < 1 || season > maxSeason {
		season = 0
		for _, f := range factors {
			if f.position >= 1 && f.position <= maxSeason {
				season = max(season, f.position)
			}
		}
	}
	var fs []factor
	for _, f := range factors {
		if f.position >= 1 && f.position <= season {
			fs = append(fs, f)
		}
	}
	sort.Slice(fs, func(i, j int) bool { return fs[i].position < fs[j].position })
	return fs, season
}
