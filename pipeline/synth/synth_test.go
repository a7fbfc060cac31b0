package synth

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Same options, same bytes; another stream, other numbers; the CSV has
// one row per series and period, and about the asked share of series are
// intermittent (mostly zeros).
func TestWriteIsSeededAndShaped(t *testing.T) {
	dir := t.TempDir()
	o := Options{Series: 200, Length: 52, Intermittent: 0.25, RNG: 7}
	a, b, c := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv"), filepath.Join(dir, "c.csv")
	if err := Write(a, o); err != nil {
		t.Fatal(err)
	}
	Write(b, o)
	o2 := o
	o2.RNG = 8
	Write(c, o2)
	ab, _ := os.ReadFile(a)
	bb, _ := os.ReadFile(b)
	cb, _ := os.ReadFile(c)
	if !bytes.Equal(ab, bb) {
		t.Error("same options wrote different bytes")
	}
	if bytes.Equal(ab, cb) {
		t.Error("another stream wrote the same bytes")
	}
	lines := strings.Split(strings.TrimSpace(string(ab)), "\n")
	if lines[0] != "period,region,item,units" || len(lines) != 1+200*52 {
		t.Fatalf("header %q, %d lines", lines[0], len(lines))
	}
	zeros := map[string]int{}
	for _, l := range lines[1:] {
		f := strings.Split(l, ",")
		if f[3] == "0" {
			zeros[f[1]+f[2]]++
		}
	}
	mostlyZero := 0
	for _, z := range zeros {
		if z > 52/4 {
			mostlyZero++
		}
	}
	if mostlyZero < 25 || mostlyZero > 80 {
		t.Errorf("%d of 200 series mostly zero; want about 50", mostlyZero)
	}
	if err := Write(filepath.Join(dir, "p.parquet"), Options{Series: 10}); err != nil {
		t.Fatal(err)
	}
	if err := Write(filepath.Join(dir, "x.csv"), Options{Frequency: "fortnight"}); err == nil {
		t.Error("bad frequency accepted")
	}
}
