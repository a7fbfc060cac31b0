package calendar

import (
	"fmt"
	"strconv"
	"time"

	"almanac/spec"
)

// A period is an int64 index on the spec's calendar:
//
//	day:     days since 1970-01-01
//	week:    ISO weeks (Monday start); week 0 starts on Monday 1969-12-29
//	month:   year*12 + month-1
//	quarter: year*4 + quarter-1
//	year:    the year
//
// Consecutive periods have consecutive indexes, so gaps are differences.
type Calendar struct {
	Freq   spec.Frequency
	Season int
}

// grain is the granularity a time value was written in.
type grain int

const (
	grainDay grain = iota
	grainWeek
	grainMonth
	grainQuarter
	grainYear
)

func (g grain) String() string {
	return [...]string{"a date", "an ISO week", "a month", "a quarter", "a year"}[g]
}

var freqGrain = map[spec.Frequency]grain{
	spec.Day: grainDay, spec.Week: grainWeek, spec.Month: grainMonth, spec.Quarter: grainQuarter, spec.Year: grainYear,
}

// fromDays buckets a day (days since 1970-01-01) into its period.
func (c Calendar) FromDays(days int64) int64 {
	switch c.Freq {
	case spec.Day:
		return days
	case spec.Week:
		return FloorDiv(days+3, 7)
	}
	y, m, _ := civil(days)
	switch c.Freq {
	case spec.Month:
		return y*12 + m - 1
	case spec.Quarter:
		return y*4 + (m-1)/3
	}
	return y
}

// startDays is the first day of period p, in days since 1970-01-01: the
// value written into DATE columns.
func (c Calendar) StartDays(p int64) int64 {
	switch c.Freq {
	case spec.Day:
		return p
	case spec.Week:
		return p*7 - 3
	case spec.Month:
		return daysFromCivil(FloorDiv(p, 12), floorMod(p, 12)+1, 1)
	case spec.Quarter:
		return daysFromCivil(FloorDiv(p, 4), floorMod(p, 4)*3+1, 1)
	}
	return daysFromCivil(p, 1, 1)
}

// position is the 1-based calendar position of period p within a season of
// length m: the month of the year for monthly data with m = 12, the quarter
// for quarterly data with m = 4, the weekday (Monday = 1) for daily data
// with m = 7. For weeks it counts ISO weeks from Monday 1969-12-29 modulo m,
// which is stable but does not follow ISO week numbers across 53-week years.
func (c Calendar) Position(p int64) int {
	if c.Season < 1 {
		return 1
	}
	if c.Freq == spec.Day {
		p += 3 // day 0 is a Thursday; make Monday position 1
	}
	return int(floorMod(p, int64(c.Season))) + 1
}

// label renders period p as people write it: 2024-03-05, 2024-W07, 2024-03,
// 2024-Q1, 2024.
func (c Calendar) Label(p int64) string {
	switch c.Freq {
	case spec.Day:
		y, m, d := civil(p)
		return fmt.Sprintf("%04d-%02d-%02d", y, m, d)
	case spec.Week:
		y, w := isoWeek(p*7 - 3)
		return fmt.Sprintf("%04d-W%02d", y, w)
	case spec.Month:
		return fmt.Sprintf("%04d-%02d", FloorDiv(p, 12), floorMod(p, 12)+1)
	case spec.Quarter:
		return fmt.Sprintf("%04d-Q%d", FloorDiv(p, 4), floorMod(p, 4)+1)
	}
	return fmt.Sprintf("%04d", p)
}

// timeError explains why a time value could not be read.
type timeError struct{ msg string }

func (e *timeError) Error() string { return e.msg }

const timeForms = "expected a date (2024-07-15), an RFC 3339 timestamp (2024-07-15T09:30:00Z), a month (2024-07), a quarter (2024-Q3), an ISO week (2024-W07) or a year (2024)"

// Parse reads a time value written as text and buckets it into its period.
func (c Calendar) Parse(s string) (int64, error) {
	t, err := c.ParseSpan(s)
	return t.Period, err
}

// RowTime is where one row's time value lands: its period, the days it
// covers (one for a date; all of a month's for "2024-03"), and whether it is
// a date finer than the calendar (a day on a weekly calendar).
type RowTime struct {
	Period      int64
	First, Last int64 // days since 1970-01-01
	Fine        bool
}

// Days of the years almanac accepts, 0001-01-01 … 9999-12-31: beyond them
// DATE32 values wrap in other tools and the labels lose their meaning.
var (
	MinDay = daysFromCivil(1, 1, 1)
	MaxDay = daysFromCivil(9999, 12, 31)
)

// ParseSpan is Parse with the days the value covers.
func (c Calendar) ParseSpan(s string) (RowTime, error) {
	g, days, idx, err := parseTimeText(s)
	if err != nil {
		return RowTime{}, err
	}
	p, err := c.bucket(s, g, days, idx)
	if err != nil {
		return RowTime{}, err
	}
	first, last := grainSpan(g, days, idx)
	if first < MinDay || last > MaxDay {
		return RowTime{}, &timeError{fmt.Sprintf("%q lies outside the years 1 to 9999", s)}
	}
	return RowTime{Period: p, First: first, Last: last, Fine: g == grainDay && c.Freq != spec.Day}, nil
}

