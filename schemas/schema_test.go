package schemas

import (
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io/fs"
	"maps"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"slices"
	"sort"
	"strconv"
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
	minGood = 32
	minBad  = 135
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
var reservedProbe = append(append([]string{}, spec.OutputColumns...), "lower_80", "upper_95", "quantile_95", "seasonal_365")

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
		check(r+"s", spec.IsOutputColumn(r+"s") == false) // "fold" + "s" is itself reserved
		check("x_"+r, true)
	}
	// strings.EqualFold folds ſ (long s) to s.
	check("ſtep", false)
	check("depot", true)
	check("lower_", true)
	check("upper_bound", true)
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

// resolve follows local "$ref": "#/$defs/…" links. Keywords written beside
// a $ref (a description, a default) take precedence over the target's, as
// they do for an editor.
func resolve(t *testing.T, s map[string]any, node map[string]any) map[string]any {
	t.Helper()
	for hops := 0; ; hops++ {
		ref, ok := node["$ref"].(string)
		if !ok {
			return node
		}
		name, ok := strings.CutPrefix(ref, "#/$defs/")
		if !ok || hops > 10 {
			t.Fatalf("unexpected $ref %q", ref)
		}
		merged := maps.Clone(def(t, s, name))
		for k, v := range node {
			if k != "$ref" {
				merged[k] = v
			}
		}
		if inner, ok := def(t, s, name)["$ref"]; ok {
			merged["$ref"] = inner
		} else {
			delete(merged, "$ref")
		}
		node = merged
	}
}

