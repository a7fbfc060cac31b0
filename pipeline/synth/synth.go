// Package synth writes synthetic panels — many series with trend, seasonality,
// noise and a share of intermittent series — so that users can size their
// runs before pointing almanac at real data. The data are invented.
package synth

import (
	"bufio"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// Options describe a panel.
type Options struct {
	Series       int     // number of series (default 1000)
	Length       int     // periods per series (default 156)
	Frequency    string  // day | week | month | quarter | year (default week)
	Season       int     // season length (default by frequency)
	Form         string  // multiplicative | additive | none (default multiplicative)
	Noise        float64 // noise as a share of the level (default 0.1)
	Intermittent float64 // share of series that are intermittent (default 0.1)
	Format       string  // parquet | csv (default from the file name)
	Start        string  // first period as an ISO date (default 2023-01-02)
	RNG          uint64  // random stream (default 1): same options, same bytes
}

func (o *Options) defaults(path string) error {
	if o.Series <= 0 {
		o.Series = 1000
	}
	if o.Length <= 0 {
		o.Length = 156
	}
	if o.Frequency == "" {
		o.Frequency = "week"
	}
	if o.Season <= 0 {
		o.Season = map[string]int{"day": 7, "week": 52, "month": 12, "quarter": 4, "year": 1}[o.Frequency]
		if o.Season == 0 {
			return fmt.Errorf("frequency %q: want day, week, month, quarter or year", o.Frequency)
		}
	}
	if o.Form == "" {
		o.Form = "multiplicative"
	}
	if o.Form != "multiplicative" && o.Form != "additive" && o.Form != "none" {
		return fmt.Errorf("form %q: want multiplicative, additive or none", o.Form)
	}
	if o.Noise == 0 {
		o.Noise = 0.1
	}
	if o.Intermittent < 0 || o.Intermittent > 1 {
		return fmt.Errorf("intermittent share %g: want 0 to 1", o.Intermittent)
	}
	if o.Format == "" {
		o.Format = "parquet"
		if strings.HasSuffix(path, ".csv") {
			o.Format = "csv"
		}
	}
	if o.Start == "" {
		o.Start = "2023-01-02"
	}
	if o.RNG == 0 {
		o.RNG = 1
	}
	return nil
}

// period returns the first day of period i after start.
func period(start time.Time, freq string, i int) time.Time {
	switch freq {
	case "day":
		return start.AddDate(0, 0, i)
	case "week":
		return start.AddDate(0, 0, 7*i)
	case "month":
		return start.AddDate(0, i, 0)
	case "quarter":
		return start.AddDate(0, 3*i, 0)
	}
	return start.AddDate(i, 0, 0)
}

// seriesValues draws one series. Each series has its own stream, so a
// series' values do not depend on how many others there are.
func seriesValues(o *Options, k int, out []float64) {
	rng := rand.New(rand.NewPCG(o.RNG, uint64(k)+0x9e3779b97f4a7c15))
	level := math.Exp(2 + 4*rng.Float64()) // about 7 to 400 units
	trend := (rng.Float64() - 0.4) * 0.01  // per period, relative
	amp := 0.2 + 0.6*rng.Float64()
	phase := rng.Float64() * 2 * math.Pi
	intermittent := rng.Float64() < o.Intermittent
	p := 0.2 + 0.4*rng.Float64() // demand probability of an intermittent series
	for i := range out {
		l := level * (1 + trend*float64(i))
		s := 0.0
		if o.Form != "none" && o.Season > 1 {
			s = amp * math.Sin(2*math.Pi*float64(i%o.Season)/float64(o.Season)+phase)
		}
		var v float64
		switch o.Form {
		case "additive":
			v = l + level*s + o.Noise*level*rng.NormFloat64()
		default:
			v = l*(1+s) + o.Noise*l*rng.NormFloat64()
		}
		if intermittent {
			if rng.Float64() < p {
				v = math.Ceil(math.Abs(v) * 0.05 * (1 + rng.Float64()))
			} else {
				v = 0
			}
		}
		out[i] = math.Max(0, math.Round(v))
	}
}

// Write writes the panel to path: columns period (DATE in Parquet, ISO date
// text in CSV), region, item and units, sorted by key then period.
func Write(path string, o Options) error {
	if err := o.defaults(path); err != nil {
		return err
	}
	start, err := time.Parse(time.DateOnly, o.Start)
	if err != nil {
		return fmt.Errorf("start %q: %v", o.Start, err)
	}
	tmp := path + ".tmp"
	f, err := os.Create(tmp)
	if err != nil {
		return err
	}
	defer os.Remove(tmp)
	if o.Format == "csv" {
		err = writeCSV(f, &o, start)
	} else {
		err = writeParquet(f, &o, start)
	}
	if err != nil {
		f.Close()
		return err
	}
	if err := f.Close(); err != nil && o.Format == "csv" {
		return err
	}
	return os.Rename(tmp, path)
}

func keyOf(k int) (region, item string) {
	return fmt.Sprintf("R%03d", k%1000), fmt.Sprintf("I%06d", k/1000)
}

func writeCSV(f *os.File, o *Options, start time.Time) error {
	w := bufio.NewWriterSize(f, 1<<20)
	w.WriteString("period,region,item,units\n")
	vals := make([]float64, o.Length)
	dates := make([]string, o.Length)
	for i := range dates {
		dates[i] = period(start, o.Frequency, i).Format(time.DateOnly)
	}
	buf := make([]byte, 0, 64)
	for k := 0; k < o.Series; k++ {
		seriesValues(o, k, vals)
		r, it := keyOf(k)
		for i, v := range vals {
			buf = append(buf[:0], dates[i]...)
			buf = append(buf, ',')
			buf = append(buf, r...)
			buf = append(buf, ',')
			buf = append(buf, it...)
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, v, 'f', -1, 64)
			buf = append(buf, '\n')
			w.Write(buf)
		}
	}
	return w.Flush()
}

