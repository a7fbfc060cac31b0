package main

// The daily-grocer example: daily till sales of Larkfield Grocers, an
// invented chain of three neighbourhood grocers selling (among much else)
// bread and lemonade, with the chain's calendar of closures, public
// holidays and promotions. See examples/daily-grocer/README.md.
//
// The data are built so that every effect is known: a weekday cycle, a
// yearly cycle, closed days (no row in the export), public holidays with
// a fixed multiplicative effect per product and promotions with a fixed
// multiplicative uplift (grocerPromoUplift), so that a spec that knows the
// events can be checked against the truth.

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
	"strings"
	"time"
)

// The daily-grocer data come from this PCG seed: stream grocerStream draws
// the promotion calendar, stream grocerStream+1+i the sales of series i.
const (
	grocerSeed   uint64 = 0x4c_41_52_4b_46_49_45_4c // "LARKFIEL"
	grocerStream uint64 = 0x0000_0000_0000_2022
)

// The sales export covers 1,096 days: 2022-12-01 … 2025-11-30. The event
// calendars run on to grocerKnownUntil, past the end of the sales, so that
// the forecast horizon (December 2025) has its closures and drivers.
var (
	grocerFirst      = time.Date(2022, 12, 1, 0, 0, 0, 0, time.UTC)
	grocerLast       = time.Date(2025, 11, 30, 0, 0, 0, 0, time.UTC)
	grocerKnownUntil = time.Date(2025, 12, 31, 0, 0, 0, 0, time.UTC)
)

// grocerPromoUplift is the true effect of a promotion: sales × 1.4 on every
// promoted day, for every store and product.
const grocerPromoUplift = 1.4

type grocerStore struct {
	name   string
	scale  float64 // size relative to the largest store
	growth float64 // trend: fraction of the first year's level gained per year
}

type grocerProduct struct {
	name    string
	daily   float64    // mean daily units at a scale-1 store, first year, an ordinary day
	weekday [7]float64 // Monday first; normalised to mean 1 when used
	// Yearly cycle: 1 + yearAmp·cos(2π(day of year − yearPeak)/365.25).
	yearAmp, yearPeak float64
	holiday           float64 // multiplicative effect of a public holiday
}

var grocerStores = []grocerStore{
	{name: "harbour", scale: 1.00, growth: 0.02},
	{name: "hillside", scale: 0.55, growth: -0.01},
	{name: "market", scale: 0.80, growth: 0.04},
}

var grocerProducts = []grocerProduct{
	// Bread sells a little more in winter, most on Saturdays; on a public
	// holiday (short opening hours, people away) 30% less.
	{name: "bread", daily: 120, weekday: [7]float64{0.95, 0.90, 0.92, 0.98, 1.10, 1.30, 0.85},
		yearAmp: 0.08, yearPeak: 20, holiday: 0.7},
	// Lemonade is a summer product (peak mid-July, ±45%) and a holiday
	// treat: 30% more on a public holiday.
	{name: "lemonade", daily: 90, weekday: [7]float64{0.85, 0.82, 0.88, 0.95, 1.15, 1.30, 1.05},
		yearAmp: 0.45, yearPeak: 200, holiday: 1.3},
}

// Day-to-day noise: an AR(1) shock on the log scale (the weather, the
// neighbourhood), then Poisson counting of the units.
const (
	grocerNoise = 0.05 // innovation sd of the log-scale shock
	grocerPhi   = 0.5  // its day-to-day persistence
)

// A grocerEvent is one row of an event file. store or product is -1 when
// the row applies to every store or every product.
type grocerEvent struct {
	first, last time.Time
	name        string // driver name (holiday, promotion); "" for closures
	store       int
	product     int
	note        string
}

