package report

import (
	"os"
	"path/filepath"
	"testing"
)

func TestScratchPages(t *testing.T) {
	if os.Getenv("SCRATCH") == "" {
		t.Skip()
	}
	extra := "backtest: {folds: 2}\nintervals: {levels: [80, 95], source: model}\n"
	first := writePanel(t, "sp1", []string{"A", "B", "C"}, extra, 1)
	second := writePanel(t, "sp2", []string{"A", "B", "C"}, extra, 2)
	writeReport(t, second, Options{Previous: first, Picks: 2})
	b, _ := os.ReadFile(filepath.Join(second, FileName))
	os.WriteFile("/tmp/chr/prev.html", b, 0o644)
	single := writePanel(t, "ss", nil, "", 1)
	writeReport(t, single, Options{})
	b, _ = os.ReadFile(filepath.Join(single, FileName))
	os.WriteFile("/tmp/chr/single.html", b, 0o644)
}
