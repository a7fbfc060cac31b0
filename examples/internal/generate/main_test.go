package main

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// dataFiles are the files each example's generator writes, relative to the
// example's folder.
var dataFiles = map[string][]string{
	"garden-supply":     {"data/order_lines.csv"},
	"quarterly-ferries": {"data/passengers.parquet"},
	"daily-grocer":      {"data/sales.csv", "events/closures.csv", "events/drivers.csv"},
}

// The committed data must be exactly what the generator writes today, so
// nobody edits a data file by hand or changes the generator without
// regenerating.
func TestCommittedDataIsCurrent(t *testing.T) {
	for _, e := range examples {
		t.Run(e.name, func(t *testing.T) {
			rels, ok := dataFiles[e.name]
			if !ok {
				t.Fatalf("no data file listed for example %s", e.name)
			}
			tmp := t.TempDir()
			if err := e.generate(tmp, io.Discard); err != nil {
				t.Fatal(err)
			}
			for _, rel := range rels {
				got, err := os.ReadFile(filepath.Join(tmp, rel))
				if err != nil {
					t.Fatal(err)
				}
				want, err := os.ReadFile(filepath.Join("..", "..", e.name, rel))
				if err != nil {
					t.Fatal(err)
				}
				if !bytes.Equal(got, want) {
					t.Errorf("examples/%s/%s differs from the generator's output (%d vs %d bytes): run go run ./examples/internal/generate", e.name, rel, len(want), len(got))
				}
			}
		})
	}
}

func TestGeneratorIsDeterministic(t *testing.T) {
	a, b := gardenCSV(generateGarden()), gardenCSV(generateGarden())
	if !bytes.Equal(a, b) {
		t.Error("garden-supply: two runs differ")
	}
	p, err := ferryParquet(generateFerries())
	if err != nil {
		t.Fatal(err)
	}
	q, err := ferryParquet(generateFerries())
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(p, q) {
		t.Error("quarterly-ferries: two runs differ")
	}
}

func TestGardenShape(t *testing.T) {
	lines := generateGarden()
	data := gardenCSV(lines)
	if len(data) >= 5<<20 {
		t.Errorf("order_lines.csv is %d bytes, want < 5 MiB", len(data))
	}
	if !bytes.HasPrefix(data, []byte("order_date,depot,sku,units\n")) {
		t.Error("missing or wrong header row")
	}
	first := gardenFirst.AddDate(0, 0, lines[0].day)
	last := gardenFirst.AddDate(0, 0, lines[len(lines)-1].day)
	if y, w := first.ISOWeek(); y != 2023 || w != 1 {
		t.Errorf("first order line in %d-W%02d, want 2023-W01", y, w)
	}
	if y, w := last.ISOWeek(); y != 2025 || w != 52 {
		t.Errorf("last order line in %d-W%02d, want 2025-W52", y, w)
	}
	seen := map[[2]int]bool{}
	for _, l := range lines {
		if l.units <= 0 {
			t.Fatalf("non-positive units %d", l.units)
		}
		seen[[2]int{l.depot, l.sku}] = true
	}
	if want := len(gardenDepots) * len(gardenSKUs); len(seen) != want {
		t.Errorf("%d series have order lines, want %d", len(seen), want)
	}
	// The launched stock line must have less than two seasons of history:
	// the README points at it as the series classical decomposition cannot fit.
	for _, sk := range gardenSKUs {
		if !sk.launch.IsZero() && gardenLast.Sub(sk.launch) >= 104*7*24*time.Hour {
			t.Errorf("%s has two full years of history; the README says it has less", sk.code)
		}
	}
}

