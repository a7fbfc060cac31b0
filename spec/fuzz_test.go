package spec

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzParse: whatever the bytes, Parse returns a spec or an ErrorList whose
// every error has a message, and never panics. Seeds: the test specs, the
// schema agreement corpus and the bad-input corpus.
func FuzzParse(f *testing.F) {
	f.Add([]byte(minimal))
	for _, glob := range []string{"testdata/*.yaml", "../schemas/testdata/agree/*.yaml", "../pipeline/testdata/corpus/*/spec.yaml", "../examples/*/spec.yaml"} {
		paths, _ := filepath.Glob(glob)
		for _, p := range paths {
			if b, err := os.ReadFile(p); err == nil {
				f.Add(b)
			}
		}
	}
	f.Fuzz(func(t *testing.T, src []byte) {
		s, err := Parse(src, "f.yaml")
		if err != nil {
			var list ErrorList
			if !errors.As(err, &list) || len(list) == 0 {
				t.Fatalf("error is not a non-empty ErrorList: %v", err)
			}
			for _, e := range list {
				if e.Msg == "" || !strings.HasPrefix(e.Error(), "f.yaml") {
					t.Fatalf("bad error %q", e.Error())
				}
			}
			list.Pretty(src) // must not panic
			return
		}
		// A spec that parses has a canonical form that parses the same way.
		if s.Horizon < 1 || len(s.Methods) == 0 || len(s.Sources) == 0 || s.Calendar.SeasonLength < 1 {
			t.Fatalf("accepted an invalid spec: %+v", s)
		}
		if len(s.Hash()) != 64 {
			t.Fatal("bad hash")
		}
	})
}
