package schemas

import (
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"slices"
	"sort"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"
	"gopkg.in/yaml.v3"

	"almanac/spec"
)

// The examples folder is searched for spec.yaml files; the flag lets the test
// run against another folder while examples are being written.
var examplesDir = flag.String("examples", filepath.Join("..", "examples"), "folder searched for example spec.yaml files")

const (
	schemaFile = "spec.v1.schema.json"
	schemaID   = "https://almanac.invalid/schemas/spec.v1.schema.json"
	agreeDir   = "testdata/agree"
)

// Minimum corpus sizes: the corpus may grow, never shrink below these.
const (
	minGood = 12
	minBad  = 25
)

// compileSchema compiles the schema file as draft 2020-12. Compiling also
// validates the schema against the draft's meta-schema.
func compileSchema(t *testing.T) *jsonschema.Schema {
	t.Helper()
	f, err := os.Open(schemaFile)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	doc, err := jsonschema.UnmarshalJSON(f)
	if err != nil {
		t.Fatalf("%s: %v", schemaFile, err)
	}
	c := jsonschema.NewCompiler()
	c.DefaultDraft(jsonschema.Draft2020)
	if err := c.AddResource(schemaID, doc); err != nil {
		t.Fatal(err)
	}
	sch, err := c.Compile(schemaID)
	if err != nil {
		t.Fatalf("compile %s: %v", schemaFile, err)
	}
	return sch
}

// rawSchema is the schema file as plain JSON values, for walking.
func rawSchema(t *testing.T) map[string]any {
	t.Helper()
	f, err := os.Open(schemaFile)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	doc, err := jsonschema.UnmarshalJSON(f)
	if err != nil {
		t.Fatal(err)
	}
	m, ok := doc.(map[string]any)
	if !ok {
		t.Fatalf("%s is not a JSON object", schemaFile)
	}
	return m
}

// yamlToJSON converts the first YAML document of src to the values
// encoding/json would produce. It walks yaml.v3 nodes rather than decoding
// into any so that scalars keep the meaning a YAML 1.2 editor gives them:
// an unquoted 2024-01-01 stays the string it is written as (yaml.v3 would
// make it a time.Time), and merge keys (<<) stay ordinary keys, as they are
// to almanac's decoder.
func yamlToJSON(src []byte) (any, error) {
	var doc yaml.Node
	if err := yaml.Unmarshal(src, &doc); err != nil {
		return nil, err
	}
	if doc.Kind == 0 || len(doc.Content) == 0 {
		return nil, nil
	}
	budget := 100000
	return nodeValue(doc.Content[0], &budget)
}

func nodeValue(n *yaml.Node, budget *int) (any, error) {
	if *budget--; *budget < 0 {
		return nil, errors.New("YAML expands to too many nodes")
	}
	switch n.Kind {
	case yaml.AliasNode:
		return nodeValue(n.Alias, budget)
	case yaml.MappingNode:
		m := make(map[string]any, len(n.Content)/2)
		for i := 0; i+1 < len(n.Content); i += 2 {
			k := n.Content[i]
			for k.Kind == yaml.AliasNode {
				k = k.Alias
			}
			if k.Kind != yaml.ScalarNode {
				return nil, fmt.Errorf("line %d: a mapping key that is not a scalar has no JSON form", k.Line)
			}
			if _, dup := m[k.Value]; dup {
				return nil, fmt.Errorf("line %d: duplicate key %q has no JSON form", k.Line, k.Value)
			}
			v, err := nodeValue(n.Content[i+1], budget)
			if err != nil {
				return nil, err
			}
			m[k.Value] = v
		}
		return m, nil
	case yaml.SequenceNode:
		s := make([]any, 0, len(n.Content))
		for _, c := range n.Content {
			v, err := nodeValue(c, budget)
			if err != nil {
				return nil, err
			}
			s = append(s, v)
		}
		return s, nil
	case yaml.ScalarNode:
		switch n.ShortTag() {
		case "!!null":
			return nil, nil
		case "!!bool", "!!int", "!!float":
			var v any
			if err := n.Decode(&v); err != nil {
				return nil, fmt.Errorf("line %d: %v", n.Line, err)
			}
			return v, nil
		}
		return n.Value, nil // !!str, !!timestamp, !!binary and local tags
	}
	return nil, fmt.Errorf("line %d: unexpected YAML node kind %d", n.Line, n.Kind)
}

