package ingest

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
	"unicode"
	"unicode/utf8"
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

// foldCompare orders strings as if trimmed of surrounding whitespace and
// lower-cased, without allocating.
func foldCompare(a, b string) int {
	a, b = strings.TrimFunc(a, unicode.IsSpace), strings.TrimFunc(b, unicode.IsSpace)
	for a != "" && b != "" {
		ra, na := utf8.DecodeRuneInString(a)
		rb, nb := utf8.DecodeRuneInString(b)
		if la, lb := unicode.ToLower(ra), unicode.ToLower(rb); la != lb {
			if la < lb {
				return -1
			}
			return 1
		}
		a, b = a[na:], b[nb:]
	}
	switch {
	case a != "":
		return 1
	case b != "":
		return -1
	}
	return 0
}

// variantGroupsBySort is how keyVariantNotes found the groups before it
// hashed folded keys: key ids sorted by foldCompare, runs of equal ones.
// It is the reference the faster grouping is checked against.
func variantGroupsBySort(keys [][]string) [][]int32 {
	ids := make([]int32, len(keys))
	for i := range ids {
		ids[i] = int32(i)
	}
	cmp := func(a, b int32) int {
		for i := range keys[a] {
			if c := foldCompare(keys[a][i], keys[b][i]); c != 0 {
				return c
			}
		}
		return 0
	}
	slices.SortFunc(ids, func(a, b int32) int {
		if c := cmp(a, b); c != 0 {
			return c
		}
		return CompareKeys(keys[a], keys[b])
	})
	var groups [][]int32
	for i := 1; i < len(ids); i++ {
		if cmp(ids[i-1], ids[i]) != 0 {
			continue
		}
		if n := len(groups); n > 0 && groups[n-1][len(groups[n-1])-1] == ids[i-1] {
			groups[n-1] = append(groups[n-1], ids[i])
		} else {
			groups = append(groups, []int32{ids[i-1], ids[i]})
		}
	}
	return groups
}

// TestKeyVariantNotesMatchSortedGrouping: on invented keys with case,
// whitespace and non-ASCII variants, the notes are those of the groups
// the sort-based reference finds, in its order.
func TestKeyVariantNotesMatchSortedGrouping(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	words := []string{"north", "NORTH", " North", "süd", "SÜD", "Süd ", "east", "west", "Ärger", "ärger", "ǅ", "ǆ", "Ǆ", "x", "X ", "y"}
	for trial := 0; trial < 50; trial++ {
		seen := map[string]bool{}
		var keys [][]string
		for len(keys) < 40+rng.IntN(200) {
			k := []string{words[rng.IntN(len(words))], words[rng.IntN(len(words))] + fmt.Sprint(rng.IntN(3))}
			if j := strings.Join(k, "\x00"); !seen[j] {
				seen[j] = true
				keys = append(keys, k)
			}
		}
		names := []string{"region", "item"}
		var want []string
		for i, g := range variantGroupsBySort(keys) {
			if i == maxVariantNotes {
				break
			}
			spell := make([]string, len(g))
			for j, id := range g {
				spell[j] = quotedKey(names, keys[id])
			}
			slices.Sort(spell)
			want = append(want, strings.Join(spell, " and "))
		}
		got := keyVariantNotes(keys, names)
		if len(got) != len(want) {
			t.Fatalf("trial %d: %d notes, want %d", trial, len(got), len(want))
		}
		for i := range want {
			if !strings.Contains(got[i].Message, ": "+want[i]+" (") {
				t.Fatalf("trial %d note %d: %s\nwant the spellings %s", trial, i, got[i].Message, want[i])
			}
		}
	}
}
