package report

import (
	"fmt"
	"path/filepath"
	"strings"
	"testing"

	"almanac/pipeline/runfolder"
)

// A run with totals: every charted series' article lists its totals rows,
// with the values of the totals table.
func TestTotalsInReport(t *testing.T) {
	dir := writePanel(t, "totals", []string{"A", "B"}, "backtest: {folds: 2}\nintervals: {levels: [80, 95]}\ntotals: {lead_times: [3, 6], levels: [50, 90]}\n", 1)
	page := writeReport(t, dir, Options{})
	tt, err := runfolder.ReadTable(filepath.Join(dir, "totals.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	if tt.Rows != 4 {
		t.Fatalf("totals table has %d rows, want 2 series × 2 lead times", tt.Rows)
	}
	for i := 0; i < tt.Rows; i++ {
		key, _ := tt.Str("store", i)
		art := articleOf(page, key)
		if !strings.Contains(art, `<table class="totals">`) {
			t.Fatalf("%s: no totals table in its article", key)
		}
		lead, _ := tt.Int("lead_time", i)
		first, _ := tt.Date("first_period", i)
		last, _ := tt.Date("last_period", i)
		row := fmt.Sprintf(`<tr><td class="num">%d</td><td>%s … %s</td><td class="num">%s</td><td class="num">%s</td><td class="num">%s</td></tr>`,
			lead, isoDate(first), isoDate(last), fmtAuto(tt.Float("total", i)), fmtAuto(tt.Float("quantile_50", i)), fmtAuto(tt.Float("quantile_90", i)))
		if !strings.Contains(art, row) {
			t.Errorf("%s: totals table lacks row %s", key, row)
		}
	}
}
