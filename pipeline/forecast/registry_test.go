package forecast

import (
	"fmt"
	"slices"
	"testing"

	"almanac/engines"
	"almanac/spec"
)

// The engine registry and the spec's method catalogue name the same
// methods: a method is added with both its engine (engines.Register) and
// its catalogue entry (spec/methods.go), whatever the set is.
func TestRegistryEqualsCatalogue(t *testing.T) {
	eng, cat := engines.Names(), spec.MethodNames()
	if !slices.Equal(eng, cat) {
		for _, n := range eng {
			if !slices.Contains(cat, n) {
				t.Errorf("engine %q is registered but not in the spec catalogue (spec/methods.go)", n)
			}
		}
		for _, n := range cat {
			if !slices.Contains(eng, n) {
				t.Errorf("method %q is in the spec catalogue but no engine registers it", n)
			}
		}
	}
}

// Every catalogue method, with the options the spec decoder fills in by
// default, is accepted by its engine's factory, and the engine answers to
// its name: the catalogue's defaults and the engine's checks agree.
func TestCatalogueDefaultsBuildEngines(t *testing.T) {
	for _, name := range spec.MethodNames() {
		t.Run(name, func(t *testing.T) {
			src := fmt.Sprintf(`version: 1
name: registry
sources: [data.csv]
columns: {time: week, value: units, keys: [item]}
calendar: {frequency: week}
methods: [{method: %s}]
horizon: 4
`, name)
			s, err := spec.Parse([]byte(src), "registry.yaml")
			if err != nil {
				t.Fatalf("the decoder refuses the method with its defaults: %v", err)
			}
			runs, _, err := Compile(s)
			if err != nil {
				t.Fatalf("the engine refuses the catalogue's defaults %v: %v", s.Methods[0].Options, err)
			}
			if got := runs[0].Engine.Name(); got != name {
				t.Errorf("engine for %q says its name is %q", name, got)
			}
		})
	}
}