// DayTime is the RowTime of a day read from a DATE or TIMESTAMP column.
func (c Calendar) DayTime(days int64) (RowTime, error) {
	if days < MinDay || days > MaxDay {
		y, _, _ := civil(days)
		return RowTime{}, &timeError{fmt.Sprintf("the date lies in the year %d, outside the years 1 to 9999", y)}
	}
	return RowTime{Period: c.FromDays(days), First: days, Last: days, Fine: c.Freq != spec.Day}, nil
}

// grainSpan is the first and last day of a value of grain g.
func grainSpan(g grain, days, idx int64) (int64, int64) {
	switch g {
	case grainDay:
		return days, days
	case grainWeek:
		return idx*7 - 3, idx*7 + 3
	case grainMonth:
		y, m := FloorDiv(idx, 12), floorMod(idx, 12)+1
		first := daysFromCivil(y, m, 1)
		return first, first + int64(daysIn(y, m)) - 1
	case grainQuarter:
		start := func(i int64) int64 { return daysFromCivil(FloorDiv(i, 4), floorMod(i, 4)*3+1, 1) }
		return start(idx), start(idx+1) - 1
	}
	return daysFromCivil(idx, 1, 1), daysFromCivil(idx+1, 1, 1) - 1
}

// EndDays is the last day of period p.
func (c Calendar) EndDays(p int64) int64 { return c.StartDays(p+1) - 1 }

// LabelDay renders a day as YYYY-MM-DD.
func LabelDay(d int64) string {
	y, m, dd := civil(d)
	return fmt.Sprintf("%04d-%02d-%02d", y, m, dd)
}

// DayOf reads a day written YYYY-MM-DD (as spec.CheckDay accepts it).
func DayOf(s string) int64 {
	var y, m, d int64
	fmt.Sscanf(s, "%d-%d-%d", &y, &m, &d)
	return daysFromCivil(y, m, d)
}

// bucket turns a parsed value of grain g into a period of the calendar. A
// value coarser than the calendar (a month on a weekly calendar) or one that
// does not nest in it (an ISO week on a monthly calendar) is an error.
func (c Calendar) bucket(s string, g grain, days, idx int64) (int64, error) {
	fg := freqGrain[c.Freq]
	if g == grainDay {
		return c.FromDays(days), nil
	}
	if g == fg {
		return idx, nil
	}
	if g == grainWeek || g > fg || fg == grainWeek {
		return 0, &timeError{fmt.Sprintf("%q is %s, which does not fit the %s calendar; write %s or a date", s, g, c.Freq, freqGrain[c.Freq])}
	}
	// month → quarter or year, quarter → year
	switch {
	case g == grainMonth && fg == grainQuarter:
		return FloorDiv(idx, 12)*4 + floorMod(idx, 12)/3, nil
	case g == grainMonth && fg == grainYear:
		return FloorDiv(idx, 12), nil
	case g == grainQuarter && fg == grainYear:
		return FloorDiv(idx, 4), nil
	}
	return 0, &timeError{fmt.Sprintf("%q cannot be placed on the %s calendar", s, c.Freq)}
}

// parseTimeText recognises the accepted text forms. It returns the grain,
// and for dates the day number, otherwise the period index of that grain.
func parseTimeText(s string) (g grain, days, idx int64, err error) {
	bad := func() (grain, int64, int64, error) {
		return 0, 0, 0, &timeError{fmt.Sprintf("%q is not a time value: %s", s, timeForms)}
	}
	n := len(s)
	if n < 4 {
		return bad()
	}
	y, ok := digits(s[0:4])
	if !ok {
		return bad()
	}
	if n == 4 {
		return grainYear, 0, y, nil
	}
	if s[4] != '-' || n < 7 {
		return bad()
	}
	switch {
	case s[5] == 'Q' || s[5] == 'q':
		q, ok := digits(s[6:])
		if !ok || n != 7 || q < 1 || q > 4 {
			return bad()
		}
		return grainQuarter, 0, y*4 + q - 1, nil
	case s[5] == 'W' || s[5] == 'w':
		if n != 8 {
			return bad()
		}
		w, ok := digits(s[6:8])
		if !ok || w < 1 || w > isoWeeksIn(y) {
			if ok {
				return 0, 0, 0, &timeError{fmt.Sprintf("%q: ISO year %d has %d weeks", s, y, isoWeeksIn(y))}
			}
			return bad()
		}
		monday := isoWeek1Monday(y) + (w-1)*7
		return grainWeek, 0, FloorDiv(monday+3, 7), nil
	}
	m, ok := digits(s[5:7])
	if !ok || m < 1 || m > 12 {
		return bad()
	}
	if n == 7 {
		return grainMonth, 0, y*12 + m - 1, nil
	}
	if n < 10 || s[7] != '-' {
		return bad()
	}
	d, ok := digits(s[8:10])
	if !ok || d < 1 || d > int64(daysIn(y, m)) {
		if ok {
			return 0, 0, 0, &timeError{fmt.Sprintf("%q is not a calendar date", s)}
		}
		return bad()
	}
	if n > 10 {
		// A timestamp: the calendar date as written counts (the business
		// day in the writer's own zone); the clock time and offset are
		// checked for form and then ignored.
		rest := s[10:]
		if rest[0] != 'T' && rest[0] != 't' && rest[0] != ' ' {
			return bad()
		}
		if _, err := time.Parse(time.RFC3339Nano, "2000-01-01T"+rest[1:]); err != nil {
			if _, err2 := time.Parse("2006-01-02T15:04:05.999999999", "2000-01-01T"+rest[1:]); err2 != nil {
				if _, err3 := time.Parse("2006-01-02T15:04", "2000-01-01T"+rest[1:]); err3 != nil {
					return bad()
				}
			}
		}
	}
	return grainDay, daysFromCivil(y, m, d), 0, nil
}