// at returns the schema node at the given path of keys from the root,
// following $ref at each step.
func at(t *testing.T, s map[string]any, path ...string) map[string]any {
	t.Helper()
	node := s
	for _, p := range path {
		next, ok := resolve(t, s, node)[p].(map[string]any)
		if !ok {
			t.Fatalf("schema has nothing at /%s", strings.Join(path, "/"))
		}
		node = next
	}
	return resolve(t, s, node)
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

// normalize makes schema values (numbers are json.Number) and decoder values
// (int, float64) comparable: every number becomes a float64.
func normalize(v any) any {
	switch v := v.(type) {
	case json.Number:
		f, err := v.Float64()
		if err != nil {
			return v
		}
		return f
	case int:
		return float64(v)
	case map[string]any:
		out := make(map[string]any, len(v))
		for k, x := range v {
			out[k] = normalize(x)
		}
		return out
	case []any:
		out := make([]any, len(v))
		for i, x := range v {
			out[i] = normalize(x)
		}
		return out
	}
	return v
}

func number(v any) (float64, bool) {
	f, ok := normalize(v).(float64)
	return f, ok
}

// specWith is a minimal valid spec with the given top-level lines: a line
// whose key the minimal spec has replaces that line, others are added.
func specWith(lines ...string) string {
	base := []string{"version: 1", "name: p", "sources: [d.csv]", "columns: {time: t, value: v}",
		"calendar: {frequency: month}", "horizon: 1", "methods: [naive]"}
	for _, l := range lines {
		key, _, _ := strings.Cut(l, ":")
		replaced := false
		for i, b := range base {
			if strings.HasPrefix(b, key+":") {
				base[i], replaced = l, true
			}
		}
		if !replaced {
			base = append(base, l)
		}
	}
	return strings.Join(base, "\n") + "\n"
}

// A slot is one place in a spec where a single value is written: a whole
// spec with %s where the value goes, the decoder's path to the value, and
// the schema node that describes it.
type slot struct {
	name string
	tmpl string
	path string
	node map[string]any
	// absent is the spec without the value; get returns the default the
	// decoder fills in there. A nil get means the value is required.
	absent string
	get    func(*spec.Spec) (any, bool)
	// ignore matches decoder errors at path that come from a rule across
	// fields (top against the number of methods), not from the value.
	ignore *regexp.Regexp
}

// facts is what one value may be: the same shape learned from the decoder
// and read from the schema, so the two can be compared.
type facts struct {
	kind     string   // enum, boolean, integer, number, or integer or word
	words    []string // enum and integer or word; sorted
	min, max float64  // integer, number and integer or word; inclusive
	odd      bool     // integers must be odd
}

func (f facts) String() string {
	switch f.kind {
	case "enum":
		return "one of " + strings.Join(f.words, ", ")
	case "boolean":
		return "a boolean"
	}
	s := fmt.Sprintf("%s from %g to %g", f.kind, f.min, f.max)
	if f.odd {
		s += ", odd"
	}
	if len(f.words) > 0 {
		s += ", or one of " + strings.Join(f.words, ", ")
	}
	return s
}

// prober asks the decoder and the schema about values written into slots.
type prober struct {
	t   *testing.T
	sch *jsonschema.Schema
}

// decoderErrs returns the decoder's errors about the value v in the slot.
func (p *prober) decoderErrs(sl slot, v string) []*spec.Error {
	p.t.Helper()
	_, err := spec.Parse(fmt.Appendf(nil, sl.tmpl, v), "probe.yaml")
	var list spec.ErrorList
	if err != nil && !errors.As(err, &list) {
		p.t.Fatalf("%s = %s: decoder: %v (want an ErrorList)", sl.name, v, err)
	}
	var out []*spec.Error
	for _, e := range list {
		if e.Path == sl.path && (sl.ignore == nil || !sl.ignore.MatchString(e.Msg)) {
			out = append(out, e)
		}
	}
	return out
}

func (p *prober) decoderTakes(sl slot, v string) bool { return len(p.decoderErrs(sl, v)) == 0 }

// schemaTakes reports whether the schema raises no error at or inside the
// slot's location.
func (p *prober) schemaTakes(sl slot, v string) bool {
	p.t.Helper()
	ve := validate(p.t, p.sch, sl.name, fmt.Appendf(nil, sl.tmpl, v))
	if ve == nil {
		return true
	}
	loc := decoderPath(sl.path)
	for _, l := range leafLocations(ve) {
		if len(l) >= len(loc) && slices.Equal(l[:len(loc)], loc) {
			return false
		}
	}
	return true
}

// wholeVerdicts reports whether the decoder and the schema accept a whole
// spec.
func (p *prober) wholeVerdicts(src string) (decoder, schema bool, derr error) {
	p.t.Helper()
	_, derr = spec.Parse([]byte(src), "probe.yaml")
	return derr == nil, validate(p.t, p.sch, "probe", []byte(src)) == nil, derr
}

var allowedRE = regexp.MustCompile(`allowed: ([^(\n]*[^ (\n])`)

func itoa(i int) string { return strconv.Itoa(i) }

func ftoa(f float64) string { return strconv.FormatFloat(f, 'g', -1, 64) }

// fkey maps float64s to int64s in the same order, so that a binary search
// over the keys visits every float between two bounds.
func fkey(f float64) int64 {
	b := math.Float64bits(f)
	if b>>63 == 1 {
		return -int64(b &^ (1 << 63))
	}
	return int64(b)
}

func fval(k int64) float64 {
	if k < 0 {
		return -math.Float64frombits(uint64(-k))
	}
	return math.Float64frombits(uint64(k))
}

// learn finds out from the decoder alone what the slot takes: it tries
// text, booleans, integers and fractions, reads the allowed words from the
// error a wrong word gets, and finds the bounds of a number by binary search
// on accept/reject.
func (p *prober) learn(sl slot) (facts, bool) {
	t := p.t
	t.Helper()
	var f facts
	takes := func(v string) bool { return p.decoderTakes(sl, v) }
	junk := p.decoderErrs(sl, "zz-not-a-value")
	if len(junk) == 0 {
		t.Errorf("%s: the decoder takes any text here; this test knows no such option", sl.name)
		return f, false
	}
	if m := allowedRE.FindStringSubmatch(junk[0].Msg); m != nil {
		f.words = sorted(strings.Split(m[1], ", "))
		for _, w := range f.words {
			if !takes(w) {
				t.Errorf("%s: the decoder lists %q as allowed, then rejects it", sl.name, w)
			}
		}
	}
	isBool := takes("true") && takes("false")
	intSeed, numSeed := "", ""
	for _, c := range []string{"0", "1", "2", "3", "5", "7", "9", "12", "50", "80", "99", "100", "1000"} {
		if takes(c) {
			intSeed = c
			break
		}
	}
	for _, c := range []string{"0.5", "0.05", "1.5", "50.5"} {
		if takes(c) {
			numSeed = c
			break
		}
	}
	switch {
	case numSeed != "":
		f.kind = "number"
	case intSeed != "" && f.words != nil:
		f.kind = "integer or word"
	case intSeed != "":
		f.kind = "integer"
	case f.words != nil:
		f.kind = "enum"
	case isBool:
		f.kind = "boolean"
	default:
		t.Errorf("%s: the decoder takes no word, boolean or number this test tried", sl.name)
		return f, false
	}
	switch f.kind {
	case "number":
		seed, _ := strconv.ParseFloat(numSeed, 64)
		ftakes := func(k int64) bool { return takes(ftoa(fval(k))) }
		// The keys span more than an int64 can hold; halve the distance
		// in uint64.
		midpoint := func(lo, hi int64) int64 { return lo + int64((uint64(hi)-uint64(lo))/2) }
		lo, hi := fkey(-1e300), fkey(seed)
		for uint64(hi)-uint64(lo) > 1 {
			if mid := midpoint(lo, hi); ftakes(mid) {
				hi = mid
			} else {
				lo = mid
			}
		}
		f.min = fval(hi)
		lo, hi = fkey(seed), fkey(1e300)
		for uint64(hi)-uint64(lo) > 1 {
			if mid := midpoint(lo, hi); ftakes(mid) {
				lo = mid
			} else {
				hi = mid
			}
		}
		f.max = fval(lo)
		for _, x := range []float64{f.min, f.max, (f.min + f.max) / 2, f.min + (f.max-f.min)/3} {
			if !takes(ftoa(x)) {
				t.Errorf("%s: the decoder takes %g and %g but not %g between them", sl.name, f.min, f.max, x)
			}
		}
	case "integer", "integer or word":
		seed, _ := strconv.Atoi(intSeed)
		itakes := func(i int) bool { return takes(itoa(i)) }
		// The decoder reads integers of 32 bits, so the search has bounds.
		lo, hi := math.MinInt32-2, seed
		for hi-lo > 1 {
			if mid := lo + (hi-lo)/2; itakes(mid) || itakes(mid+1) {
				hi = mid
			} else {
				lo = mid
			}
		}
		low := hi
		if !itakes(low) {
			low++
		}
		lo, hi = seed, math.MaxInt32+2
		for hi-lo > 1 {
			if mid := lo + (hi-lo)/2; itakes(mid) || itakes(mid-1) {
				lo = mid
			} else {
				hi = mid
			}
		}
		high := lo
		if !itakes(high) {
			high--
		}
		f.min, f.max = float64(low), float64(high)
		if low < high && !itakes(low+1) {
			f.odd = true
			if low%2 == 0 {
				t.Errorf("%s: the decoder takes %d but not %d: a rule this test does not know", sl.name, low, low+1)
			}
		}
		mid := low + (high-low)/2
		for _, x := range []int{low, low + 1, low + 2, low + 3, low + 4, mid, mid + 1, high - 1, high} {
			if x < low || x > high {
				continue
			}
			if want := !f.odd || x%2 != 0; itakes(x) != want {
				t.Errorf("%s: the decoder takes %d: %v, but its range is %v", sl.name, x, !want, f)
			}
		}
	}
	return f, true
}

// schemaFacts reads the same facts from a schema node.
func schemaFacts(t *testing.T, s map[string]any, node map[string]any) (facts, error) {
	t.Helper()
	var f facts
	if e, ok := node["enum"]; ok {
		f.kind, f.words = "enum", sorted(strs(t, e))
		return f, nil
	}
	for _, key := range []string{"oneOf", "anyOf"} {
		branches, ok := node[key].([]any)
		if !ok {
			continue
		}
		var ints, words []facts
		var scalar []any
		for _, b := range branches {
			// A list branch (season_length: [7, 365]) is probed by
			// TestSeasonLengthList; the facts are those of the scalars.
			if bm, _ := b.(map[string]any); resolve(t, s, bm)["type"] != "array" {
				scalar = append(scalar, b)
			}
		}
		if len(scalar) == 1 && len(branches) == 2 {
			return schemaFacts(t, s, resolve(t, s, scalar[0].(map[string]any)))
		}
		for _, b := range branches {
			bm, _ := b.(map[string]any)
			bf, err := schemaFacts(t, s, resolve(t, s, bm))
			if err != nil {
				return f, err
			}
			switch bf.kind {
			case "integer":
				ints = append(ints, bf)
			case "enum":
				words = append(words, bf)
			}
		}
		if len(ints) != 1 || len(words) != 1 || len(branches) != 2 {
			return f, fmt.Errorf("%s is not one integer branch and one enum branch", key)
		}
		f = ints[0]
		f.kind, f.words = "integer or word", words[0].words
		return f, nil
	}
	switch node["type"] {
	case "boolean":
		f.kind = "boolean"
	case "integer", "number":
		f.kind = node["type"].(string)
		var ok1, ok2 bool
		f.min, ok1 = number(node["minimum"])
		f.max, ok2 = number(node["maximum"])
		if !ok1 || !ok2 {
			return f, errors.New("a number without minimum and maximum (the decoder's numbers always have bounds)")
		}
		if n, ok := node["not"].(map[string]any); ok {
			m, _ := number(n["multipleOf"])
			f.odd = len(n) == 1 && m == 2
		}
		if f.odd {
			// The bounds that matter are the odd numbers just inside.
			if math.Mod(f.min, 2) == 0 {
				f.min++
			}
			if math.Mod(f.max, 2) == 0 {
				f.max--
			}
		}
	default:
		return f, errors.New("no enum, oneOf, anyOf or type this test knows")
	}
	return f, nil
}

// renderDefault is how a default is written in a description.
func renderDefault(v any) []string {
	switch v := v.(type) {
	case string:
		return []string{v}
	case bool:
		return []string{strconv.FormatBool(v)}
	case int:
		plain := strconv.Itoa(v)
		var grouped []byte
		for i, c := range []byte(plain) {
			if i > 0 && (len(plain)-i)%3 == 0 {
				grouped = append(grouped, ',')
			}
			grouped = append(grouped, c)
		}
		return []string{plain, string(grouped)}
	case float64:
		return []string{ftoa(v)}
	}
	return []string{fmt.Sprint(v)}
}

// compare checks one slot: the facts learned from the decoder against the
// schema's, the default, the description, and then both verdicts on a set of
// probe values made from both sides' bounds and words.
func (p *prober) compare(s map[string]any, sl slot) (facts, bool) {
	t := p.t
	t.Helper()
	df, ok := p.learn(sl)
	if !ok {
		return df, false
	}
	sf, err := schemaFacts(t, s, sl.node)
	if err != nil {
		t.Errorf("%s: schema: %v", sl.name, err)
		return df, false
	}
	if fmt.Sprint(df) != fmt.Sprint(sf) || !slices.Equal(df.words, sf.words) {
		t.Errorf("%s: decoder takes %v; schema says %v", sl.name, df, sf)
	}

	desc, _ := sl.node["description"].(string)
	got, schemaHas := sl.node["default"]
	switch {
	case sl.get == nil:
		if schemaHas {
			t.Errorf("%s: the decoder requires it, but the schema gives the default %v", sl.name, got)
		}
	default:
		ps, err := spec.Parse([]byte(sl.absent), "absent.yaml")
		if err != nil {
			t.Fatalf("%s: the spec without it: %v", sl.name, err)
		}
		want, has := sl.get(ps)
		switch {
		case has && !schemaHas:
			t.Errorf("%s: decoder default %v, the schema gives none", sl.name, want)
		case !has && schemaHas:
			t.Errorf("%s: the schema gives the default %v, but the decoder works it out (leave default out, say how in the description)", sl.name, got)
		case has && !reflect.DeepEqual(normalize(got), normalize(want)):
			t.Errorf("%s: schema default %#v, decoder default %#v", sl.name, got, want)
		}
		if has {
			mentioned := false
			for _, r := range renderDefault(want) {
				mentioned = mentioned || strings.Contains(desc, r)
			}
			if !strings.Contains(strings.ToLower(desc), "default") || !mentioned {
				t.Errorf("%s: the description does not say that the default is %v: %q", sl.name, want, desc)
			}
		} else if !strings.Contains(desc, "Default") {
			t.Errorf("%s: no default; the description should say (\"Default: …\") how it is worked out: %q", sl.name, desc)
		}
	}

	values := []string{"zz-not-a-value", "true", "false", "null", "[1]", "{a: 1}", `""`, "0.5", "-0.5",
		"0", "1", "-1", "2147483647", "2147483648", "-2147483649"}
	for _, w := range append(slices.Clone(df.words), sf.words...) {
		values = append(values, w, strings.ToUpper(w[:1])+w[1:], w+"s")
	}
	for _, f := range []facts{df, sf} {
		for _, b := range []float64{f.min, f.max} {
			switch f.kind {
			case "number":
				values = append(values, ftoa(b), ftoa(math.Nextafter(b, math.Inf(-1))), ftoa(math.Nextafter(b, math.Inf(1))))
			case "integer", "integer or word":
				for d := -2; d <= 2; d++ {
					values = append(values, itoa(int(b)+d))
				}
			}
		}
	}
	slices.Sort(values)
	for _, v := range slices.Compact(values) {
		if d, sc := p.decoderTakes(sl, v), p.schemaTakes(sl, v); d != sc {
			t.Errorf("%s = %s: decoder accepts %v, schema accepts %v", sl.name, v, d, sc)
		}
	}
	return df, true
}

// samples are values the facts allow: the words, both booleans, the bounds
// and a value just inside them.
func samples(f facts) []string {
	out := slices.Clone(f.words)
	switch f.kind {
	case "boolean":
		out = append(out, "true", "false")
	case "number":
		out = append(out, ftoa(f.min), ftoa(f.max), ftoa((f.min+f.max)/2))
	case "integer", "integer or word":
		step := 1
		if f.odd {
			step = 2
		}
		lo, hi := int(f.min), int(f.max)
		out = append(out, itoa(lo), itoa(min(lo+step, hi)), itoa(hi))
	}
	slices.Sort(out)
	return slices.Compact(out)
}

// crossOptions writes every allowed value of each option alone, then every
// pair of options with every pair of such values, into the mapping, and
// compares the two verdicts on the whole spec. This finds the rules between
// options (stl's seasonal_degree and seasonal_window, say) on the decoder's
// side and checks the schema states them. tmpl has %s where ", key: value"
// pairs go.
func (p *prober) crossOptions(what, tmpl string, opts map[string]facts) {
	t := p.t
	t.Helper()
	names := slices.Sorted(maps.Keys(opts))
	tried, refused := 0, 0
	check := func(kv string) {
		tried++
		src := fmt.Sprintf(tmpl, kv)
		d, sc, derr := p.wholeVerdicts(src)
		if !d {
			refused++
		}
		if d != sc {
			t.Errorf("%s with%s: decoder accepts %v, schema accepts %v\ndecoder: %v", what, kv, d, sc, derr)
		}
	}
	for i, a := range names {
		for _, va := range samples(opts[a]) {
			check(fmt.Sprintf(", %s: %s", a, va))
			for _, b := range names[i+1:] {
				for _, vb := range samples(opts[b]) {
					check(fmt.Sprintf(", %s: %s, %s: %s", a, va, b, vb))
				}
			}
		}
	}
	t.Logf("%s: %d combinations of allowed option values, %d refused by a rule across options", what, tried, refused)
}

// TestMethodCatalog checks the schema's methods against spec's catalog: the
// names, which methods are seasonal, the docs, each method's options, and
// for every option its type, words, range, oddness and default (learned from
// the decoder by probing), and the rules across options.
func TestMethodCatalog(t *testing.T) {
	sch, s := compileSchema(t), rawSchema(t)
	names := spec.MethodNames()
	if got := sorted(strs(t, def(t, s, "methodName")["enum"])); !reflect.DeepEqual(got, names) {
		t.Errorf("schema method names %v, decoder %v", got, names)
	}
	desc, _ := def(t, s, "methodName")["description"].(string)
	mapDesc, _ := def(t, s, "methodMapping")["description"].(string)
	var seasonal []string
	for _, n := range names {
		if !strings.Contains(desc, n+" — "+spec.MethodDoc(n)) {
			t.Errorf("methodName description lacks %q", n+" — "+spec.MethodDoc(n))
		}
		if spec.MethodIsSeasonal(n) {
			seasonal = append(seasonal, n)
		}
		if opts := spec.MethodOptionNames(n); len(opts) > 0 && !strings.Contains(mapDesc, n+": "+strings.Join(opts, ", ")) {
			t.Errorf("methodMapping description lacks %q", n+": "+strings.Join(opts, ", "))
		}
	}
	if got := sorted(strs(t, def(t, s, "seasonalMethodName")["enum"])); !reflect.DeepEqual(got, seasonal) {
		t.Errorf("schema seasonal methods %v, decoder %v", got, seasonal)
	}
	list := strings.Join(seasonal, ", ")
	for where, d := range map[string]any{
		"seasonalMethodName":     def(t, s, "seasonalMethodName")["description"],
		"methodName":             desc,
		"calendar.season_length": at(t, s, "properties", "calendar", "properties", "season_length")["description"],
	} {
		if d, _ := d.(string); !strings.Contains(d, list) {
			t.Errorf("%s description does not list the seasonal methods (%s)", where, list)
		}
	}

	// Each method has one if/then in methodMapping; its then-schema allows
	// exactly method, label and the method's options.
	p := &prober{t: t, sch: sch}
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
		if _, ok := props["label"]; !ok {
			t.Errorf("method %s: no label property", name)
		}
		if c, _ := walk(props, "method")["const"].(string); c != name {
			t.Errorf("method %s: then-schema's method const is %q", name, c)
		}
		var opts []string
		for k := range props {
			if k != "method" && k != "label" {
				opts = append(opts, k)
			}
		}
		if got, want := sorted(opts), spec.MethodOptionNames(name); !slices.Equal(got, want) {
			t.Errorf("method %s: schema options %v, decoder %v", name, got, want)
			continue
		}
		learned := map[string]facts{}
		for _, opt := range opts {
			t.Run(name+"."+opt, func(t *testing.T) {
				p := &prober{t: t, sch: sch}
				sl := slot{
					name:   fmt.Sprintf("methods[0].%s (%s)", opt, name),
					tmpl:   specWith("methods: [{method: " + name + ", " + opt + ": %s}]"),
					path:   "methods[0]." + opt,
					node:   resolve(t, s, walk(props, opt)),
					absent: specWith("methods: [{method: " + name + "}]"),
					get: func(s *spec.Spec) (any, bool) {
						v, ok := s.Methods[0].Options[opt]
						return v, ok
					},
				}
				if f, ok := p.compare(s, sl); ok {
					learned[opt] = f
				}
			})
		}
		if len(learned) == len(opts) && len(opts) > 0 {
			p.crossOptions("method "+name, specWith("methods: [{method: "+name+"%s}]"), learned)
		}
	}
	for _, n := range names {
		if !covered[n] {
			t.Errorf("method %s has no branch in methodMapping", n)
		}
	}
}