// grocerHolidays lists the invented country's public holidays of a year
// on which the shops open (short hours). 1 January and 25 December are
// closures, not holidays (grocerGlobalClosures).
func grocerHolidays(year int) []grocerEvent {
	nthWeekday := func(month time.Month, wd time.Weekday, n int) time.Time {
		t := time.Date(year, month, 1, 0, 0, 0, 0, time.UTC)
		for t.Weekday() != wd {
			t = t.AddDate(0, 0, 1)
		}
		return t.AddDate(0, 0, 7*(n-1))
	}
	lastMonday := func(month time.Month) time.Time {
		t := time.Date(year, month+1, 0, 0, 0, 0, 0, time.UTC)
		for t.Weekday() != time.Monday {
			t = t.AddDate(0, 0, -1)
		}
		return t
	}
	day := func(month time.Month, d int) time.Time { return time.Date(year, month, d, 0, 0, 0, 0, time.UTC) }
	hs := []struct {
		t    time.Time
		note string
	}{
		{nthWeekday(time.April, time.Monday, 1), "Spring Monday"},
		{nthWeekday(time.May, time.Monday, 1), "May Monday"},
		{nthWeekday(time.June, time.Friday, 3), "Midsummer Friday"},
		{lastMonday(time.August), "Summer Monday"},
		{nthWeekday(time.October, time.Monday, 2), "Harvest Monday"},
		{day(time.November, 11), "Lantern Day"},
		{day(time.December, 26), "Gift Day"},
	}
	out := make([]grocerEvent, len(hs))
	for i, h := range hs {
		out[i] = grocerEvent{first: h.t, last: h.t, name: "holiday", store: -1, product: -1, note: h.note}
	}
	return out
}

// grocerGlobalClosures: every store is shut on 25 December and 1 January.
func grocerGlobalClosures(year int) []grocerEvent {
	return []grocerEvent{
		{first: time.Date(year, 1, 1, 0, 0, 0, 0, time.UTC), last: time.Date(year, 1, 1, 0, 0, 0, 0, time.UTC), store: -1, product: -1, note: "New Year's Day"},
		{first: time.Date(year, 12, 25, 0, 0, 0, 0, time.UTC), last: time.Date(year, 12, 25, 0, 0, 0, 0, time.UTC), store: -1, product: -1, note: "Christmas Day"},
	}
}

// grocerStoreClosures are the closures of single stores (both products).
// The market closure of October 2025 lies inside the example's second
// backtest window, so the run shows that closed days are never scored.
var grocerStoreClosures = []grocerEvent{
	{first: time.Date(2023, 7, 4, 0, 0, 0, 0, time.UTC), last: time.Date(2023, 7, 4, 0, 0, 0, 0, time.UTC), store: 0, product: -1, note: "power cut"},
	{first: time.Date(2024, 2, 5, 0, 0, 0, 0, time.UTC), last: time.Date(2024, 2, 18, 0, 0, 0, 0, time.UTC), store: 1, product: -1, note: "refit"},
	{first: time.Date(2025, 10, 14, 0, 0, 0, 0, time.UTC), last: time.Date(2025, 10, 16, 0, 0, 0, 0, time.UTC), store: 2, product: -1, note: "water leak"},
}

// grocerPlannedPromotions are the promotions of autumn 2025 and the
// forecast horizon, fixed so that every series has promoted days in the
// backtest windows (8 September … 30 November 2025) and bread has a
// chain-wide promotion week inside the forecast horizon.
var grocerPlannedPromotions = []grocerEvent{
	{first: time.Date(2025, 9, 15, 0, 0, 0, 0, time.UTC), last: time.Date(2025, 9, 21, 0, 0, 0, 0, time.UTC), name: "promotion", store: -1, product: 0, note: "bread week"},
	{first: time.Date(2025, 9, 29, 0, 0, 0, 0, time.UTC), last: time.Date(2025, 10, 5, 0, 0, 0, 0, time.UTC), name: "promotion", store: -1, product: 1, note: "lemonade week"},
	{first: time.Date(2025, 10, 20, 0, 0, 0, 0, time.UTC), last: time.Date(2025, 10, 26, 0, 0, 0, 0, time.UTC), name: "promotion", store: 0, product: 1, note: "store offer"},
	{first: time.Date(2025, 10, 27, 0, 0, 0, 0, time.UTC), last: time.Date(2025, 11, 2, 0, 0, 0, 0, time.UTC), name: "promotion", store: 1, product: 0, note: "store offer"},
	{first: time.Date(2025, 11, 17, 0, 0, 0, 0, time.UTC), last: time.Date(2025, 11, 23, 0, 0, 0, 0, time.UTC), name: "promotion", store: -1, product: 1, note: "lemonade week"},
	{first: time.Date(2025, 11, 24, 0, 0, 0, 0, time.UTC), last: time.Date(2025, 11, 30, 0, 0, 0, 0, time.UTC), name: "promotion", store: 2, product: 0, note: "store offer"},
	{first: time.Date(2025, 12, 8, 0, 0, 0, 0, time.UTC), last: time.Date(2025, 12, 14, 0, 0, 0, 0, time.UTC), name: "promotion", store: -1, product: 0, note: "bread week"},
}

