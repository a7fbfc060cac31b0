package ingest

import (
	"slices"
	"strings"
	"testing"
)

func periodsOf(counts map[int64]int64) map[int64]*periodStat {
	out := map[int64]*periodStat{}
	for p, n := range counts {
		out[p] = &periodStat{rows: n}
	}
	return out
}

func TestFindStray(t *testing.T) {
	bulk := func(lo, hi int64, n int64) map[int64]int64 {
		m := map[int64]int64{}
		for p := lo; p <= hi; p++ {
			m[p] = n
		}
		return m
	}
	cases := []struct {
		name  string
		rows  map[int64]int64
		gap   int64
		stray []int64
	}{
		{"none", bulk(100, 250, 3), 24, nil},
		{"one far after", func() map[int64]int64 { m := bulk(100, 250, 3); m[2000] = 1; return m }(), 24, []int64{2000}},
		{"one far before and one after", func() map[int64]int64 { m := bulk(100, 250, 3); m[10] = 2; m[400] = 1; return m }(), 24, []int64{10, 400}},
		// A season without rows (a shop closed every winter) splits the data
		// into large parts: none of them is stray.
		{"seasonal closure", func() map[int64]int64 {
			m := bulk(0, 30, 5)
			for p, n := range bulk(60, 90, 5) {
				m[p] = n
			}
			return m
		}(), 14, nil},
		// Beyond a gap too short to count, a lone row is kept.
		{"short gap", func() map[int64]int64 { m := bulk(100, 250, 3); m[260] = 1; return m }(), 24, nil},
		// More than 5% of the rows beyond the gap: a real part of the data.
		{"large tail", func() map[int64]int64 { m := bulk(100, 199, 1); m[500] = 6; return m }(), 24, nil},
	}
	for _, c := range cases {
		got := findStray(periodsOf(c.rows), c.gap)
		slices.Sort(got)
		if !slices.Equal(got, c.stray) {
			t.Errorf("%s: stray %v, want %v", c.name, got, c.stray)
		}
	}
}

func TestKeyGuards(t *testing.T) {
	for v, bad := range map[string]bool{"North": false, "Nord Süd": false, "a\x00b": true, "a\tb": true, "x\x7f": true, "\u0085": true, " padded ": false} {
		if got := keyCharError(v) != ""; got != bad {
			t.Errorf("keyCharError(%q) refused %v, want %v", v, got, bad)
		}
	}
	notes := keyVariantNotes([][]string{{"Station"}, {"B"}, {"station "}, {"C"}, {" b"}}, []string{"store"})
	var msgs []string
	for _, n := range notes {
		msgs = append(msgs, n.Message)
	}
	want := []string{`store=" b" and store="B"`, `store="Station" and store="station "`}
	if len(msgs) != 2 || !strings.Contains(msgs[0], want[0]) || !strings.Contains(msgs[1], want[1]) {
		t.Errorf("key variant notes:\n%s", strings.Join(msgs, "\n"))
	}
	if keyVariantNotes([][]string{{"a", "bc"}, {"ab", "c"}}, []string{"x", "y"}) != nil {
		t.Error("keys that differ across columns were taken for spellings of one")
	}
}
