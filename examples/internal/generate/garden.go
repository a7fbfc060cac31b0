package main

// The garden-supply example: daily order lines of Hollowmere Garden
// Wholesale, an invented regional wholesaler of garden supplies with four
// depots and twelve stock lines. See examples/garden-supply/README.md.

import (
	"bytes"
	"cmp"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"strconv"
	"time"
)

// The garden-supply data come from this PCG seed; series i uses the stream
// gardenStream+i, so each series draws from its own fixed sequence and
// changing one series' settings leaves the others' numbers alone.
const (
	gardenSeed   uint64 = 0x48_4f_4c_4c_4f_57_4d_45 // "HOLLOWME"
	gardenStream uint64 = 0x0000_0000_0000_2023
)

var (
	gardenFirst = time.Date(2023, 1, 2, 0, 0, 0, 0, time.UTC)   // Monday of ISO week 2023-W01
	gardenLast  = time.Date(2025, 12, 28, 0, 0, 0, 0, time.UTC) // Sunday of ISO week 2025-W52
)

type gardenDepot struct {
	name   string
	scale  float64 // size relative to the largest depot
	growth float64 // extra trend per year on top of the SKU's own
	lag    float64 // days by which the spring peak comes later (upland depots)
}

type gardenSKU struct {
	code    string
	weekly  float64 // mean weekly units at a scale-1 depot, first year
	avgLine float64 // mean units per order line
	pack    int     // every line is a whole number of packs of this many units

	springWeek, springWidth, springAmp float64 // ISO week of the peak, width in weeks, height over the off-season level
	autumnWeek, autumnWidth, autumnAmp float64 // an optional second, smaller peak

	growth float64   // trend: fraction of the first year's level gained (or lost) per year
	noise  float64   // log-scale sd of the week-to-week demand shocks
	launch time.Time // zero for lines sold throughout; otherwise the first day on sale
}

var gardenDepots = []gardenDepot{
	{name: "brindle", scale: 1.00, growth: 0.00, lag: 0},
	{name: "corrow", scale: 0.60, growth: 0.05, lag: 3},
	{name: "hatherby", scale: 0.75, growth: -0.02, lag: 0},
	{name: "quenmoor", scale: 0.45, growth: 0.01, lag: 10},
}

var gardenSKUs = []gardenSKU{
	{code: "CMP-MP50", weekly: 480, avgLine: 12.5, pack: 5, springWeek: 15, springWidth: 4, springAmp: 5, growth: 0.04, noise: 0.10},
	{code: "CMP-PF40", weekly: 260, avgLine: 12.5, pack: 5, springWeek: 15, springWidth: 4, springAmp: 5, growth: 0.15, noise: 0.12,
		launch: time.Date(2024, 4, 15, 0, 0, 0, 0, time.UTC)},
	{code: "MUL-BARK70", weekly: 200, avgLine: 5, pack: 5, springWeek: 17, springWidth: 5, springAmp: 3.5,
		autumnWeek: 41, autumnWidth: 4, autumnAmp: 1.0, growth: 0.02, noise: 0.12},
	{code: "SEED-LAWN5", weekly: 100, avgLine: 2.5, pack: 1, springWeek: 14, springWidth: 3.5, springAmp: 5,
		autumnWeek: 37, autumnWidth: 3, autumnAmp: 2, growth: -0.03, noise: 0.12},
	{code: "FEED-LAWN10", weekly: 90, avgLine: 2.5, pack: 1, springWeek: 15, springWidth: 4, springAmp: 4, growth: 0.01, noise: 0.12},
	{code: "FEED-TOM1", weekly: 200, avgLine: 4.5, pack: 3, springWeek: 22, springWidth: 5, springAmp: 5, growth: 0.06, noise: 0.12},
	{code: "POT-SEED2", weekly: 90, avgLine: 10, pack: 10, springWeek: 10, springWidth: 3, springAmp: 30, growth: 0.00, noise: 0.15},
	{code: "POT-TC30", weekly: 150, avgLine: 4, pack: 2, springWeek: 18, springWidth: 5, springAmp: 3, growth: -0.02, noise: 0.12},
	{code: "HOSE-30M", weekly: 60, avgLine: 1.5, pack: 1, springWeek: 24, springWidth: 5, springAmp: 4, growth: 0.00, noise: 0.15},
	{code: "TOOL-SEC", weekly: 60, avgLine: 2, pack: 1, springWeek: 15, springWidth: 6, springAmp: 1.5, growth: 0.03, noise: 0.10},
	{code: "WHB-90L", weekly: 1.6, avgLine: 1.2, pack: 1, springWeek: 16, springWidth: 6, springAmp: 2, growth: 0.00, noise: 0.20},
	{code: "GH-KIT68", weekly: 0.5, avgLine: 1.0, pack: 1, springWeek: 13, springWidth: 5, springAmp: 3, growth: 0.02, noise: 0.20},
}

// Spring comes at a different time each year, the same for every depot:
// days the spring peak moves (2024 came late and cold, 2025 early and warm)
// and how strong the season was.
var (
	gardenSpringShift = map[int]float64{2023: 0, 2024: 12, 2025: -7}
	gardenSpringPower = map[int]float64{2023: 1.00, 2024: 0.92, 2025: 1.08}
)

