package runfolder

import (
	"encoding/json"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

// writeChoices writes a choices table of two series: the first scored, the
// second with no score (NULL).
func writeChoices(t *testing.T, dir string) string {
	t.Helper()
	w, err := NewTableWriter(dir, TableChoices, []string{"sku"}, ChoiceColumns(), nil, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	for i, score := range []float64{0.75, math.NaN()} {
		w.Key([]string{[]string{"A", "B"}[i]})
		w.StrOrNull(0, "naive")
		w.Str(1, "mase")
		w.Float(2, score)
		w.StrOrNull(3, "")
		w.Float(4, math.NaN())
		w.Int32(5, 3)
		w.StrOrNull(6, "")
		w.Float(7, math.NaN())
		w.Float(8, math.NaN())
		w.Str(9, "lowest score")
		if err := w.EndRow(); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return filepath.Join(dir, TableChoices+".parquet")
}

func TestNullScoreReadsAsNaN(t *testing.T) {
	tb, err := ReadTable(writeChoices(t, t.TempDir()))
	if err != nil {
		t.Fatal(err)
	}
	if got := tb.Float(ColScore, 0); got != 0.75 {
		t.Errorf("score of row 0 = %v, want 0.75", got)
	}
	if got := tb.Float(ColScore, 1); !math.IsNaN(got) {
		t.Errorf("NULL score read as %v, want NaN", got)
	}
	if err := tb.Err(); err != nil {
		t.Errorf("unexpected error: %v", err)
	}
}

func TestMissingColumnIsAnErrorNotAPanic(t *testing.T) {
	tb, err := ReadTable(writeChoices(t, t.TempDir()))
	if err != nil {
		t.Fatal(err)
	}
	if got := tb.Float("no_such_column", 1); !math.IsNaN(got) {
		t.Errorf("missing column read as %v, want NaN (NULL)", got)
	}
	if _, ok := tb.Str("also_missing", 0); ok {
		t.Error("missing string column read as present")
	}
	err = tb.Err()
	if err == nil || !strings.Contains(err.Error(), "choices.parquet") || !strings.Contains(err.Error(), `"no_such_column"`) {
		t.Errorf("error %v does not name the table and the first missing column", err)
	}
	// A column read as the wrong type is reported too.
	tb2, _ := ReadTable(tb.Path)
	tb2.Int(ColScore, 0)
	if err := tb2.Err(); err == nil || !strings.Contains(err.Error(), `"score"`) {
		t.Errorf("mistyped read: error %v", err)
	}
}

func TestLeaderboardNullDecodesAsNaN(t *testing.T) {
	var m Manifest
	b := []byte(`{"leaderboard": {"selection_metric": "mase", "entries": [{"method": "naive", "series_scored": 0, "mean_mase": null, "median_mase": 1.5}]}}`)
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	e := m.Leaderboard.Entries[0]
	if !math.IsNaN(float64(e.MeanMASE)) || float64(e.MedianMASE) != 1.5 {
		t.Errorf("mean %v median %v, want NaN and 1.5", e.MeanMASE, e.MedianMASE)
	}
	out, err := json.Marshal(e)
	if err != nil || !strings.Contains(string(out), `"mean_mase":null`) {
		t.Errorf("re-encoded as %s (%v)", out, err)
	}
}