// TestDecomposition checks the decomposition section: its methods, its
// default, and for each method the options it takes there (the method's
// options less those that only shape a forecast, found by asking the
// decoder), each compared as in TestMethodCatalog.
func TestDecomposition(t *testing.T) {
	sch, s := compileSchema(t), rawSchema(t)
	p := &prober{t: t, sch: sch}
	dec := at(t, s, "properties", "decomposition")
	methods := spec.DecompositionMethods()
	if got := sorted(strs(t, walk(dec, "properties", "method")["enum"])); !slices.Equal(got, methods) {
		t.Errorf("decomposition methods: schema %v, decoder %v", got, methods)
	}
	for _, m := range methods {
		if !slices.Contains(spec.MethodNames(), m) {
			t.Errorf("decomposition method %s is not a method", m)
		}
	}
	want := map[string]any{"method": spec.DefaultDecomposition.Method}
	maps.Copy(want, spec.DefaultDecomposition.Options)
	if got := dec["default"]; !reflect.DeepEqual(normalize(got), normalize(want)) {
		t.Errorf("decomposition default: schema %v, decoder %v", got, want)
	}

	branches := map[string]map[string]any{}
	allOf, _ := dec["allOf"].([]any)
	for _, a := range allOf {
		b, _ := a.(map[string]any)
		name, _ := walk(b, "if", "properties", "method")["const"].(string)
		if _, dup := branches[name]; dup || name == "" {
			t.Errorf("decomposition: branch %q is missing its method const or given twice", name)
		}
		branches[name] = b
		req, _ := walk(b, "if")["required"].([]any)
		// The default method's branch must also apply when method is left
		// out; every other branch only when it is named.
		if got, want := slices.Contains(req, any("method")), name != spec.DefaultDecomposition.Method; got != want {
			t.Errorf("decomposition branch %s: if requires method = %v, want %v", name, got, want)
		}
	}
	for _, m := range methods {
		b, ok := branches[m]
		if !ok {
			t.Errorf("decomposition method %s has no branch", m)
			continue
		}
		then := resolve(t, s, walk(b, "then"))
		if then["additionalProperties"] != false {
			t.Errorf("decomposition %s: additionalProperties is not false", m)
		}
		props := walk(then, "properties")
		if c, _ := walk(props, "method")["const"].(string); c != m {
			t.Errorf("decomposition %s: method const is %q", m, c)
		}
		var schemaOpts, decoderOpts []string
		for k := range props {
			if k != "method" {
				schemaOpts = append(schemaOpts, k)
			}
		}
		for _, o := range spec.MethodOptionNames(m) {
			sl := slot{tmpl: specWith("decomposition: {method: " + m + ", " + o + ": %s}"), path: "decomposition." + o}
			errs := p.decoderErrs(sl, "zz-not-a-value")
			if len(errs) == 0 || !strings.HasPrefix(errs[0].Msg, "unknown key") {
				decoderOpts = append(decoderOpts, o)
			}
		}
		if got := sorted(schemaOpts); !slices.Equal(got, decoderOpts) {
			t.Errorf("decomposition %s: schema options %v, decoder %v", m, got, decoderOpts)
			continue
		}
		learned := map[string]facts{}
		for _, opt := range decoderOpts {
			t.Run(m+"."+opt, func(t *testing.T) {
				p := &prober{t: t, sch: sch}
				sl := slot{
					name:   fmt.Sprintf("decomposition.%s (%s)", opt, m),
					tmpl:   specWith("decomposition: {method: " + m + ", " + opt + ": %s}"),
					path:   "decomposition." + opt,
					node:   resolve(t, s, walk(props, opt)),
					absent: specWith("decomposition: {method: " + m + "}"),
					get: func(s *spec.Spec) (any, bool) {
						v, ok := s.Decomposition.Options[opt]
						return v, ok
					},
				}
				if f, ok := p.compare(s, sl); ok {
					learned[opt] = f
				}
			})
		}
		if len(learned) == len(decoderOpts) && len(learned) > 0 {
			p.crossOptions("decomposition "+m, specWith("decomposition: {method: "+m+"%s}"), learned)
		}
	}
}