// validate runs the schema on YAML source; nil means the schema accepts it.
func validate(t *testing.T, sch *jsonschema.Schema, name string, src []byte) *jsonschema.ValidationError {
	t.Helper()
	v, err := yamlToJSON(src)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	err = sch.Validate(v)
	if err == nil {
		return nil
	}
	var ve *jsonschema.ValidationError
	if !errors.As(err, &ve) {
		t.Fatalf("%s: validating: %v", name, err)
	}
	return ve
}

// leafLocations lists where in the instance the innermost schema errors are.
func leafLocations(e *jsonschema.ValidationError) [][]string {
	if len(e.Causes) == 0 {
		return [][]string{e.InstanceLocation}
	}
	var out [][]string
	for _, c := range e.Causes {
		out = append(out, leafLocations(c)...)
	}
	return out
}

var pathPartRE = regexp.MustCompile(`[^.\[\]]+`)

// decoderPath splits a decoder error path like methods[0].trend into
// [methods 0 trend], the form of a schema error's instance location.
func decoderPath(p string) []string {
	return pathPartRE.FindAllString(p, -1)
}

// related reports whether one location is a prefix of the other.
func related(a, b []string) bool {
	if len(a) > len(b) {
		a, b = b, a
	}
	return slices.Equal(a, b[:len(a)])
}

type verdict struct {
	decoderAccepts, schemaAccepts bool
	why                           string // for a corpus file, what it tests
}

// corpusKinds maps a file suffix to the verdicts its files must get.
var corpusKinds = map[string]verdict{
	".good.yaml": {true, true, "both accept"},
	".bad.yaml":  {false, false, "both reject"},
	// Rules the schema cannot state: the decoder rejects, the schema accepts.
	".crossfield.yaml": {false, true, "decoder rejects, schema accepts"},
	// Text the decoder reads from an unquoted number: the decoder accepts,
	// the schema (which sees a number) rejects.
	".lenient.yaml": {true, false, "decoder accepts, schema rejects"},
}

func corpusKind(name string) (string, bool) {
	for suffix := range corpusKinds {
		if strings.HasSuffix(name, suffix) {
			return suffix, true
		}
	}
	return "", false
}

func TestSchemaHeader(t *testing.T) {
	compileSchema(t)
	s := rawSchema(t)
	if s["$schema"] != "https://json-schema.org/draft/2020-12/schema" {
		t.Errorf("$schema = %v, want draft 2020-12", s["$schema"])
	}
	if s["$id"] != schemaID {
		t.Errorf("$id = %v, want %s", s["$id"], schemaID)
	}
	if title, _ := s["title"].(string); title == "" {
		t.Error("schema has no title")
	}
}

