package ingest

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"almanac/pipeline/calendar"
	"almanac/spec"
)

// readCSVText writes text as data.csv beside a spec naming its columns
// and reads it with Read.
func readCSVText(t *testing.T, text string) (*Rows, error) {
	t.Helper()
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "data.csv"), []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	y := "version: 1\nname: t\nsources: [data.csv]\ncolumns: {time: month, value: qty, keys: [store, item]}\n" +
		"calendar: {frequency: month}\nmethods: [naive]\nhorizon: 2\noutput: out\n"
	p := filepath.Join(dir, "spec.yaml")
	if err := os.WriteFile(p, []byte(y), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := spec.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	files, err := ResolveSources(s)
	if err != nil {
		t.Fatal(err)
	}
	cal := calendar.Calendar{Freq: s.Calendar.Frequency, Season: s.Calendar.SeasonLength}
	return Read(context.Background(), s, files, cal, DefaultBatchRows)
}

// The records travel in chunks of csvChunkRows: rows, key order and
// errors must come out as a record-by-record read gives them, across
// chunk boundaries. The data is invented.
func TestCSVChunksKeepRecordOrder(t *testing.T) {
	var b strings.Builder
	b.WriteString("month,store,item,qty\n")
	n := 3*csvChunkRows + 17
	for i := 0; i < n; i++ {
		// Series change every 7 rows, so keys repeat and change within
		// and across chunks.
		fmt.Fprintf(&b, "%04d-%02d,S%d,I%d,%d\n", 2020+(i%7)/12, i%7+1, (i/7)%5, i/35, i%13)
	}
	rs, err := readCSVText(t, b.String())
	if err != nil {
		t.Fatal(err)
	}
	if rs.RowCount != int64(n) || len(rs.KeyIDs) != n {
		t.Fatalf("read %d rows (%d in memory), want %d", rs.RowCount, len(rs.KeyIDs), n)
	}
	for _, i := range []int{0, csvChunkRows - 1, csvChunkRows, 2*csvChunkRows + 3, n - 1} {
		want := []string{fmt.Sprintf("S%d", (i/7)%5), fmt.Sprintf("I%d", i/35)}
		if got := rs.Keys[rs.KeyIDs[i]]; !slices.Equal(got, want) {
			t.Errorf("row %d: key %v, want %v", i, got, want)
		}
		if got, want := rs.Values[i], float64(i%13); got != want {
			t.Errorf("row %d: value %v, want %v", i, got, want)
		}
		if _, got := rs.origin.at(i); got != int64(i+2) {
			t.Errorf("row %d: line %d, want %d", i, got, i+2)
		}
	}
	// Key ids are given in order of first appearance.
	for i := 1; i < n; i++ {
		if rs.KeyIDs[i] > rs.KeyIDs[i-1]+1 {
			t.Fatalf("row %d: key id %d after %d", i, rs.KeyIDs[i], rs.KeyIDs[i-1])
		}
	}
}

func TestCSVChunksErrorsInRecordOrder(t *testing.T) {
	var b strings.Builder
	b.WriteString("month,store,item,qty\n")
	bad := map[int]string{ // 0-based data row → the row written instead
		5:                  "2020-01,S1,I1,abc",
		csvChunkRows - 1:   "month,store,item,qty",
		csvChunkRows:       "2020-01,S\x01,I1,3",
		csvChunkRows + 1:   "2020-99,S1,I1,oops",
		2*csvChunkRows + 2: "2020-01,S1,I1,1e999",
	}
	n := 2*csvChunkRows + 10
	for i := 0; i < n; i++ {
		if r, ok := bad[i]; ok {
			b.WriteString(r + "\n")
			continue
		}
		fmt.Fprintf(&b, "2020-%02d,S1,I1,%d\n", i%12+1, i)
	}
	_, err := readCSVText(t, b.String())
	var de *DataError
	if !errors.As(err, &de) {
		t.Fatalf("error %v, want a DataError", err)
	}
	line := func(row int) string { return fmt.Sprintf("data.csv:%d: ", row+2) }
	want := []string{
		line(5) + `column "qty": "abc" is not a number`,
		line(csvChunkRows-1) + "this line repeats the header",
		line(csvChunkRows) + `column "store": "S\x01" holds the control character U+0001`,
		line(csvChunkRows+1) + `column "month": `,
		line(csvChunkRows+1) + `column "qty": "oops" is not a number`,
		line(2*csvChunkRows+2) + `column "qty": "1e999" is too large`,
	}
	if len(de.Msgs) != len(want) {
		t.Fatalf("%d messages, want %d:\n%s", len(de.Msgs), len(want), strings.Join(de.Msgs, "\n"))
	}
	for i, w := range want {
		if !strings.HasPrefix(de.Msgs[i], w) {
			t.Errorf("message %d: %q, want it to start with %q", i, de.Msgs[i], w)
		}
	}
}