func writeParquet(f *os.File, o *Options, start time.Time) error {
	sch := arrow.NewSchema([]arrow.Field{
		{Name: "period", Type: arrow.FixedWidthTypes.Date32},
		{Name: "region", Type: arrow.BinaryTypes.String},
		{Name: "item", Type: arrow.BinaryTypes.String},
		{Name: "units", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	props := parquet.NewWriterProperties(parquet.WithCompression(compress.Codecs.Zstd), parquet.WithDictionaryDefault(true),
		parquet.WithStats(true), parquet.WithCreatedBy("almanac panel"), parquet.WithMaxRowGroupLength(1<<20))
	fw, err := pqarrow.NewFileWriter(sch, f, props, pqarrow.DefaultWriterProps())
	if err != nil {
		return err
	}
	b := array.NewRecordBuilder(memory.DefaultAllocator, sch)
	defer b.Release()
	dates := make([]arrow.Date32, o.Length)
	for i := range dates {
		dates[i] = arrow.Date32FromTime(period(start, o.Frequency, i))
	}
	vals := make([]float64, o.Length)
	rows := 0
	flush := func() error {
		rec := b.NewRecordBatch()
		defer rec.Release()
		rows = 0
		return fw.WriteBuffered(rec)
	}
	for k := 0; k < o.Series; k++ {
		seriesValues(o, k, vals)
		r, it := keyOf(k)
		for i, v := range vals {
			b.Field(0).(*array.Date32Builder).Append(dates[i])
			b.Field(1).(*array.StringBuilder).Append(r)
			b.Field(2).(*array.StringBuilder).Append(it)
			b.Field(3).(*array.Float64Builder).Append(v)
		}
		rows += len(vals)
		if rows >= 1<<16 {
			if err := flush(); err != nil {
				return err
			}
		}
	}
	if rows > 0 {
		if err := flush(); err != nil {
			return err
		}
	}
	return fw.Close()
}
