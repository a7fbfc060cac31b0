package explain

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"
)

// null stands for a NULL cell.
const null = "·"

// fv formats a value: whole numbers as such, others with two decimals.
func fv(v float64) string {
	switch {
	case math.IsNaN(v):
		return null
	case v == 0:
		return "0"
	case v == math.Trunc(v) && math.Abs(v) < 1e15:
		return strconv.FormatFloat(v, 'f', 0, 64)
	}
	return strconv.FormatFloat(v, 'f', 2, 64)
}

// f3 formats a score, a multiplicative factor, ADI or CV².
func f3(v float64) string {
	if math.IsNaN(v) {
		return null
	}
	return strconv.FormatFloat(v, 'f', 3, 64)
}

// fp formats a fitted parameter.
func fp(v float64) string {
	if math.IsNaN(v) {
		return null
	}
	return strconv.FormatFloat(v, 'g', 6, 64)
}

const dateFmt = "2006-01-02"

// unit names the frequency's period, plural.
func unit(freq string) string {
	switch freq {
	case "day", "week", "month", "quarter", "year":
		return freq + "s"
	}
	return "periods"
}

// grid is a table whose columns are padded to their widest cell; the
// first `left` columns (and the last, when lastLeft) are left-aligned, the
// others right-aligned.
type grid struct {
	left     int
	lastLeft bool
	rows     [][]string
}

func (g *grid) add(cells ...string) { g.rows = append(g.rows, cells) }

func (g *grid) write(w io.Writer, indent string) {
	var widths []int
	for _, r := range g.rows {
		for i, c := range r {
			if i >= len(widths) {
				widths = append(widths, 0)
			}
			widths[i] = max(widths[i], utf8.RuneCountInString(c))
		}
	}
	for _, r := range g.rows {
		var b strings.Builder
		b.WriteString(indent)
		for i, c := range r {
			pad := strings.Repeat(" ", widths[i]-utf8.RuneCountInString(c))
			if i > 0 {
				b.WriteString("  ")
			}
			if i < g.left || (g.lastLeft && i == len(widths)-1) {
				b.WriteString(c)
				if i < len(r)-1 {
					b.WriteString(pad)
				}
			} else {
				b.WriteString(pad)
				b.WriteString(c)
			}
		}
		fmt.Fprintln(w, strings.TrimRight(b.String(), " "))
	}
}

func section(w io.Writer, title string) {
	fmt.Fprintf(w, "\n%s\n%s\n", title, strings.Repeat("─", utf8.RuneCountInString(title)))
}

// stats summarises the observed history.
type stats struct {
	periods, observed, missing, zeros       int
	min, max, mean, median, sd              float64
	last                                    float64
	lastSeasonMean, prevSeasonMean          float64
	hasLastSeason, hasPrevSeason, hasValues bool
}

func meanOf(xs []float64) (float64, int) {
	s, n := 0.0, 0
	for _, x := range xs {
		if !math.IsNaN(x) {
			s += x
			n++
		}
	}
	if n == 0 {
		return math.NaN(), 0
	}
	return s / float64(n), n
}

func summarise(hist []histRow, m int) stats {
	st := stats{periods: len(hist), min: math.NaN(), max: math.NaN(), mean: math.NaN(), median: math.NaN(), sd: math.NaN(), last: math.NaN(),
		lastSeasonMean: math.NaN(), prevSeasonMean: math.NaN()}
	var vals []float64
	obs := make([]float64, len(hist))
	for i, h := range hist {
		obs[i] = h.observed
		if math.IsNaN(h.observed) {
			st.missing++
			continue
		}
		vals = append(vals, h.observed)
		if h.observed == 0 {
			st.zeros++
		}
		st.last = h.observed
	}
	st.observed = len(vals)
	if len(vals) == 0 {
		return st
	}
	st.hasValues = true
	st.mean, _ = meanOf(vals)
	st.min, st.max = vals[0], vals[0]
	ss := 0.0
	for _, v := range vals {
		st.min, st.max = math.Min(st.min, v), math.Max(st.max, v)
		ss += (v - st.mean) * (v - st.mean)
	}
	if len(vals) > 1 {
		st.sd = math.Sqrt(ss / float64(len(vals)-1))
	}
	sorted := append([]float64(nil), vals...)
	sort.Float64s(sorted)
	if k := len(sorted); k%2 == 1 {
		st.median = sorted[k/2]
	} else {
		st.median = (sorted[k/2-1] + sorted[k/2]) / 2
	}
	if m >= 2 && len(obs) >= m {
		var n int
		st.lastSeasonMean, n = meanOf(obs[len(obs)-m:])
		st.hasLastSeason = n > 0
		if len(obs) >= 2*m {
			st.prevSeasonMean, n = meanOf(obs[len(obs)-2*m : len(obs)-m])
			st.hasPrevSeason = n > 0
		}
	}
	return st
}

