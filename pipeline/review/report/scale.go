package report

import (
	"math"
	"strconv"
	"strings"
	"time"
)

// linear maps a data interval onto a pixel interval.
type linear struct {
	d0, d1 float64 // data
	p0, p1 float64 // pixels
}

func (s linear) at(v float64) float64 {
	if s.d1 == s.d0 {
		return (s.p0 + s.p1) / 2
	}
	return s.p0 + (v-s.d0)/(s.d1-s.d0)*(s.p1-s.p0)
}

// niceStep is a round step (1, 2, 2.5 or 5 times a power of ten) that cuts
// span into about n pieces.
func niceStep(span float64, n int) float64 {
	if span <= 0 || math.IsNaN(span) || math.IsInf(span, 0) || n < 1 {
		return 1
	}
	raw := span / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*mag >= raw {
			return m * mag
		}
	}
	return 10 * mag
}

// closestStep is the round step (1, 2, 2.5 or 5 times a power of ten)
// that cuts span into the number of pieces closest to n.
func closestStep(span float64, n int) float64 {
	if span <= 0 || math.IsNaN(span) || math.IsInf(span, 0) || n < 1 {
		return 1
	}
	raw := span / float64(n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	best, bestD := mag, math.Inf(1)
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		d := math.Abs(span/(m*mag) - float64(n))
		if d < bestD {
			best, bestD = m*mag, d
		}
	}
	return best
}

// niceTicks returns the round values from below lo to above hi, about n
// intervals apart, and the step between them.
func niceTicks(lo, hi float64, n int) ([]float64, float64) {
	if hi < lo {
		lo, hi = hi, lo
	}
	if hi == lo {
		if lo == 0 {
			hi = 1
		} else {
			d := math.Abs(lo) * 0.1
			lo, hi = lo-d, hi+d
		}
	}
	step := niceStep(hi-lo, n)
	start := math.Floor(lo/step+1e-9) * step
	end := math.Ceil(hi/step-1e-9) * step
	var out []float64
	for i := 0; ; i++ {
		v := start + float64(i)*step
		if v > end+step*1e-9 || i > 100 {
			break
		}
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		out = append(out, v)
	}
	return out, step
}

// countTicks are whole-number ticks from 0 to at least hi, at most about
// n intervals (steps of 1, 2 or 5 times a power of ten).
func countTicks(hi float64, n int) ([]float64, float64) {
	if hi < 1 {
		hi = 1
	}
	step := 1.0
	for mag := 1.0; ; mag *= 10 {
		found := false
		for _, m := range []float64{1, 2, 5} {
			if math.Ceil(hi/(m*mag)) <= float64(n) {
				step, found = m*mag, true
				break
			}
		}
		if found {
			break
		}
	}
	var out []float64
	for v := 0.0; v < hi+step; v += step {
		out = append(out, v)
		if v >= hi {
			break
		}
	}
	return out, step
}

// decimalsFor is the number of decimals that shows values step apart.
func decimalsFor(step float64) int {
	if step <= 0 || math.IsNaN(step) || math.IsInf(step, 0) {
		return 0
	}
	d := 0
	for d < 6 && math.Abs(step*math.Pow(10, float64(d))-math.Round(step*math.Pow(10, float64(d)))) > 1e-6 {
		d++
	}
	return d
}

// fmtNum renders v with the given decimals and thousands separators; NaN
// renders as an em dash.
func fmtNum(v float64, decimals int) string {
	if math.IsNaN(v) {
		return "—"
	}
	if math.IsInf(v, 1) {
		return "∞"
	}
	if math.IsInf(v, -1) {
		return "−∞"
	}
	s := strconv.FormatFloat(math.Abs(v), 'f', decimals, 64)
	intPart, frac := s, ""
	if i := strings.IndexByte(s, '.'); i >= 0 {
		intPart, frac = s[:i], s[i:]
	}
	var b strings.Builder
	neg := v < 0 && strings.Trim(s, "0.") != ""
	if neg {
		b.WriteString("−")
	}
	for i, c := range intPart {
		if i > 0 && (len(intPart)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	b.WriteString(frac)
	return b.String()
}

// fmtAuto renders a value for a table: three significant decimals for
// small numbers, whole numbers with separators for large ones.
func fmtAuto(v float64) string {
	a := math.Abs(v)
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fmtNum(v, 0)
	case a >= 1000:
		return fmtNum(v, 0)
	case a >= 100:
		return fmtNum(v, 1)
	case a >= 1 || a == 0:
		return fmtNum(v, 2)
	default:
		return fmtNum(v, 3)
	}
}

// exact is v written so that it parses back to the same float64; data-value
// attributes carry it so that the shown (rounded) numbers can be checked.
func exact(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// days is t as days since 1970-01-01, the x coordinate of dated charts.
func days(t time.Time) float64 { return float64(t.Unix()) / 86400 }

var monthAbbr = [...]string{"Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"}

// dateTick is one labelled tick of a time axis.
type dateTick struct {
	at    time.Time
	label string
}

// dateTicks picks calendar-aligned ticks between lo and hi (inclusive): the
// finest of days, weeks, months, quarters, half-years, years or several
// years that gives at most maxTicks ticks.
func dateTicks(lo, hi time.Time, maxTicks int) []dateTick {
	if hi.Before(lo) {
		lo, hi = hi, lo
	}
	type unit struct {
		months, days int
	}
	units := []unit{{0, 1}, {0, 2}, {0, 7}, {0, 14}, {1, 0}, {2, 0}, {3, 0}, {6, 0}, {12, 0}, {24, 0}, {60, 0}, {120, 0}, {240, 0}, {600, 0}, {1200, 0}}
	for _, u := range units {
		ticks := ticksFor(lo, hi, u.months, u.days)
		if len(ticks) <= maxTicks || u == units[len(units)-1] {
			return ticks
		}
	}
	return nil
}

func ticksFor(lo, hi time.Time, months, nDays int) []dateTick {
	var out []dateTick
	if nDays > 0 {
		t := time.Date(lo.Year(), lo.Month(), lo.Day(), 0, 0, 0, 0, time.UTC)
		if nDays >= 7 {
			for t.Weekday() != time.Monday {
				t = t.AddDate(0, 0, 1)
			}
		}
		for ; !t.After(hi) && len(out) < 1000; t = t.AddDate(0, 0, nDays) {
			if t.Before(lo) {
				continue
			}
			out = append(out, dateTick{t, t.Format("2 Jan 2006")})
		}
		return out
	}
	t := time.Date(lo.Year(), lo.Month(), 1, 0, 0, 0, 0, time.UTC)
	if t.Before(lo) {
		t = t.AddDate(0, 1, 0)
	}
	for {
		idx := t.Year()*12 + int(t.Month()) - 1
		if idx%months == 0 {
			break
		}
		t = t.AddDate(0, 1, 0)
	}
	for ; !t.After(hi) && len(out) < 1000; t = t.AddDate(0, months, 0) {
		label := strconv.Itoa(t.Year())
		if months < 12 {
			label = monthAbbr[t.Month()-1] + " " + label
		}
		out = append(out, dateTick{t, label})
	}
	return out
}
