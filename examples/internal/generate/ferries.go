package main

// The quarterly-ferries example: passengers carried per quarter on the six
// routes of the Tarrin Isles Ferry Company, an invented island ferry
// operator. See examples/quarterly-ferries/README.md.

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"path/filepath"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// The ferry data come from this PCG seed: stream ferryStream draws the
// shared storm quarters, stream ferryStream+1+i draws route i.
const (
	ferrySeed   uint64 = 0x54_41_52_52_49_4e_49_53 // "TARRINIS"
	ferryStream uint64 = 0x0000_0000_0000_2016
)

const (
	ferryFirstYear = 2016
	ferryYears     = 10 // 2016-Q1 … 2025-Q4
)

type ferryRoute struct {
	name   string
	base   float64    // passengers in an average quarter of 2016
	season [4]float64 // Q1…Q4 factors (normalised to mean 1 when used)
	growth float64    // compound growth per year
	noise  float64    // log-scale sd of quarter-to-quarter noise
	storm  float64    // how much of a stormy winter quarter's loss this route takes (0…1)

	// The structural break: until breakAt (a quarter index, 0 = 2016-Q1;
	// zero means no break) one vessel carries at most capacity passengers a
	// quarter. From breakAt a vessel of twice the capacity sails, and demand
	// steps up by lift (rampLift in its first quarter).
	breakAt  int
	capacity float64
	lift     float64
	rampLift float64
}

var ferryRoutes = []ferryRoute{
	{name: "kellan-brae", base: 14000, season: [4]float64{0.55, 1.10, 1.60, 0.75}, growth: 0.015, noise: 0.05, storm: 0.8},
	{name: "kellan-orrin", base: 26000, season: [4]float64{0.90, 1.00, 1.15, 0.95}, growth: -0.01, noise: 0.03, storm: 0.5},
	{name: "marrach-hollis", base: 30000, season: [4]float64{0.60, 1.10, 1.50, 0.80}, growth: 0.02, noise: 0.04, storm: 0.6,
		breakAt: 4*(2022-ferryFirstYear) + 1, capacity: 40000, lift: 1.4, rampLift: 1.2},
	{name: "marrach-kellan", base: 180000, season: [4]float64{0.65, 1.05, 1.55, 0.75}, growth: 0.02, noise: 0.025, storm: 0.4},
	{name: "marrach-torsay", base: 60000, season: [4]float64{0.45, 1.10, 1.85, 0.60}, growth: 0.03, noise: 0.04, storm: 0.7},
	{name: "torsay-vane", base: 9000, season: [4]float64{0.30, 1.20, 2.10, 0.40}, growth: 0.01, noise: 0.07, storm: 1.0},
}

type ferryRow struct {
	quarter    string
	route      string
	passengers int64
}

func ferryQuarter(i int) string {
	return fmt.Sprintf("%d-Q%d", ferryFirstYear+i/4, i%4+1)
}

// ferryStorms draws the stormy winters, which hit every route in the same
// quarters: about a third of the first and fourth quarters lose 5–15% of
// their sailings. storm[i] is the share lost in quarter i (0 = 2016-Q1).
func ferryStorms() []float64 {
	shared := rand.New(rand.NewPCG(ferrySeed, ferryStream))
	storm := make([]float64, 4*ferryYears)
	for i := range storm {
		if q := i % 4; (q == 0 || q == 3) && shared.Float64() < 0.3 {
			storm[i] = 0.05 + 0.10*shared.Float64()
		}
	}
	return storm
}

func generateFerries() []ferryRow {
	n := 4 * ferryYears
	storm := ferryStorms()

	var rows []ferryRow
	for ri, rt := range ferryRoutes {
		r := rand.New(rand.NewPCG(ferrySeed, ferryStream+1+uint64(ri)))
		mean := (rt.season[0] + rt.season[1] + rt.season[2] + rt.season[3]) / 4
		for i := range n {
			years := float64(i) / 4
			demand := rt.base * rt.season[i%4] / mean * math.Pow(1+rt.growth, years)
			demand *= lognormalFactor(r, rt.noise) * (1 - rt.storm*storm[i])
			if rt.breakAt > 0 {
				capacity := rt.capacity
				switch {
				case i == rt.breakAt:
					demand *= rt.rampLift
					capacity *= 2
				case i > rt.breakAt:
					demand *= rt.lift
					capacity *= 2
				}
				// A full vessel turns people away; a sold-out quarter
				// still has a few empty seats on quiet sailings.
				demand = math.Min(demand, capacity*(0.97+0.02*r.Float64()))
			}
			rows = append(rows, ferryRow{quarter: ferryQuarter(i), route: rt.name, passengers: int64(math.Round(demand))})
		}
	}
	// ferryRoutes is in name order and quarters are generated in time order,
	// so rows are already sorted by route, then quarter.
	return rows
}