// pairs writes name-value pairs on one line, separated by " · ".
func pairs(w io.Writer, kv ...string) {
	var parts []string
	for i := 0; i+1 < len(kv); i += 2 {
		parts = append(parts, kv[i]+" "+kv[i+1])
	}
	fmt.Fprintf(w, "  %s\n", strings.Join(parts, " · "))
}

var sparkMarks = []rune("▁▂▃▄▅▆▇█")

// sparkline draws the history and, after "┊", the forecast on one scale.
// Periods are averaged in buckets of b so that the history takes at most
// width marks; buckets are aligned to the end of the history.
func sparkline(hist, fc []float64, width int) (string, int) {
	n := len(hist)
	b := max(1, (n+width-1)/width)
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, xs := range [][]float64{hist, fc} {
		for _, x := range xs {
			if !math.IsNaN(x) && !math.IsInf(x, 0) {
				lo, hi = math.Min(lo, x), math.Max(hi, x)
			}
		}
	}
	mark := func(xs []float64) rune {
		v, k := meanOf(xs)
		if k == 0 || math.IsInf(v, 0) {
			return ' '
		}
		if !(hi > lo) {
			return sparkMarks[3]
		}
		// Halved so that hi − lo cannot overflow (values near ±1e308), and
		// clamped: a mark index is always in range.
		f := (v/2 - lo/2) / (hi/2 - lo/2)
		if math.IsNaN(f) {
			f = 0.5
		}
		f = math.Min(1, math.Max(0, f))
		return sparkMarks[int(math.Round(f*float64(len(sparkMarks)-1)))]
	}
	var s []rune
	for end := n; end > 0; end -= b {
		s = append(s, mark(hist[max(0, end-b):end]))
	}
	for i, j := 0, len(s)-1; i < j; i, j = i+1, j-1 {
		s[i], s[j] = s[j], s[i]
	}
	if len(fc) > 0 {
		s = append(s, ' ', '┊', ' ')
		for start := 0; start < len(fc); start += b {
			s = append(s, mark(fc[start:min(len(fc), start+b)]))
		}
	}
	return string(s), b
}

// perLine is how many periods a line of the history table holds: a whole
// season when it is short, else a divisor of the season near a quarter.
func perLine(m int) int {
	if m >= 2 && m <= 13 {
		return m
	}
	for d := 13; d >= 6; d-- {
		if m%d == 0 {
			return d
		}
	}
	return 10
}

func render(out io.Writer, sd *seriesData, opt Options) error {
	w := bufio.NewWriter(out)
	seasons := opt.Seasons
	if seasons <= 0 {
		seasons = 2
	}
	trendN := opt.TrendValues
	if trendN <= 0 {
		trendN = 6
	}
	spark := opt.SparkWidth
	if spark <= 0 {
		spark = 60
	}
	shownFC := sd.forecastsShown(opt)

	fmt.Fprintf(w, "%s · %s\n", sd.runName, keyText(sd.keyCols, sd.key))
	fmt.Fprintf(w, "run %s · %s, season %d · horizon %d\n", sd.runDir, unit(sd.freq), sd.season, sd.horizon)

	renderHistory(w, sd, shownFC, seasons, spark)
	renderDecomposition(w, sd, trendN)
	renderBacktest(w, sd, opt)
	renderChoice(w, sd)
	renderModels(w, sd, opt)
	renderForecasts(w, sd, shownFC)
	renderTotals(w, sd)
	if len(sd.problems) > 0 {
		section(w, "problems")
		g := &grid{left: 4}
		for _, p := range sd.problems {
			m := p.method
			if m == "" {
				m = "—"
			}
			g.add(p.severity, p.stage, m, p.message)
		}
		g.write(w, "  ")
	}
	return w.Flush()
}