// grocerEvents returns the closures and the drivers (holidays and
// promotions) from the first day of the sales to grocerKnownUntil, each
// sorted by first day, then store, product and driver name.
func grocerEvents() (closures, drivers []grocerEvent) {
	for y := grocerFirst.Year(); y <= grocerKnownUntil.Year(); y++ {
		for _, e := range grocerGlobalClosures(y) {
			if !e.last.Before(grocerFirst) && !e.first.After(grocerKnownUntil) {
				closures = append(closures, e)
			}
		}
		for _, e := range grocerHolidays(y) {
			if !e.last.Before(grocerFirst) && !e.first.After(grocerKnownUntil) {
				drivers = append(drivers, e)
			}
		}
	}
	closures = append(closures, grocerStoreClosures...)
	drivers = append(drivers, grocerRandomPromotions(closures, drivers)...)
	drivers = append(drivers, grocerPlannedPromotions...)
	order := func(a, b grocerEvent) int {
		return cmp.Or(a.first.Compare(b.first), cmp.Compare(a.store, b.store), cmp.Compare(a.product, b.product), cmp.Compare(a.name, b.name))
	}
	slices.SortStableFunc(closures, order)
	slices.SortStableFunc(drivers, order)
	return closures, drivers
}

// grocerRandomPromotions draws the promotion weeks (Monday to Sunday) from
// the first whole week of the sales to the end of August 2025: each week a
// product runs a chain-wide promotion with probability 0.09 and each store
// runs its own offer on a product with probability 0.04. A week holding a
// holiday or a closure of the stores concerned is never promoted, nor a
// week next to one the same series already has, so promotions never
// overlap other events and every promoted week has ordinary neighbours.
func grocerRandomPromotions(closures, holidays []grocerEvent) []grocerEvent {
	r := rand.New(rand.NewPCG(grocerSeed, grocerStream))
	ns, np := len(grocerStores), len(grocerProducts)
	end := time.Date(2025, 8, 31, 0, 0, 0, 0, time.UTC)
	monday := grocerFirst
	for monday.Weekday() != time.Monday {
		monday = monday.AddDate(0, 0, 1)
	}
	busy := func(first time.Time, store int) bool {
		last := first.AddDate(0, 0, 6)
		for _, e := range append(slices.Clip(closures), holidays...) {
			if (e.store < 0 || e.store == store || store < 0) && !e.first.After(last) && !e.last.Before(first) {
				return true
			}
		}
		return false
	}
	lastPromo := make([]time.Time, ns*np) // per series, the Monday of its latest promotion week
	near := func(store, product int, wk time.Time) bool {
		for s := range ns {
			if store >= 0 && s != store {
				continue
			}
			if t := lastPromo[s*np+product]; !t.IsZero() && wk.Sub(t) <= 7*24*time.Hour {
				return true
			}
		}
		return false
	}
	var out []grocerEvent
	for wk := monday; !wk.AddDate(0, 0, 6).After(end); wk = wk.AddDate(0, 0, 7) {
		for p := range np {
			// Draw every number every week, so the calendar does not shift
			// when a week is skipped.
			chain := r.Float64() < 0.09
			var own [8]bool
			for s := range ns {
				own[s] = r.Float64() < 0.04
			}
			if chain && !busy(wk, -1) && !near(-1, p, wk) {
				out = append(out, grocerEvent{first: wk, last: wk.AddDate(0, 0, 6), name: "promotion", store: -1, product: p, note: grocerProducts[p].name + " week"})
				for s := range ns {
					lastPromo[s*np+p] = wk
				}
				continue
			}
			for s := range ns {
				if own[s] && !busy(wk, s) && !near(s, p, wk) {
					out = append(out, grocerEvent{first: wk, last: wk.AddDate(0, 0, 6), name: "promotion", store: s, product: p, note: "store offer"})
					lastPromo[s*np+p] = wk
				}
			}
		}
	}
	return out
}