func TestFerryParquetReadsBack(t *testing.T) {
	data, err := ferryParquet(generateFerries())
	if err != nil {
		t.Fatal(err)
	}
	rdr, err := file.NewParquetReader(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	defer rdr.Close()
	md := rdr.MetaData()
	for c := range md.Schema.NumColumns() {
		cc, err := md.RowGroup(0).ColumnChunk(c)
		if err != nil {
			t.Fatal(err)
		}
		if cc.Compression() != compress.Codecs.Zstd {
			t.Errorf("column %d compressed with %v, want zstd", c, cc.Compression())
		}
	}
	fr, err := pqarrow.NewFileReader(rdr, pqarrow.ArrowReadProperties{}, memory.NewGoAllocator())
	if err != nil {
		t.Fatal(err)
	}
	tbl, err := fr.ReadTable(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	defer tbl.Release()
	var names []string
	for _, f := range tbl.Schema().Fields() {
		names = append(names, f.Name+":"+f.Type.String())
	}
	if got, want := strings.Join(names, ","), "quarter:utf8,route:utf8,passengers:int64"; got != want {
		t.Errorf("schema %s, want %s", got, want)
	}
	if got, want := tbl.NumRows(), int64(4*ferryYears*len(ferryRoutes)); got != want {
		t.Errorf("%d rows, want %d", got, want)
	}
	quarter := regexp.MustCompile(`^20[0-9]{2}-Q[1-4]$`)
	for _, row := range generateFerries() {
		if !quarter.MatchString(row.quarter) || row.passengers <= 0 {
			t.Fatalf("bad row %+v", row)
		}
	}
}

// The daily-grocer README and the evidence test in pipeline rely on these
// properties of the data.
func TestGrocerShape(t *testing.T) {
	sales, closures, drivers := generateGrocer()
	sales2, closures2, drivers2 := generateGrocer()
	if !bytes.Equal(grocerSalesCSV(sales), grocerSalesCSV(sales2)) ||
		!bytes.Equal(grocerEventsCSV(closures, false), grocerEventsCSV(closures2, false)) ||
		!bytes.Equal(grocerEventsCSV(drivers, true), grocerEventsCSV(drivers2, true)) {
		t.Fatal("daily-grocer: two runs differ")
	}
	days := int(grocerLast.Sub(grocerFirst).Hours()/24) + 1
	np := len(grocerProducts)
	has := make([][]bool, len(grocerStores)*np)
	for i := range has {
		has[i] = make([]bool, days)
	}
	for _, s := range sales {
		if s.units <= 0 {
			t.Fatalf("a row with %d units", s.units)
		}
		has[s.store*np+s.product][s.day] = true
	}
	btFirst := time.Date(2025, 9, 8, 0, 0, 0, 0, time.UTC) // the first backtest day of the example's spec
	horizonEnd := grocerLast.AddDate(0, 0, 28)
	for si := range grocerStores {
		for pi := range grocerProducts {
			promoBT, promoAhead := 0, 0
			for d := range days + 28 {
				day := grocerFirst.AddDate(0, 0, d)
				shut := slices.ContainsFunc(closures, func(e grocerEvent) bool { return e.applies(day, si, pi) })
				var on []string
				for _, e := range drivers {
					if e.applies(day, si, pi) {
						on = append(on, e.name)
					}
				}
				if len(on) > 1 || (shut && len(on) > 0) {
					t.Errorf("%s %s %s: events overlap (closed %v, drivers %v)", grocerStores[si].name, grocerProducts[pi].name, day.Format(time.DateOnly), shut, on)
				}
				if d < days && has[si*np+pi][d] == shut {
					// A closed day has no row and an open day always has one,
					// so the export alone tells them apart.
					t.Errorf("%s %s %s: closed %v but a row %v", grocerStores[si].name, grocerProducts[pi].name, day.Format(time.DateOnly), shut, has[si*np+pi][d])
				}
				if slices.Contains(on, "promotion") {
					switch {
					case d >= days:
						promoAhead++
					case !day.Before(btFirst):
						promoBT++
					}
				}
			}
			if promoBT == 0 {
				t.Errorf("%s %s: no promoted day in the backtest windows", grocerStores[si].name, grocerProducts[pi].name)
			}
			if pi == 0 && promoAhead != 7 {
				t.Errorf("%s bread: %d promoted days in the horizon, want the bread week", grocerStores[si].name, promoAhead)
			}
		}
	}
	for _, e := range append(closures, drivers...) {
		if e.last.Before(e.first) || e.first.Before(grocerFirst) || e.last.After(grocerKnownUntil) {
			t.Errorf("event %+v outside %s … %s", e, grocerFirst.Format(time.DateOnly), grocerKnownUntil.Format(time.DateOnly))
		}
	}
	if !horizonEnd.Before(grocerKnownUntil) {
		t.Errorf("the horizon ends %s, after the drivers are known", horizonEnd.Format(time.DateOnly))
	}
}