func digits(s string) (int64, bool) {
	if s == "" {
		return 0, false
	}
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return 0, false
		}
	}
	v, err := strconv.ParseInt(s, 10, 64)
	return v, err == nil
}

func FloorDiv(a, b int64) int64 {
	q := a / b
	if (a%b != 0) && ((a < 0) != (b < 0)) {
		q--
	}
	return q
}

func floorMod(a, b int64) int64 { return a - FloorDiv(a, b)*b }

// daysFromCivil returns days since 1970-01-01 of a proleptic Gregorian date
// (Howard Hinnant's algorithm, common practice).
func daysFromCivil(y, m, d int64) int64 {
	if m <= 2 {
		y--
	}
	era := FloorDiv(y, 400)
	yoe := y - era*400
	mp := (m + 9) % 12
	doy := (153*mp+2)/5 + d - 1
	doe := yoe*365 + yoe/4 - yoe/100 + doy
	return era*146097 + doe - 719468
}

// civil is the inverse of daysFromCivil.
func civil(z int64) (y, m, d int64) {
	z += 719468
	era := FloorDiv(z, 146097)
	doe := z - era*146097
	yoe := (doe - doe/1460 + doe/36524 - doe/146096) / 365
	y = yoe + era*400
	doy := doe - (365*yoe + yoe/4 - yoe/100)
	mp := (5*doy + 2) / 153
	d = doy - (153*mp+2)/5 + 1
	m = mp + 3
	if m > 12 {
		m -= 12
	}
	if m <= 2 {
		y++
	}
	return y, m, d
}

func isLeap(y int64) bool { return y%4 == 0 && (y%100 != 0 || y%400 == 0) }

func daysIn(y, m int64) int {
	switch m {
	case 2:
		if isLeap(y) {
			return 29
		}
		return 28
	case 4, 6, 9, 11:
		return 30
	}
	return 31
}

// isoWeek1Monday is the Monday of ISO week 1 of year y: the week holding 4 January.
func isoWeek1Monday(y int64) int64 {
	jan4 := daysFromCivil(y, 1, 4)
	weekday := floorMod(jan4+3, 7) // Monday = 0
	return jan4 - weekday
}

func isoWeeksIn(y int64) int64 {
	return (isoWeek1Monday(y+1) - isoWeek1Monday(y)) / 7
}

// isoWeek returns the ISO year and week number of a day.
func isoWeek(days int64) (int64, int64) {
	y, _, _ := civil(days)
	for _, yy := range []int64{y + 1, y, y - 1} {
		if days >= isoWeek1Monday(yy) {
			return yy, (days-isoWeek1Monday(yy))/7 + 1
		}
	}
	return y, 1
}

// Days is the number of days in period p.
func (c Calendar) Days(p int64) int64 { return c.EndDays(p) - c.StartDays(p) + 1 }

// Covered returns the first and last periods that lie entirely within the
// days first … last (inclusive); lo > hi when no period does. A closure
// closes exactly these periods.
func (c Calendar) Covered(first, last int64) (lo, hi int64) {
	lo, hi = c.FromDays(first), c.FromDays(last)
	if c.StartDays(lo) < first {
		lo++
	}
	if c.EndDays(hi) > last {
		hi--
	}
	return lo, hi
}

// Shares calls f, in period order, for each period the days first … last
// (inclusive) touch, with the share of that period's days they cover: 1
// for a period covered entirely, 2/7 for two days of a week. A driver's
// value in a period is the sum of its day values over the period's days,
// so a constant value v over the days contributes v × share.
func (c Calendar) Shares(first, last int64, f func(p int64, share float64)) {
	if first > last {
		return
	}
	for p := c.FromDays(first); p <= c.FromDays(last); p++ {
		lo, hi := max(first, c.StartDays(p)), min(last, c.EndDays(p))
		f(p, float64(hi-lo+1)/float64(c.Days(p)))
	}
}
