package pipeline

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"almanac/spec"
)

var updateHashes = flag.Bool("update-hashes", false, "rewrite testdata/table_hashes.golden from the current code")

// goldenHashes is testdata/table_hashes.golden: "<case>/<table> <sha256>"
// per line. The hashes pin every output table of every shipped example and
// of the 2,000-series determinism run, so that a refactoring which should
// not change behaviour is seen to change no byte.
const goldenHashes = "testdata/table_hashes.golden"

var (
	hashMu  = make(chan struct{}, 1)
	gotHash = map[string]string{}
)

// checkTableHashes compares the tables of one case with the pinned hashes
// (or records them, with -update-hashes).
func checkTableHashes(t *testing.T, name string, tables map[string][]byte) {
	t.Helper()
	want := map[string]string{}
	if b, err := os.ReadFile(goldenHashes); err == nil {
		for _, line := range strings.Split(strings.TrimSpace(string(b)), "\n") {
			if f := strings.Fields(line); len(f) == 2 {
				want[f[0]] = f[1]
			}
		}
	} else if !*updateHashes {
		t.Fatal(err)
	}
	var names []string
	for table := range tables {
		names = append(names, table)
	}
	sort.Strings(names)
	hashMu <- struct{}{}
	defer func() { <-hashMu }()
	seen := 0
	for k := range want {
		if strings.HasPrefix(k, name+"/") {
			seen++
		}
	}
	if !*updateHashes && seen != len(tables) {
		t.Errorf("%s: %d tables written, %d pinned", name, len(tables), seen)
	}
	for _, table := range names {
		sum := sha256.Sum256(tables[table])
		got := hex.EncodeToString(sum[:])
		k := name + "/" + table
		if *updateHashes {
			want[k] = got
			continue
		}
		if want[k] != got {
			t.Errorf("%s: sha256 %s, pinned %s", k, got, want[k])
		}
	}
	if *updateHashes {
		var lines []string
		for k, v := range want {
			lines = append(lines, k+" "+v)
		}
		sort.Strings(lines)
		var b bytes.Buffer
		for _, l := range lines {
			fmt.Fprintln(&b, l)
		}
		if err := os.WriteFile(goldenHashes, b.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// TestExampleTableHashes runs every shipped example and checks the bytes of
// each table against the pinned hashes.
func TestExampleTableHashes(t *testing.T) {
	specs, err := filepath.Glob(filepath.Join("..", "examples", "*", "spec.yaml"))
	if err != nil || len(specs) == 0 {
		t.Fatalf("no example specs found (%v)", err)
	}
	for _, p := range specs {
		name := filepath.Base(filepath.Dir(p))
		t.Run(name, func(t *testing.T) {
			s, err := spec.Load(p)
			if err != nil {
				t.Fatal(err)
			}
			out := filepath.Join(t.TempDir(), "run")
			checkTableHashes(t, "example:"+name, runBytes(t, s, out, 2))
		})
	}
}
