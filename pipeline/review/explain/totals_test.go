package explain

import (
	"bytes"
	"fmt"
	"path/filepath"
	"strings"
	"testing"

	"almanac/pipeline/runfolder"
)

// The totals section lists, for the chosen entry, every lead time's row of
// the totals table: the periods, the total and each quantile, as written.
func TestExplainTotals(t *testing.T) {
	dir := makeRun(t, specBacktest+"totals: {lead_times: [2, 6], levels: [50, 95]}\n")
	key := []string{"west", "widget"}
	var buf bytes.Buffer
	if err := Explain(dir, key, &buf, Options{}); err != nil {
		t.Fatal(err)
	}
	_, blocks := parse(buf.String())
	b := find(t, blocks, "lead-time totals")
	tt, err := runfolder.ReadTable(filepath.Join(dir, "totals.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	rows := tt.MatchRows([]string{"region", "product"}, key)
	if len(rows) != 2 {
		t.Fatalf("totals table has %d rows for %v, want 2 (one per lead time)", len(rows), key)
	}
	method, _ := tt.Str("method", rows[0])
	src, _ := tt.Str("total_source", rows[0])
	if want := "lead-time totals · " + method + " · quantiles: " + src; b.title != want {
		t.Errorf("title %q, want %q", b.title, want)
	}
	// Header, one line per lead time, the note.
	if len(b.lines) != 4 {
		t.Fatalf("section lines %q", b.lines)
	}
	for k, i := range rows {
		f := strings.Fields(b.lines[1+k])
		lead, _ := tt.Int("lead_time", i)
		first, _ := tt.Date("first_period", i)
		last, _ := tt.Date("last_period", i)
		want := []string{fmt.Sprint(lead), first.Format(dateFmt), "…", last.Format(dateFmt),
			fv(tt.Float("total", i)), fv(tt.Float("quantile_50", i)), fv(tt.Float("quantile_95", i))}
		if strings.Join(f, " ") != strings.Join(want, " ") {
			t.Errorf("lead %d: line %q, want fields %q", lead, b.lines[1+k], want)
		}
		if q50, q95 := tt.Float("quantile_50", i), tt.Float("quantile_95", i); !(q95 >= q50) {
			t.Errorf("lead %d: quantile_95 %g below quantile_50 %g", lead, q95, q50)
		}
	}
}