// TestExamples validates every examples/**/spec.yaml with the schema and with
// almanac's loader: a shipped example must satisfy both.
func TestExamples(t *testing.T) {
	sch := compileSchema(t)
	var specs []string
	err := filepath.WalkDir(*examplesDir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if !d.IsDir() && d.Name() == "spec.yaml" {
			specs = append(specs, p)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(specs) == 0 {
		t.Fatalf("no spec.yaml found under %s; the examples are what this schema is checked against", *examplesDir)
	}
	for _, p := range specs {
		src, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := spec.Load(p); err != nil {
			t.Errorf("%s: almanac rejects the example:\n%v", p, err)
		}
		if ve := validate(t, sch, p, src); ve != nil {
			t.Errorf("%s: the schema rejects the example:\n%v", p, ve)
		}
	}
	t.Logf("%d example specs", len(specs))
}

// TestAgreement checks each corpus file against both the decoder and the
// schema. For a bad file it also checks that the schema objects where the
// decoder does: every innermost schema error lies on the path of a decoder
// error (one is a prefix of the other), so a bad file cannot pass by being
// wrong in some other place too.
func TestAgreement(t *testing.T) {
	sch := compileSchema(t)
	files, err := filepath.Glob(filepath.Join(agreeDir, "*.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	counts := map[string]int{}
	for _, f := range files {
		name := filepath.Base(f)
		kind, ok := corpusKind(name)
		if !ok {
			t.Errorf("%s: name ends in none of .good.yaml, .bad.yaml, .crossfield.yaml, .lenient.yaml", f)
			continue
		}
		counts[kind]++
		want := corpusKinds[kind]
		t.Run(name, func(t *testing.T) {
			src, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.HasPrefix(src, []byte("# ")) {
				t.Errorf("%s: start the file with a # comment saying what it tests", f)
			}
			_, derr := spec.Parse(src, name)
			var list spec.ErrorList
			if derr != nil && !errors.As(derr, &list) {
				t.Fatalf("decoder: %v (want an ErrorList)", derr)
			}
			ve := validate(t, sch, name, src)
			if got := derr == nil; got != want.decoderAccepts {
				t.Errorf("decoder accepts = %v, want %v (%s); decoder said: %v", got, want.decoderAccepts, want.why, derr)
			}
			if got := ve == nil; got != want.schemaAccepts {
				t.Errorf("schema accepts = %v, want %v (%s); schema said: %v", got, want.schemaAccepts, want.why, ve)
			}
			if !want.decoderAccepts && derr != nil && len(list) != 1 {
				t.Errorf("decoder reports %d errors; a corpus file should test one thing:\n%v", len(list), derr)
			}
			if kind != ".bad.yaml" || derr == nil || ve == nil {
				return
			}
			for _, loc := range leafLocations(ve) {
				found := false
				for _, e := range list {
					if related(loc, decoderPath(e.Path)) {
						found = true
						break
					}
				}
				if !found {
					t.Errorf("schema objects at /%s, where the decoder does not:\ndecoder: %v\nschema: %v",
						strings.Join(loc, "/"), derr, ve)
				}
			}
		})
	}
	t.Logf("corpus: %d good, %d bad, %d crossfield, %d lenient",
		counts[".good.yaml"], counts[".bad.yaml"], counts[".crossfield.yaml"], counts[".lenient.yaml"])
	if counts[".good.yaml"] < minGood || counts[".bad.yaml"] < minBad {
		t.Errorf("corpus has %d good and %d bad files; want at least %d and %d",
			counts[".good.yaml"], counts[".bad.yaml"], minGood, minBad)
	}
	if counts[".crossfield.yaml"] == 0 {
		t.Error("no .crossfield.yaml files: the documented differences are not being checked")
	}
}

// reservedProbe is the output column names a key column may not take, as
// decode.go lists them. The test probes each against both sides; a name added
// to the decoder and not here goes unchecked, so keep the two lists together.
var reservedProbe = []string{"method", "model", "period", "step", "value", "decomposition", "form",
	"observed", "trend", "seasonal", "remainder", "adjusted", "position", "factor", "count",
	"stage", "severity", "message"}

const probeSpec = `version: 1
name: probe
sources: [data.csv]
columns: {time: date, value: qty, keys: [%s]}
calendar: {frequency: month}
methods: [naive]
horizon: 3
`

func TestReservedKeyColumns(t *testing.T) {
	sch := compileSchema(t)
	check := func(key string, wantAccept bool) {
		t.Helper()
		src := fmt.Sprintf(probeSpec, fmt.Sprintf("%q", key))
		_, derr := spec.Parse([]byte(src), "probe.yaml")
		ve := validate(t, sch, key, []byte(src))
		if (derr == nil) != wantAccept || (ve == nil) != wantAccept {
			t.Errorf("key column %q: decoder accepts %v, schema accepts %v; want both %v\ndecoder: %v\nschema: %v",
				key, derr == nil, ve == nil, wantAccept, derr, ve)
		}
	}
	for _, r := range reservedProbe {
		check(r, false)
		check(strings.ToUpper(r), false)
		check(strings.ToUpper(r[:1])+r[1:], false)
		check(r+"s", true)
		check("x_"+r, true)
	}
	// strings.EqualFold folds ſ (long s) to s.
	check("ſtep", false)
	check("depot", true)
}

// def returns the schema's $defs entry with the given name.
func def(t *testing.T, s map[string]any, name string) map[string]any {
	t.Helper()
	defs, _ := s["$defs"].(map[string]any)
	d, ok := defs[name].(map[string]any)
	if !ok {
		t.Fatalf("schema has no $defs/%s", name)
	}
	return d
}

// resolve follows a local "$ref": "#/$defs/…".
func resolve(t *testing.T, s map[string]any, node map[string]any) map[string]any {
	t.Helper()
	ref, ok := node["$ref"].(string)
	if !ok {
		return node
	}
	name, ok := strings.CutPrefix(ref, "#/$defs/")
	if !ok {
		t.Fatalf("unexpected $ref %q", ref)
	}
	return def(t, s, name)
}

func strs(t *testing.T, v any) []string {
	t.Helper()
	xs, ok := v.([]any)
	if !ok {
		t.Fatalf("%v is not a list", v)
	}
	out := make([]string, len(xs))
	for i, x := range xs {
		out[i], ok = x.(string)
		if !ok {
			t.Fatalf("%v is not a string", x)
		}
	}
	return out
}

func sorted(xs []string) []string {
	out := append([]string(nil), xs...)
	sort.Strings(out)
	return out
}

func walk(m map[string]any, path ...string) map[string]any {
	for _, p := range path {
		m, _ = m[p].(map[string]any)
	}
	return m
}

// TestMethodCatalog checks the schema's methods against spec's catalog: the
// names, each method's options, which methods are seasonal, the docs, the
// option values and the option defaults.
func TestMethodCatalog(t *testing.T) {
	s := rawSchema(t)
	names := spec.MethodNames()
	if got := sorted(strs(t, def(t, s, "methodName")["enum"])); !reflect.DeepEqual(got, names) {
		t.Errorf("schema method names %v, decoder %v", got, names)
	}
	desc, _ := def(t, s, "methodName")["description"].(string)
	var seasonal []string
	for _, n := range names {
		if !strings.Contains(desc, n+" — "+spec.MethodDoc(n)) {
			t.Errorf("methodName description lacks %q", n+" — "+spec.MethodDoc(n))
		}
		if spec.MethodIsSeasonal(n) {
			seasonal = append(seasonal, n)
		}
	}
	if got := sorted(strs(t, def(t, s, "seasonalMethodName")["enum"])); !reflect.DeepEqual(got, seasonal) {
		t.Errorf("schema seasonal methods %v, decoder %v", got, seasonal)
	}

	// Each method has one if/then in methodMapping; its then-schema allows
	// exactly method, label and the method's options.
	covered := map[string]bool{}
	allOf, _ := def(t, s, "methodMapping")["allOf"].([]any)
	for _, a := range allOf {
		branch, _ := a.(map[string]any)
		name, _ := walk(branch, "if", "properties", "method")["const"].(string)
		if name == "" {
			t.Fatalf("methodMapping branch without if.properties.method.const: %v", branch)
		}
		if covered[name] {
			t.Errorf("method %s has two branches", name)
		}
		covered[name] = true
		then := resolve(t, s, walk(branch, "then"))
		if then["additionalProperties"] != false {
			t.Errorf("method %s: additionalProperties is not false", name)
		}
		props := walk(then, "properties")
		var opts []string
		for k := range props {
			if k != "method" && k != "label" {
				opts = append(opts, k)
			}
		}
		if _, ok := props["label"]; !ok {
			t.Errorf("method %s: no label property", name)
		}
		if c, _ := walk(props, "method")["const"].(string); c != name {
			t.Errorf("method %s: then-schema's method const is %q", name, c)
		}
		if got, want := sorted(opts), spec.MethodOptionNames(name); !slices.Equal(got, want) {
			t.Errorf("method %s: schema options %v, decoder %v", name, got, want)
			continue
		}
		checkOptions(t, name, props)
	}
	for _, n := range names {
		if !covered[n] {
			t.Errorf("method %s has no branch in methodMapping", n)
		}
	}
}

// checkOptions compares each option's allowed values and default with the
// decoder's, asking the decoder: the default from a spec that leaves the
// option out, the allowed values from the error a bad value gets.
func checkOptions(t *testing.T, method string, props map[string]any) {
	t.Helper()
	const tmpl = "version: 1\nname: p\nsources: [d.csv]\ncolumns: {time: t, value: v}\ncalendar: {frequency: month}\nhorizon: 1\nmethods: [%s]\n"
	s, err := spec.Parse(fmt.Appendf(nil, tmpl, "{method: "+method+"}"), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	defaults := s.Methods[0].Options
	for opt, v := range props {
		if opt == "method" || opt == "label" {
			continue
		}
		p, _ := v.(map[string]any)
		if p["default"] != defaults[opt] {
			t.Errorf("%s %s: schema default %v, decoder default %v", method, opt, p["default"], defaults[opt])
		}
		if _, ok := p["enum"]; !ok {
			t.Errorf("%s %s: not an enum; extend this test for the option's kind", method, opt)
			continue
		}
		_, err := spec.Parse(fmt.Appendf(nil, tmpl, "{method: "+method+", "+opt+": not-a-value}"), "p.yaml")
		m := regexp.MustCompile(`allowed: ([^(\n]*[^ (\n])`).FindStringSubmatch(fmt.Sprint(err))
		if m == nil {
			t.Errorf("%s %s: no allowed values in %v", method, opt, err)
			continue
		}
		if got, want := strs(t, p["enum"]), strings.Split(m[1], ", "); !reflect.DeepEqual(sorted(got), sorted(want)) {
			t.Errorf("%s %s: schema values %v, decoder %v", method, opt, got, want)
		}
	}
}

// TestEnumsAndDefaults checks the schema's other enumerations and defaults
// against the decoder's exported values.
func TestEnumsAndDefaults(t *testing.T) {
	s := rawSchema(t)
	props := walk(s, "properties")
	source := def(t, s, "source")
	var sourceObj map[string]any
	branches, _ := source["oneOf"].([]any)
	for _, b := range branches {
		if m, _ := b.(map[string]any); m["type"] == "object" {
			sourceObj = m
		}
	}
	enums := []struct {
		where string
		node  map[string]any
		want  []string
	}{
		{"sources[].format", walk(sourceObj, "properties", "format"), spec.Formats},
		{"calendar.frequency", walk(props, "calendar", "properties", "frequency"), spec.Frequencies},
		{"shaping.combine", walk(props, "shaping", "properties", "combine"), spec.CombineRules},
		{"shaping.gaps", walk(props, "shaping", "properties", "gaps"), spec.GapRules},
		{"shaping.end", walk(props, "shaping", "properties", "end"), spec.Ends},
		{"decomposition.form", walk(props, "decomposition", "properties", "form"), spec.Forms},
	}
	for _, e := range enums {
		if e.node == nil {
			t.Errorf("%s: not found in the schema", e.where)
			continue
		}
		if got := strs(t, e.node["enum"]); !reflect.DeepEqual(sorted(got), sorted(e.want)) {
			t.Errorf("%s: schema %v, decoder %v", e.where, got, e.want)
		}
	}

	defaults := []struct {
		where     string
		got, want any
	}{
		{"shaping.combine", walk(props, "shaping", "properties", "combine")["default"], string(spec.DefaultShaping.Combine)},
		{"shaping.gaps", walk(props, "shaping", "properties", "gaps")["default"], string(spec.DefaultShaping.Gaps)},
		{"shaping.end", walk(props, "shaping", "properties", "end")["default"], string(spec.DefaultShaping.End)},
		{"decomposition.form", walk(props, "decomposition", "properties", "form")["default"], string(spec.DefaultDecomposition.Form)},
		{"decomposition.average", walk(props, "decomposition", "properties", "average")["default"], spec.DefaultDecomposition.Average},
		{"shaping", walk(props, "shaping")["default"], map[string]any{"combine": string(spec.DefaultShaping.Combine), "gaps": string(spec.DefaultShaping.Gaps), "end": string(spec.DefaultShaping.End)}},
		{"decomposition", walk(props, "decomposition")["default"], map[string]any{"form": string(spec.DefaultDecomposition.Form), "average": spec.DefaultDecomposition.Average}},
		{"sources[].delimiter", def(t, s, "delimiter")["default"], ","},
		{"columns.keys", walk(props, "columns", "properties", "keys")["default"], []any{}},
	}
	for _, d := range defaults {
		if !reflect.DeepEqual(d.got, d.want) {
			t.Errorf("%s: schema default %#v, decoder %#v", d.where, d.got, d.want)
		}
	}

	// season_length and output defaults depend on other fields, so they are
	// stated in descriptions.
	sl, _ := walk(props, "calendar", "properties", "season_length")["description"].(string)
	for _, f := range spec.Frequencies {
		if w := fmt.Sprintf("%s: %d", f, spec.DefaultSeasonLength[spec.Frequency(f)]); !strings.Contains(sl, w) {
			t.Errorf("season_length description lacks the default %q", w)
		}
	}
	out, _ := walk(props, "output")["description"].(string)
	if !strings.Contains(out, spec.DefaultOutputRoot+"/<name>") {
		t.Errorf("output description lacks the default %s/<name>", spec.DefaultOutputRoot)
	}
	if v, _ := walk(props, "version")["const"].(json.Number); string(v) != fmt.Sprint(spec.FormatVersion) {
		t.Errorf("version const %v, decoder reads %d", walk(props, "version")["const"], spec.FormatVersion)
	}
}

// TestDescriptions checks that editors have something to show: every
// property, every $defs entry and every enumeration has a description.
// Conditions (if, not) are skipped: an editor does not show them.
func TestDescriptions(t *testing.T) {
	s := rawSchema(t)
	var check func(path string, v any)
	check = func(path string, v any) {
		switch v := v.(type) {
		case map[string]any:
			if _, ok := v["enum"]; ok {
				if d, _ := v["description"].(string); d == "" {
					t.Errorf("%s: enum without a description", path)
				}
			}
			for k, sub := range v {
				switch k {
				case "if", "not":
					continue
				case "properties", "$defs":
					subs, _ := sub.(map[string]any)
					for name, p := range subs {
						ps, _ := p.(map[string]any)
						if d, _ := ps["description"].(string); d == "" {
							t.Errorf("%s/%s/%s: no description", path, k, name)
						}
					}
				}
				check(path+"/"+k, sub)
			}
		case []any:
			for i, sub := range v {
				check(fmt.Sprintf("%s/%d", path, i), sub)
			}
		}
	}
	check("#", s)
}