// TestSections compares every other single-value field with a rule of its
// own (a range or an enumeration) in the same way: learned from the decoder,
// read from the schema, default and probe verdicts.
func TestSections(t *testing.T) {
	sch, s := compileSchema(t), rawSchema(t)
	const bt = "backtest: {folds: 2}"
	three := "methods: [naive, drift, mean]"
	slots := []struct {
		path   string
		lines  []string // with %s where the value goes
		absent []string // nil: required
		get    func(*spec.Spec) (any, bool)
		ignore string
	}{
		{"calendar.frequency", []string{"calendar: {frequency: %s}"}, nil, nil, ""},
		{"calendar.season_length", []string{"calendar: {frequency: month, season_length: %s}"}, []string{}, nil, ""},
		{"horizon", []string{"horizon: %s"}, nil, nil, ""},
		{"shaping.combine", []string{"shaping: {combine: %s}"}, []string{},
			func(s *spec.Spec) (any, bool) { return string(s.Shaping.Combine), true }, ""},
		{"shaping.gaps", []string{"shaping: {gaps: %s}"}, []string{},
			func(s *spec.Spec) (any, bool) { return string(s.Shaping.Gaps), true }, ""},
		{"shaping.end", []string{"shaping: {end: %s}"}, []string{},
			func(s *spec.Spec) (any, bool) { return string(s.Shaping.End), true }, ""},
		{"shaping.stray_dates", []string{"shaping: {stray_dates: %s}"}, []string{},
			func(s *spec.Spec) (any, bool) { return string(s.Shaping.StrayDates), true }, ""},
		{"shaping.partial_period", []string{"shaping: {partial_period: %s}"}, []string{},
			func(s *spec.Spec) (any, bool) { return string(s.Shaping.Partial), true }, ""},
		{"shaping.key_variants", []string{"shaping: {key_variants: %s}"}, []string{},
			func(s *spec.Spec) (any, bool) { return string(s.Shaping.KeyVariants), true }, ""},
		{"problems.detail", []string{"problems: {detail: %s}"}, []string{"problems: {}"},
			func(s *spec.Spec) (any, bool) { return string(s.Problems), true }, ""},
		{"decomposition.method", []string{"decomposition: {method: %s}"}, []string{"decomposition: {}"},
			func(s *spec.Spec) (any, bool) { return s.Decomposition.Method, true }, ""},
		{"limits.max_series", []string{"limits: {max_series: %s}"}, []string{"limits: {}"},
			func(s *spec.Spec) (any, bool) { return s.Limits.MaxSeries, true }, ""},
		{"limits.max_periods", []string{"limits: {max_periods: %s}"}, []string{"limits: {}"},
			func(s *spec.Spec) (any, bool) { return s.Limits.MaxPeriods, true }, ""},
		{"backtest.folds", []string{"backtest: {folds: %s}"}, nil, nil, ""},
		{"backtest.step", []string{"backtest: {folds: 2, step: %s}"}, []string{bt}, nil, ""},
		{"backtest.horizon", []string{"backtest: {folds: 2, horizon: %s}"}, []string{bt}, nil, ""},
		{"backtest.window", []string{"backtest: {folds: 2, window: %s}"}, []string{bt},
			func(s *spec.Spec) (any, bool) { return string(s.Backtest.Window), true }, ""},
		{"backtest.min_train", []string{"backtest: {folds: 2, min_train: %s}"}, []string{bt}, nil, ""},
		{"backtest.window_length", []string{"backtest: {folds: 2, window: sliding, window_length: %s}"},
			[]string{"backtest: {folds: 2, window: sliding}"}, nil, ""},
		{"selection.metric", []string{bt, "selection: {metric: %s}"}, []string{bt, "selection: {}"},
			func(s *spec.Spec) (any, bool) { return s.Selection.Metric, true }, ""},
		{"selection.combine.kind", []string{three, bt, "selection: {combine: {kind: %s}}"}, nil, nil, ""},
		{"selection.combine.top", []string{three, bt, "selection: {combine: {kind: mean, top: %s}}"},
			[]string{three, bt, "selection: {combine: {kind: mean}}"},
			func(s *spec.Spec) (any, bool) { return s.Selection.Combine.Top, true }, "but the spec names only"},
		{"intervals.levels[0]", []string{bt, "intervals: {levels: [%s]}"}, nil, nil, ""},
		{"intervals.source", []string{bt, "intervals: {levels: [80], source: %s}"}, []string{bt, "intervals: {levels: [80]}"},
			func(s *spec.Spec) (any, bool) { return s.Intervals.Source, true }, ""},
		{"intervals.all_methods", []string{bt, "intervals: {levels: [80], all_methods: %s}"}, []string{bt, "intervals: {levels: [80]}"},
			func(s *spec.Spec) (any, bool) { return s.Intervals.AllMethods, true }, ""},
	}
	for _, c := range slots {
		t.Run(c.path, func(t *testing.T) {
			p := &prober{t: t, sch: sch}
			var keys []string
			for _, part := range decoderPath(c.path) {
				if _, err := strconv.Atoi(part); err == nil {
					keys = append(keys, "items")
				} else {
					keys = append(keys, "properties", part)
				}
			}
			sl := slot{name: c.path, tmpl: specWith(c.lines...), path: c.path, node: at(t, s, keys...)}
			if c.absent != nil {
				sl.absent = specWith(c.absent...)
				sl.get = c.get
				if sl.get == nil {
					sl.get = func(*spec.Spec) (any, bool) { return nil, false }
				}
			}
			if c.ignore != "" {
				sl.ignore = regexp.MustCompile(regexp.QuoteMeta(c.ignore))
			}
			p.compare(s, sl)
		})
	}
}