// Share of a week's orders placed on each weekday, Monday first. Depots are
// closed on Sundays and on 25-26 December and 1 January.
var gardenWeekday = [7]float64{1.30, 1.15, 1.10, 1.05, 0.95, 0.45, 0}

type orderLine struct {
	day   int // days since gardenFirst
	depot int
	sku   int
	units int
}

// bump is a bell of height 1 centred on day c of the year with a width of
// w days, measured round the year so December and January are neighbours.
func bump(day, c, w float64) float64 {
	d := math.Abs(day - c)
	d = math.Min(d, 365.25-d)
	return math.Exp(-0.5 * (d / w) * (d / w))
}

// shape is the SKU's seasonal profile on day-of-year day before it is
// normalised: an off-season level of 1 plus the spring (and autumn) bumps.
func (s gardenSKU) shape(day, springShift, springPower float64) float64 {
	v := 1 + s.springAmp*springPower*bump(day, s.springWeek*7-3+springShift, s.springWidth*7)
	if s.autumnAmp > 0 {
		v += s.autumnAmp * bump(day, s.autumnWeek*7-3, s.autumnWidth*7)
	}
	return v
}

// norm makes the SKU's average seasonal factor over a plain year equal to 1,
// so weekly says what an average week sells.
func (s gardenSKU) norm() float64 {
	sum := 0.0
	for d := 1; d <= 365; d++ {
		sum += s.shape(float64(d), 0, 1)
	}
	return sum / 365
}

func gardenClosed(t time.Time) bool {
	m, d := t.Month(), t.Day()
	return t.Weekday() == time.Sunday || (m == time.December && (d == 25 || d == 26)) || (m == time.January && d == 1)
}

func generateGarden() []orderLine {
	days := int(gardenLast.Sub(gardenFirst).Hours()/24) + 1
	wdSum := 0.0
	for _, w := range gardenWeekday {
		wdSum += w
	}
	var lines []orderLine
	series := 0
	for di, dp := range gardenDepots {
		for si, sk := range gardenSKUs {
			r := rand.New(rand.NewPCG(gardenSeed, gardenStream+uint64(series)))
			series++
			norm := sk.norm()
			shock := 0.0 // AR(1) log-scale weekly demand shock
			const phi = 0.5
			for day := 0; day < days; day++ {
				t := gardenFirst.AddDate(0, 0, day)
				if day%7 == 0 { // a new ISO week begins on Monday
					shock = phi*shock + math.Sqrt(1-phi*phi)*sk.noise*r.NormFloat64()
				}
				if gardenClosed(t) {
					continue
				}
				years := float64(day) / 365.25
				level := sk.weekly * dp.scale
				if !sk.launch.IsZero() {
					if t.Before(sk.launch) {
						continue
					}
					since := t.Sub(sk.launch).Hours() / 24
					years = since / 365.25
					level *= 1 - 0.7*math.Exp(-since/56) // a new line takes a couple of months to reach its full rate
				}
				level *= 1 + (sk.growth+dp.growth)*years
				season := sk.shape(float64(t.YearDay())-dp.lag, gardenSpringShift[t.Year()], gardenSpringPower[t.Year()]) / norm
				weekdayShare := gardenWeekday[(int(t.Weekday())+6)%7] / wdSum
				units := level * season * math.Exp(shock-sk.noise*sk.noise/2) * weekdayShare
				// Garden centres stock up in spring with bigger orders, not
				// only more of them: lines grow with the square root of the
				// seasonal factor above 1.
				lineUnits := sk.avgLine * math.Sqrt(max(1, season))
				n := poisson(r, units/lineUnits)
				packs := lineUnits / float64(sk.pack)
				for range n {
					p := max(1, int(math.Round(packs*lognormalFactor(r, 0.55))))
					lines = append(lines, orderLine{day: day, depot: di, sku: si, units: p * sk.pack})
				}
			}
		}
	}
	// Order lines as an order system would export them: by date, then depot
	// and stock line. The sort is stable, so lines of one series on one day
	// keep the order they were drawn in.
	slices.SortStableFunc(lines, func(a, b orderLine) int {
		return cmp.Or(cmp.Compare(a.day, b.day), cmp.Compare(a.depot, b.depot), cmp.Compare(a.sku, b.sku))
	})
	return lines
}

func gardenCSV(lines []orderLine) []byte {
	var b bytes.Buffer
	b.Grow(len(lines) * 32)
	b.WriteString("order_date,depot,sku,units\n")
	for _, l := range lines {
		b.WriteString(gardenFirst.AddDate(0, 0, l.day).Format(time.DateOnly))
		b.WriteByte(',')
		b.WriteString(gardenDepots[l.depot].name)
		b.WriteByte(',')
		b.WriteString(gardenSKUs[l.sku].code)
		b.WriteByte(',')
		b.WriteString(strconv.Itoa(l.units))
		b.WriteByte('\n')
	}
	return b.Bytes()
}