// applies reports whether event e covers day t for store s and product p.
func (e grocerEvent) applies(t time.Time, s, p int) bool {
	return (e.store < 0 || e.store == s) && (e.product < 0 || e.product == p) && !t.Before(e.first) && !t.After(e.last)
}

type grocerSale struct {
	day     int // days since grocerFirst
	store   int
	product int
	units   int
}

// generateGrocer draws the daily sales. A closed day has no row: the till
// exports only days with sales, and a closed shop sells nothing. Every
// open day sells something (the smallest mean is above 20 units), so a
// missing row always means a closed day.
func generateGrocer() ([]grocerSale, []grocerEvent, []grocerEvent) {
	closures, drivers := grocerEvents()
	days := int(grocerLast.Sub(grocerFirst).Hours()/24) + 1
	var sales []grocerSale
	for si, st := range grocerStores {
		for pi, pr := range grocerProducts {
			r := rand.New(rand.NewPCG(grocerSeed, grocerStream+1+uint64(si*len(grocerProducts)+pi)))
			wdMean := 0.0
			for _, w := range pr.weekday {
				wdMean += w / 7
			}
			shock := 0.0
			for day := range days {
				t := grocerFirst.AddDate(0, 0, day)
				shock = grocerPhi*shock + grocerNoise*r.NormFloat64()
				mean := pr.daily * st.scale * (1 + st.growth*float64(day)/365.25)
				mean *= 1 + pr.yearAmp*math.Cos(2*math.Pi*(float64(t.YearDay())-pr.yearPeak)/365.25)
				mean *= pr.weekday[(int(t.Weekday())+6)%7] / wdMean
				for _, e := range drivers {
					if e.applies(t, si, pi) {
						switch e.name {
						case "holiday":
							mean *= pr.holiday
						case "promotion":
							mean *= grocerPromoUplift
						}
					}
				}
				// The shock's stationary variance is σ²/(1−φ²); take it out so
				// that the shock leaves the mean alone.
				mean *= math.Exp(shock - grocerNoise*grocerNoise/(2*(1-grocerPhi*grocerPhi)))
				units := poisson(r, mean) // drawn on closed days too: the stream stays aligned
				if slices.ContainsFunc(closures, func(e grocerEvent) bool { return e.applies(t, si, pi) }) || units == 0 {
					continue
				}
				sales = append(sales, grocerSale{day: day, store: si, product: pi, units: units})
			}
		}
	}
	slices.SortStableFunc(sales, func(a, b grocerSale) int {
		return cmp.Or(cmp.Compare(a.day, b.day), cmp.Compare(a.store, b.store), cmp.Compare(a.product, b.product))
	})
	return sales, closures, drivers
}

func grocerSalesCSV(sales []grocerSale) []byte {
	var b bytes.Buffer
	b.WriteString("day,store,product,units\n")
	for _, s := range sales {
		b.WriteString(grocerFirst.AddDate(0, 0, s.day).Format(time.DateOnly))
		b.WriteByte(',')
		b.WriteString(grocerStores[s.store].name)
		b.WriteByte(',')
		b.WriteString(grocerProducts[s.product].name)
		b.WriteByte(',')
		b.WriteString(strconv.Itoa(s.units))
		b.WriteByte('\n')
	}
	return b.Bytes()
}

