package spec

import (
	"os"
	"strings"
	"testing"
)

// TestReadmeTour parses the spec shown in the README's "A tour of the spec":
// a reader copies it, so it must be a valid spec that uses every section.
func TestReadmeTour(t *testing.T) {
	b, err := os.ReadFile("../README.md")
	if err != nil {
		t.Fatal(err)
	}
	doc := string(b)
	i := strings.Index(doc, "## A tour of the spec")
	if i < 0 {
		t.Fatal("README has no tour section")
	}
	start := strings.Index(doc[i:], "```yaml\n")
	if start < 0 {
		t.Fatal("the tour section has no yaml block")
	}
	body := doc[i+start+len("```yaml\n"):]
	end := strings.Index(body, "```")
	if end < 0 {
		t.Fatal("the tour's yaml block is not closed")
	}
	s, err := Parse([]byte(body[:end]), "README.md")
	if err != nil {
		t.Fatalf("the README's tour does not parse:\n%v", err)
	}
	if s.Name != "garden-supply-weekly" || len(s.Methods) != 7 || len(s.Events) != 1 || s.Report == nil {
		t.Errorf("tour parsed to name %q, %d methods, %d event sources, report %v", s.Name, len(s.Methods), len(s.Events), s.Report != nil)
	}
}