func writeGarden(dir string, stats io.Writer) error {
	lines := generateGarden()
	data := gardenCSV(lines)
	path := filepath.Join(dir, "data", "order_lines.csv")
	if err := writeFileAtomic(path, data); err != nil {
		return err
	}
	fmt.Fprintf(stats, "wrote %s: %d order lines, %d bytes\n", path, len(lines), len(data))
	gardenStats(lines, stats)
	return nil
}

// gardenStats buckets the order lines into ISO weeks, as the example spec
// does, and prints what a reviewer should check.
func gardenStats(lines []orderLine, w io.Writer) {
	weeks := (int(gardenLast.Sub(gardenFirst).Hours()/24) + 1) / 7
	nd, ns := len(gardenDepots), len(gardenSKUs)
	weekly := make([][]int, nd*ns) // series → week → units
	for i := range weekly {
		weekly[i] = make([]int, weeks)
	}
	total := make([]int, weeks)
	for _, l := range lines {
		weekly[l.depot*ns+l.sku][l.day/7] += l.units
		total[l.day/7] += l.units
	}

	fmt.Fprintln(w, "\nall series, weekly total units by quarter (week placed by its Monday):")
	fmt.Fprintf(w, "  %-8s %5s %9s %9s %9s\n", "quarter", "weeks", "mean", "min", "max")
	for start := 0; start < weeks; {
		q := quarterOf(gardenFirst.AddDate(0, 0, 7*start))
		end := start
		for end < weeks && quarterOf(gardenFirst.AddDate(0, 0, 7*end)) == q {
			end++
		}
		sum, lo, hi := 0, math.MaxInt, 0
		for _, v := range total[start:end] {
			sum += v
			lo, hi = min(lo, v), max(hi, v)
		}
		fmt.Fprintf(w, "  %-8s %5d %9.0f %9d %9d\n", q, end-start, float64(sum)/float64(end-start), lo, hi)
		start = end
	}

	fmt.Fprintln(w, "\nunits per stock line and year (all depots):")
	fmt.Fprintf(w, "  %-12s %9s %9s %9s\n", "sku", "2023", "2024", "2025")
	for si, sk := range gardenSKUs {
		var y [3]int
		for di := range gardenDepots {
			for wk, v := range weekly[di*ns+si] {
				y[gardenFirst.AddDate(0, 0, 7*wk).Year()-2023] += v
			}
		}
		fmt.Fprintf(w, "  %-12s %9d %9d %9d\n", sk.code, y[0], y[1], y[2])
	}

	fmt.Fprintf(w, "\nweeks with no orders at all, of the weeks from the series' first to its last order line (%d weeks in all):\n", weeks)
	fmt.Fprintf(w, "  %-12s", "sku")
	for _, dp := range gardenDepots {
		fmt.Fprintf(w, " %10s", dp.name)
	}
	fmt.Fprintln(w)
	for si, sk := range gardenSKUs {
		fmt.Fprintf(w, "  %-12s", sk.code)
		for di := range gardenDepots {
			first, last := span(weekly[di*ns+si])
			zero := 0
			for _, v := range weekly[di*ns+si][first : last+1] {
				if v == 0 {
					zero++
				}
			}
			fmt.Fprintf(w, " %4d / %3d", zero, last-first+1)
		}
		fmt.Fprintln(w)
	}

	// A series runs from its first to its last order line: list the ones
	// that do not span 2023-W01 … 2025-W52.
	fmt.Fprintln(w, "\nseries whose order lines do not span every week (first and last ISO week with an order line):")
	for si, sk := range gardenSKUs {
		for di, dp := range gardenDepots {
			first, last := span(weekly[di*ns+si])
			if first == 0 && last == weeks-1 {
				continue
			}
			fmt.Fprintf(w, "  %-10s %-12s %s … %s\n", dp.name, sk.code, isoWeekLabel(first), isoWeekLabel(last))
		}
	}

	for si, sk := range gardenSKUs {
		if sk.launch.IsZero() {
			continue
		}
		fmt.Fprintf(w, "\n%s launched %s; first ISO week with an order line per depot:\n", sk.code, sk.launch.Format(time.DateOnly))
		for di, dp := range gardenDepots {
			first := slices.IndexFunc(weekly[di*ns+si], func(v int) bool { return v > 0 })
			fmt.Fprintf(w, "  %-10s %s (%d weeks of history)\n", dp.name, isoWeekLabel(first), weeks-first)
		}
	}
}

func quarterOf(t time.Time) string {
	return fmt.Sprintf("%d-Q%d", t.Year(), (int(t.Month())-1)/3+1)
}

// isoWeekLabel names week index wk (0 = 2023-W01) as 2023-W01.
func isoWeekLabel(wk int) string {
	y, n := gardenFirst.AddDate(0, 0, 7*wk).ISOWeek()
	return fmt.Sprintf("%d-W%02d", y, n)
}

// span returns the first and last week with any units.
func span(weekly []int) (first, last int) {
	first = slices.IndexFunc(weekly, func(v int) bool { return v > 0 })
	last = len(weekly) - 1
	for last > first && weekly[last] == 0 {
		last--
	}
	return first, last
}