// TestSeasonLengthList checks that the decoder and the schema agree on
// season_length written as a list of cycles.
func TestSeasonLengthList(t *testing.T) {
	p := &prober{t: t, sch: compileSchema(t)}
	tmpl := specWith("calendar: {frequency: day, season_length: %s}")
	accepted := 0
	for _, v := range []string{"[7, 365]", "[365, 7]", "[2, 1000]", "[7, 30, 365]", "[7]", "[]", "[7, 7]", "[1, 7]",
		"[0, 7]", "[7, 1001]", "[7, x]", "[7, 7.5]", "[7, [1]]", "[7, null]", "[7, true]"} {
		d, sc, derr := p.wholeVerdicts(fmt.Sprintf(tmpl, v))
		if d != sc {
			t.Errorf("season_length = %s: decoder accepts %v (%v), schema accepts %v", v, d, derr, sc)
		}
		if d {
			accepted++
		}
	}
	if accepted != 4 {
		t.Errorf("the decoder accepts %d of the lists; want the 4 valid ones", accepted)
	}
}

// TestEnumsAndDefaults checks the schema's enumerations and defaults against
// the decoder's exported values.
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
		{"shaping.stray_dates", walk(props, "shaping", "properties", "stray_dates"), spec.StrayRules},
		{"shaping.partial_period", walk(props, "shaping", "properties", "partial_period"), spec.PartialRules},
		{"shaping.key_variants", walk(props, "shaping", "properties", "key_variants"), spec.KeyVariantRules},
		{"problems.detail", walk(props, "problems", "properties", "detail"), spec.ProblemDetails},
		{"decomposition.method", walk(props, "decomposition", "properties", "method"), spec.DecompositionMethods()},
		{"backtest.window", walk(props, "backtest", "properties", "window"), spec.Windows},
		{"selection.metric", walk(props, "selection", "properties", "metric"), spec.Metrics},
		{"intervals.source", walk(props, "intervals", "properties", "source"), spec.IntervalSources},
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
	route := walk(props, "selection", "properties", "route")
	if got := slices.Sorted(maps.Keys(walk(route, "properties"))); !slices.Equal(got, sorted(spec.DemandClasses)) {
		t.Errorf("selection.route: schema classes %v, decoder %v", got, spec.DemandClasses)
	}
	if route["additionalProperties"] != false {
		t.Error("selection.route: additionalProperties is not false; the decoder rejects other classes")
	}
	if d, _ := route["description"].(string); !strings.Contains(d, strings.Join(spec.DemandClasses, ", ")) {
		t.Errorf("selection.route description does not list the demand classes %v", spec.DemandClasses)
	}

	defaults := []struct {
		where     string
		got, want any
	}{
		{"shaping", walk(props, "shaping")["default"], map[string]any{"combine": string(spec.DefaultShaping.Combine), "gaps": string(spec.DefaultShaping.Gaps), "end": string(spec.DefaultShaping.End),
			"stray_dates": string(spec.DefaultShaping.StrayDates), "partial_period": string(spec.DefaultShaping.Partial), "key_variants": string(spec.DefaultShaping.KeyVariants)}},
		{"problems", walk(props, "problems")["default"], map[string]any{"detail": string(spec.DetailSummary)}},
		{"limits", walk(props, "limits")["default"], map[string]any{"max_series": spec.DefaultLimits.MaxSeries, "max_periods": spec.DefaultLimits.MaxPeriods}},
		{"selection", walk(props, "selection")["default"], map[string]any{"metric": spec.DefaultSelection.Metric}},
		{"selection.combine.label", walk(props, "selection", "properties", "combine", "properties", "label")["default"], "combination"},
		{"sources[].delimiter", def(t, s, "delimiter")["default"], ","},
		{"columns.keys", walk(props, "columns", "properties", "keys")["default"], []any{}},
	}
	for _, d := range defaults {
		if !reflect.DeepEqual(normalize(d.got), normalize(d.want)) {
			t.Errorf("%s: schema default %#v, decoder %#v", d.where, d.got, d.want)
		}
	}
	// The combination label's default, read from the decoder.
	ps, err := spec.Parse([]byte(specWith("methods: [naive, drift]", "backtest: {folds: 2}", "selection: {combine: {kind: mean, top: 2}}")), "p.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if ps.Selection.Combine.Label != "combination" {
		t.Errorf("decoder's combination label default is %q; update the schema and this test", ps.Selection.Combine.Label)
	}

	// Defaults that depend on other fields are stated in descriptions.
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
// property, every $defs entry and every enumeration has a description (a
// property that is only a $ref may take its target's). Conditions (if, not)
// are skipped: an editor does not show them.
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
						ps, ok := p.(map[string]any)
						if !ok {
							t.Errorf("%s/%s/%s: not a schema object", path, k, name)
							continue
						}
						if d, _ := resolve(t, s, ps)["description"].(string); d == "" {
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

// keyPaths adds to seen the dotted path of every mapping key in v, list
// indexes left out (sources.path for sources[0].path).
func keyPaths(v any, prefix string, seen map[string]bool) {
	switch v := v.(type) {
	case map[string]any:
		for k, x := range v {
			seen[prefix+k] = true
			keyPaths(x, prefix+k+".", seen)
		}
	case []any:
		for _, x := range v {
			keyPaths(x, prefix, seen)
		}
	}
}

// TestCorpusCoverage checks that the good corpus files, between them, use
// every method, every option of every method (as a method and, where it
// applies, in the decomposition), every decomposition method, and every key
// of every section, so that each appears at least once in a spec both sides
// accept.
func TestCorpusCoverage(t *testing.T) {
	s := rawSchema(t)
	files, err := filepath.Glob(filepath.Join(agreeDir, "*.good.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, f := range files {
		src, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		v, err := yamlToJSON(src)
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		root, _ := v.(map[string]any)
		keyPaths(root, "", seen)
		ms, _ := root["methods"].([]any)
		for _, m := range ms {
			switch m := m.(type) {
			case string:
				seen["method "+m] = true
			case map[string]any:
				name, _ := m["method"].(string)
				seen["method "+name] = true
				for k := range m {
					seen["method "+name+"."+k] = true
				}
			}
		}
		if d, ok := root["decomposition"].(map[string]any); ok {
			name, _ := d["method"].(string)
			if name == "" {
				name = spec.DefaultDecomposition.Method
			}
			seen["decomposition "+name] = true
			for k := range d {
				seen["decomposition "+name+"."+k] = true
			}
		}
	}
	var want []string
	for _, m := range spec.MethodNames() {
		want = append(want, "method "+m)
		for _, o := range spec.MethodOptionNames(m) {
			want = append(want, "method "+m+"."+o)
		}
	}
	for _, m := range spec.DecompositionMethods() {
		want = append(want, "decomposition "+m)
		for k := range walk(resolve(t, s, walk(s, "$defs", "decomposition_"+m)), "properties") {
			want = append(want, "decomposition "+m+"."+k)
		}
	}
	// Every key of the sections that are plain mappings, nested ones too.
	var sections func(prefix string, node map[string]any)
	sections = func(prefix string, node map[string]any) {
		for k, p := range walk(node, "properties") {
			want = append(want, prefix+k)
			if pm := resolve(t, s, p.(map[string]any)); pm["type"] == "object" && k != "decomposition" {
				sections(prefix+k+".", pm)
			}
		}
	}
	sections("", s)
	slices.Sort(want)
	for _, w := range want {
		if !seen[w] {
			t.Errorf("no .good.yaml file uses %s", w)
		}
	}
	t.Logf("%d good files use all %d methods, options and keys", len(files), len(want))
}