func ferryParquet(rows []ferryRow) ([]byte, error) {
	mem := memory.NewGoAllocator()
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "quarter", Type: arrow.BinaryTypes.String},
		{Name: "route", Type: arrow.BinaryTypes.String},
		{Name: "passengers", Type: arrow.PrimitiveTypes.Int64},
	}, nil)
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	qb := b.Field(0).(*array.StringBuilder)
	rb := b.Field(1).(*array.StringBuilder)
	pb := b.Field(2).(*array.Int64Builder)
	for _, row := range rows {
		qb.Append(row.quarter)
		rb.Append(row.route)
		pb.Append(row.passengers)
	}
	rec := b.NewRecordBatch()
	defer rec.Release()

	props := parquet.NewWriterProperties(
		parquet.WithAllocator(mem),
		parquet.WithCompression(compress.Codecs.Zstd),
		parquet.WithCompressionLevel(3),
		parquet.WithDictionaryDefault(true),
		parquet.WithStats(true),
		parquet.WithMaxRowGroupLength(1<<20),
		parquet.WithCreatedBy("almanac-examples-generate version 1.0.0"),
	)
	var buf bytes.Buffer
	fw, err := pqarrow.NewFileWriter(schema, &buf, props, pqarrow.NewArrowWriterProperties(pqarrow.WithAllocator(mem)))
	if err != nil {
		return nil, err
	}
	if err := fw.Write(rec); err != nil {
		fw.Close()
		return nil, err
	}
	if err := fw.AppendKeyValueMetadata("almanac.example", "quarterly-ferries: invented data, see README.md"); err != nil {
		fw.Close()
		return nil, err
	}
	if err := fw.Close(); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

func writeFerries(dir string, stats io.Writer) error {
	rows := generateFerries()
	data, err := ferryParquet(rows)
	if err != nil {
		return err
	}
	path := filepath.Join(dir, "data", "passengers.parquet")
	if err := writeFileAtomic(path, data); err != nil {
		return err
	}
	fmt.Fprintf(stats, "wrote %s: %d rows, %d bytes\n", path, len(rows), len(data))
	ferryStats(rows, stats)
	return nil
}

func ferryStats(rows []ferryRow, w io.Writer) {
	n := 4 * ferryYears
	fmt.Fprintln(w, "\npassengers per route and year:")
	fmt.Fprintf(w, "  %-15s", "route")
	for y := range ferryYears {
		fmt.Fprintf(w, " %8d", ferryFirstYear+y)
	}
	fmt.Fprintln(w)
	for ri, rt := range ferryRoutes {
		fmt.Fprintf(w, "  %-15s", rt.name)
		for y := range ferryYears {
			sum := int64(0)
			for q := range 4 {
				sum += rows[ri*n+4*y+q].passengers
			}
			fmt.Fprintf(w, " %8d", sum)
		}
		fmt.Fprintln(w)
	}

	fmt.Fprintln(w, "\nmean passengers by quarter of the year (Q3 / Q1 = summer peak):")
	fmt.Fprintf(w, "  %-15s %8s %8s %8s %8s %6s\n", "route", "Q1", "Q2", "Q3", "Q4", "Q3/Q1")
	for ri, rt := range ferryRoutes {
		var m [4]float64
		for i := range n {
			m[i%4] += float64(rows[ri*n+i].passengers) / ferryYears
		}
		fmt.Fprintf(w, "  %-15s %8.0f %8.0f %8.0f %8.0f %6.2f\n", rt.name, m[0], m[1], m[2], m[3], m[2]/m[0])
	}

	fmt.Fprint(w, "\nstormy quarters (share of sailings lost, before each route's exposure):")
	for i, v := range ferryStorms() {
		if v > 0 {
			fmt.Fprintf(w, " %s %.0f%%", ferryQuarter(i), 100*v)
		}
	}
	fmt.Fprintln(w)

	for ri, rt := range ferryRoutes {
		if rt.breakAt == 0 {
			continue
		}
		fmt.Fprintf(w, "\n%s, new vessel from %s:\n", rt.name, ferryQuarter(rt.breakAt))
		for y := range ferryYears {
			fmt.Fprintf(w, "  %d", ferryFirstYear+y)
			for q := range 4 {
				fmt.Fprintf(w, " %7d", rows[ri*n+4*y+q].passengers)
			}
			fmt.Fprintln(w)
		}
	}
}