func renderHistory(w io.Writer, sd *seriesData, shownFC []*methodFC, seasons, spark int) {
	if len(sd.hist) == 0 {
		section(w, "history")
		fmt.Fprintln(w, "  not in this run's tables: the series has no decomposition rows (see problems)")
		return
	}
	n := len(sd.hist)
	section(w, fmt.Sprintf("history · %d %s, %s … %s", n, unit(sd.freq), sd.hist[0].period.Format(dateFmt), sd.hist[n-1].period.Format(dateFmt)))
	st := summarise(sd.hist, sd.season)
	pairs(w, "values", strconv.Itoa(st.observed), "missing", strconv.Itoa(st.missing), "zeros", strconv.Itoa(st.zeros))
	pairs(w, "min", fv(st.min), "max", fv(st.max), "mean", fv(st.mean), "median", fv(st.median), "sd", fv(st.sd))
	kv := []string{"last", fv(st.last)}
	if st.hasLastSeason {
		kv = append(kv, "last season mean", fv(st.lastSeasonMean))
	}
	if st.hasPrevSeason {
		kv = append(kv, "season before", fv(st.prevSeasonMean))
	}
	pairs(w, kv...)

	obs := make([]float64, n)
	for i, h := range sd.hist {
		obs[i] = h.observed
	}
	var fc []float64
	fcNote := ""
	if len(shownFC) > 0 {
		for _, r := range shownFC[0].rows {
			fc = append(fc, r.value)
		}
		fcNote = ", then ┊ the forecast of " + shownFC[0].label
	}
	line, b := sparkline(obs, fc, spark)
	fmt.Fprintf(w, "\n  %s\n", line)
	if b == 1 {
		fmt.Fprintf(w, "  (one mark a period%s)\n", fcNote)
	} else {
		fmt.Fprintf(w, "  (one mark the mean of %d %s%s)\n", b, unit(sd.freq), fcNote)
	}

	m := max(1, sd.season)
	per := perLine(m)
	span := seasons * m
	if m < 2 {
		span = max(span, per) // no season: the last line's worth of periods
	}
	start := max(0, n-span)
	if m >= 2 {
		fmt.Fprintf(w, "\n  observed, last %d season(s):\n", (n-start+m-1)/m)
	} else {
		fmt.Fprintf(w, "\n  observed, last %d %s:\n", n-start, unit(sd.freq))
	}
	g := &grid{left: 1}
	linesPerSeason := 0
	if m > per && m%per == 0 {
		linesPerSeason = m / per
	}
	// Lines are aligned to the end of the history, so the first may be short.
	first := start + (n-start)%per
	bounds := []int{start}
	for i := first; i < n; i += per {
		if i > start {
			bounds = append(bounds, i)
		}
	}
	bounds = append(bounds, n)
	for li := 0; li+1 < len(bounds); li++ {
		a, z := bounds[li], bounds[li+1]
		cells := []string{sd.hist[a].period.Format(dateFmt), "│"}
		// Pad a short first line on the left so columns keep their place.
		for k := z - a; k < per && li == 0; k++ {
			cells = append(cells, "")
		}
		for i := a; i < z; i++ {
			cells = append(cells, fv(sd.hist[i].observed))
		}
		g.add(cells...)
		if linesPerSeason > 0 && (n-z)%m == 0 && z < n {
			g.add("")
		}
	}
	g.write(w, "  ")
}

func renderDecomposition(w io.Writer, sd *seriesData, trendN int) {
	if sd.decomp == "" {
		section(w, "decomposition")
		fmt.Fprintln(w, "  none for this series (see problems)")
		return
	}
	section(w, fmt.Sprintf("decomposition · %s, %s", sd.decomp, sd.form))
	// Trend: the last defined values.
	var idx []int
	for i := len(sd.hist) - 1; i >= 0 && len(idx) < trendN; i-- {
		if !math.IsNaN(sd.hist[i].trend) {
			idx = append(idx, i)
		}
	}
	if len(idx) == 0 {
		fmt.Fprintln(w, "  trend: no defined value")
	} else {
		undefined := len(sd.hist) - 1 - idx[0]
		fmt.Fprintf(w, "  trend, last %d defined value(s)", len(idx))
		if undefined > 0 {
			fmt.Fprintf(w, "; none for the last %d %s (the centred average needs periods on both sides)", undefined, unit(sd.freq))
		}
		fmt.Fprintln(w, ":")
		g := &grid{left: 1}
		for k := len(idx) - 1; k >= 0; k-- {
			h := sd.hist[idx[k]]
			g.add(h.period.Format(dateFmt), fv(h.trend), "adjusted", fv(h.adjust))
		}
		g.write(w, "    ")
	}
	if len(sd.factors) == 0 {
		return
	}
	format := fv
	what := "components (additive)"
	if sd.form == "multiplicative" {
		format, what = f3, "factors (multiplicative)"
	}
	uniform := true
	for _, f := range sd.factors {
		if f.count != sd.factors[0].count {
			uniform = false
		}
	}
	fmt.Fprintf(w, "\n  seasonal %s by position", what)
	if uniform {
		fmt.Fprintf(w, ", each from %d detrended value(s)", sd.factors[0].count)
	}
	fmt.Fprintln(w, ":")
	per := perLine(len(sd.factors))
	g := &grid{left: 1}
	for a := 0; a < len(sd.factors); a += per {
		z := min(len(sd.factors), a+per)
		cells := []string{fmt.Sprintf("%d–%d", sd.factors[a].position, sd.factors[z-1].position), "│"}
		counts := []string{"count", "│"}
		for _, f := range sd.factors[a:z] {
			cells = append(cells, format(f.factor))
			counts = append(counts, strconv.Itoa(f.count))
		}
		g.add(cells...)
		if !uniform {
			g.add(counts...)
		}
	}
	g.write(w, "    ")
}