// grocerEventsCSV writes an event file: first_day, last_day (empty for a
// one-day event), the driver name (drivers only), store and product (empty:
// every store or product) and a note for people.
func grocerEventsCSV(events []grocerEvent, withName bool) []byte {
	var b bytes.Buffer
	if withName {
		b.WriteString("first_day,last_day,event,store,product,note\n")
	} else {
		b.WriteString("first_day,last_day,store,note\n")
	}
	for _, e := range events {
		b.WriteString(e.first.Format(time.DateOnly))
		b.WriteByte(',')
		if !e.last.Equal(e.first) {
			b.WriteString(e.last.Format(time.DateOnly))
		}
		b.WriteByte(',')
		if withName {
			b.WriteString(e.name)
			b.WriteByte(',')
		}
		if e.store >= 0 {
			b.WriteString(grocerStores[e.store].name)
		}
		b.WriteByte(',')
		if withName && e.product >= 0 {
			b.WriteString(grocerProducts[e.product].name)
		}
		if withName {
			b.WriteByte(',')
		}
		b.WriteString(e.note)
		b.WriteByte('\n')
	}
	return b.Bytes()
}

func writeGrocer(dir string, stats io.Writer) error {
	sales, closures, drivers := generateGrocer()
	files := []struct {
		rel  string
		data []byte
	}{
		{"data/sales.csv", grocerSalesCSV(sales)},
		{"events/closures.csv", grocerEventsCSV(closures, false)},
		{"events/drivers.csv", grocerEventsCSV(drivers, true)},
	}
	for _, f := range files {
		path := filepath.Join(dir, f.rel)
		if err := writeFileAtomic(path, f.data); err != nil {
			return err
		}
		fmt.Fprintf(stats, "wrote %s: %d rows, %d bytes\n", path, bytes.Count(f.data, []byte("\n"))-1, len(f.data))
	}
	grocerStats(sales, closures, drivers, stats)
	return nil
}

// grocerStats prints what the README reports: per series the days with a
// row, the closed days, the promoted days and holidays, and the mean daily
// units per year.
func grocerStats(sales []grocerSale, closures, drivers []grocerEvent, w io.Writer) {
	days := int(grocerLast.Sub(grocerFirst).Hours()/24) + 1
	np := len(grocerProducts)
	rows := make([]int, len(grocerStores)*np)
	units := make([][3]int, len(rows))
	for _, s := range sales {
		i := s.store*np + s.product
		rows[i]++
		if y := grocerFirst.AddDate(0, 0, s.day); y.After(time.Date(2022, 12, 31, 0, 0, 0, 0, time.UTC)) {
			units[i][y.Year()-2023] += s.units
		}
	}
	fmt.Fprintf(w, "\n%d days, %s … %s; per series:\n", days, grocerFirst.Format(time.DateOnly), grocerLast.Format(time.DateOnly))
	fmt.Fprintf(w, "  %-9s %-9s %5s %6s %6s %6s %7s %7s %7s\n", "store", "product", "rows", "closed", "promo", "promo*", "2023", "2024", "2025")
	for si, st := range grocerStores {
		for pi, pr := range grocerProducts {
			closed, promo, promoBT := 0, 0, 0
			for d := range days {
				t := grocerFirst.AddDate(0, 0, d)
				if slices.ContainsFunc(closures, func(e grocerEvent) bool { return e.applies(t, si, pi) }) {
					closed++
				}
				if slices.ContainsFunc(drivers, func(e grocerEvent) bool { return e.name == "promotion" && e.applies(t, si, pi) }) {
					promo++
					if !t.Before(time.Date(2025, 9, 8, 0, 0, 0, 0, time.UTC)) {
						promoBT++
					}
				}
			}
			i := si*np + pi
			// 2025 runs to 30 November: 334 days.
			fmt.Fprintf(w, "  %-9s %-9s %5d %6d %6d %6d %7.1f %7.1f %7.1f\n", st.name, pr.name, rows[i], closed, promo, promoBT,
				float64(units[i][0])/365, float64(units[i][1])/366, float64(units[i][2])/334)
		}
	}
	fmt.Fprintln(w, "  (promo*: promoted days from 2025-09-08, inside the backtest windows; means per calendar day, closed days counted as 0)")
	var names []string
	for _, e := range drivers {
		if e.name == "holiday" {
			names = append(names, e.first.Format(time.DateOnly))
		}
	}
	fmt.Fprintf(w, "holidays (%d): %s\n", len(names), strings.Join(names, " "))
	fmt.Fprintf(w, "closures: %d rows, drivers: %d rows (%d promotions)\n", len(closures), len(drivers), len(drivers)-len(names))
}
