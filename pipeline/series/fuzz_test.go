package series

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"almanac/pipeline/calendar"
	"almanac/pipeline/ingest"
	"almanac/spec"
)

const fuzzSpec = `version: 1
name: fuzz
sources: [in.csv]
columns: {time: t, value: v, keys: [k]}
calendar: {frequency: month}
methods: [naive]
horizon: 2
limits: {max_periods: 5000}
`

// FuzzCSVIngest: any CSV bytes either fail with a message naming the file,
// or become series in which every row was counted. Seeds: the CSV files of
// the bad-input corpus, with their header renamed to the fuzz spec's.
func FuzzCSVIngest(f *testing.F) {
	f.Add([]byte("t,k,v\n2021-01,a,1\n2021-03,a,2\n2021-02,b,\n"))
	f.Add([]byte("\ufefft,k,v\r\n2021-01,\"a\nb\",1\r\n"))
	paths, _ := filepath.Glob("../testdata/corpus/*/*.csv")
	for _, p := range paths {
		if b, err := os.ReadFile(p); err == nil && len(b) < 1<<16 {
			f.Add([]byte(strings.Replace(strings.Replace(strings.Replace(string(b), "month", "t", 1), "store", "k", 1), "qty", "v", 1)))
		}
	}
	dir := f.TempDir()
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(fuzzSpec), 0o644)
	s, err := spec.Load(filepath.Join(dir, "spec.yaml"))
	if err != nil {
		f.Fatal(err)
	}
	cal := calendar.Calendar{Freq: s.Calendar.Frequency, Season: s.Calendar.SeasonLength}
	f.Fuzz(func(t *testing.T, data []byte) {
		if err := os.WriteFile(filepath.Join(dir, "in.csv"), data, 0o644); err != nil {
			t.Fatal(err)
		}
		files, err := ingest.ResolveSources(s)
		if err != nil {
			t.Fatal(err)
		}
		rs, err := ingest.Read(context.Background(), s, files, cal, 0)
		if err != nil {
			if !strings.Contains(err.Error(), "in.csv") && !strings.Contains(err.Error(), "no data rows") {
				t.Fatalf("error does not name the file: %v", err)
			}
			return
		}
		if int64(len(rs.Periods)) != files[0].Rows {
			t.Fatalf("%d rows kept of %d read", len(rs.Periods), files[0].Rows)
		}
		all, err := Shape(rs, s.Shaping, s.Limits, cal, s.Columns.Keys, 2)
		if err != nil {
			return
		}
		for _, se := range all {
			if se.Skip == "" && len(se.Values) == 0 {
				t.Fatal("empty series")
			}
		}
	})
}
