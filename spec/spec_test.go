package spec

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const minimal = `version: 1
name: t
sources: [data.csv]
columns: {time: date, value: qty}
calendar: {frequency: month}
methods: [naive]
horizon: 6
`

func TestLoadGood(t *testing.T) {
	s, err := Load("testdata/good.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if s.Calendar.SeasonLength != 52 {
		t.Errorf("season length default for week = %d, want 52", s.Calendar.SeasonLength)
	}
	if s.Sources[0].Format != FormatCSV || s.Sources[1].Format != FormatParquet {
		t.Errorf("formats inferred = %q, %q", s.Sources[0].Format, s.Sources[1].Format)
	}
	if s.Shaping.Combine != CombineSum || s.Shaping.Gaps != GapsMissing {
		t.Errorf("shaping = %+v", s.Shaping)
	}
	if len(s.Methods) != 3 || s.Methods[2].Label != "classical_add" || s.Methods[2].Options["trend"] != "trend_step" ||
		s.Methods[2].Options["average"] != "mean" {
		t.Errorf("methods = %+v", s.Methods)
	}
	if s.Methods[0].Label != "naive" {
		t.Errorf("default label = %q", s.Methods[0].Label)
	}
	if got := strings.Join(s.Columns.Keys, ","); got != "depot,sku" {
		t.Errorf("keys = %s", got)
	}
	abs, _ := filepath.Abs("testdata")
	if s.Dir != abs {
		t.Errorf("Dir = %s, want %s", s.Dir, abs)
	}
}

func TestDefaults(t *testing.T) {
	s, err := Parse([]byte(minimal), "m.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if s.Shaping != DefaultShaping {
		t.Errorf("shaping = %+v, want defaults %+v", s.Shaping, DefaultShaping)
	}
	if s.Calendar.SeasonLength != 12 || s.Output != "runs/t" || s.Decomposition.Method != "classical" || s.Decomposition.Form != Multiplicative || s.Decomposition.Average != "mean" {
		t.Errorf("defaults: season %d output %q decomposition %+v", s.Calendar.SeasonLength, s.Output, s.Decomposition)
	}
	if len(s.Columns.Keys) != 0 {
		t.Errorf("keys = %v", s.Columns.Keys)
	}
}

// Each bad spec is the minimal spec with one edit; the test pins the
// position and the message.
func TestBadSpecs(t *testing.T) {
	cases := []struct {
		name, from, to string
		want           []string // substrings, in order, one per expected error
	}{
		{"unknown key with suggestion", "horizon: 6", "horizon: 6\nhorizn: 3",
			[]string{`m.yaml:8:1: horizn: unknown key "horizn" in the spec (did you mean "horizon"?)`}},
		{"unknown nested key", "calendar: {frequency: month}", "calendar: {frequency: month, season_lenght: 12}",
			[]string{`m.yaml:5:30: calendar.season_lenght: unknown key "season_lenght" in calendar (did you mean "season_length"?)`}},
		{"wrong type", "horizon: 6", "horizon: soon",
			[]string{`m.yaml:7:10: horizon: expected the forecast horizon (a whole number of periods), found the string "soon"`}},
		{"bad enumeration", "frequency: month", "frequency: monthly",
			[]string{`m.yaml:5:23: calendar.frequency: "monthly" is not a valid frequency; allowed: day, week, month, quarter, year (did you mean "month"?)`}},
		{"missing required key", "horizon: 6\n", "",
			[]string{`m.yaml:1:1: missing required key "horizon" in the spec`}},
		{"horizon zero", "horizon: 6", "horizon: 0",
			[]string{`m.yaml:7:10: horizon: horizon must be between 1 and 10000 periods, found 0`}},
		{"horizon negative", "horizon: 6", "horizon: -2",
			[]string{`horizon must be between 1 and 10000 periods, found -2`}},
		{"seasonal method with season 1", "calendar: {frequency: month}\nmethods: [naive]", "calendar: {frequency: year}\nmethods: [naive, seasonal_naive]",
			[]string{`m.yaml:6:18: methods[1]: seasonal_naive needs a season length of at least 2, but calendar.season_length is 1 (the default for frequency year); set calendar.season_length`}},
		{"unknown method", "methods: [naive]", "methods: [naïve, sesonal_naive]",
			[]string{`methods[0]: unknown method "naïve" (did you mean "naive"?)`, `methods[1]: unknown method "sesonal_naive" (did you mean "seasonal_naive"?)`}},
		{"bad method option", "methods: [naive]", "methods: [{method: classical, trend: linear}]",
			[]string{`methods[0].trend: "linear" is not a valid classical trend; allowed: adjusted_line, trend_line, trend_step, trend_flat`}},
		{"option on a method without options", "methods: [naive]", "methods: [{method: naive, form: additive}]",
			[]string{`methods[0].form: unknown key "form" in method naive (which takes no options besides label)`}},
		{"duplicate labels", "methods: [naive]", "methods: [naive, naive]",
			[]string{`methods[1]: label "naive" is already used by methods[0]`}},
		{"duplicate yaml key", "horizon: 6", "horizon: 6\nhorizon: 7",
			[]string{`m.yaml:8:1: horizon: duplicate key "horizon" (first given at line 7)`}},
		{"unknown extension", "sources: [data.csv]", "sources: [data.xlsx]",
			[]string{`sources[0]: cannot tell the format of "data.xlsx" from its extension; add format: (one of csv, parquet)`}},
		{"reserved key column", "value: qty}", "value: qty, keys: [method]}",
			[]string{`columns.keys[0]: key column "method" has the name of an output column`}},
		{"wrong version", "version: 1", "version: 2",
			[]string{`m.yaml:1:10: version: unsupported spec format version 2; this almanac reads version 1`}},
		{"yaml syntax", "horizon: 6", "horizon: [6",
			[]string{`m.yaml:6:1: YAML syntax error (at or just after this line): did not find expected ',' or ']'`}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			src := strings.Replace(minimal, c.from, c.to, 1)
			if src == minimal {
				t.Fatalf("edit %q did not apply", c.from)
			}
			_, err := Parse([]byte(src), "m.yaml")
			var list ErrorList
			if !errors.As(err, &list) {
				t.Fatalf("got %v, want an ErrorList", err)
			}
			msg := list.Error()
			for _, w := range c.want {
				i := strings.Index(msg, w)
				if i < 0 {
					t.Fatalf("error\n%s\ndoes not contain\n%s", msg, w)
				}
				msg = msg[i+len(w):]
			}
		})
	}
}

func TestAllErrorsInOnePass(t *testing.T) {
	src := `version: 1
name: bad name
sources: []
columns: {time: d}
calendar: {frequency: fortnight}
methods: [nave]
horizon: 0
colour: blue
`
	_, err := Parse([]byte(src), "x.yaml")
	var list ErrorList
	if !errors.As(err, &list) {
		t.Fatalf("got %v", err)
	}
	if len(list) != 7 {
		t.Fatalf("got %d errors, want 7:\n%s", len(list), list.Error())
	}
	for i := 1; i < len(list); i++ {
		if list[i].Line < list[i-1].Line {
			t.Errorf("errors out of file order:\n%s", list.Error())
		}
	}
}

func TestPretty(t *testing.T) {
	src := strings.Replace(minimal, "horizon: 6", "horizon: x", 1)
	_, err := Parse([]byte(src), "m.yaml")
	got := err.(ErrorList).Pretty([]byte(src))
	want := "m.yaml:7:10: horizon: expected the forecast horizon (a whole number of periods), found the string \"x\"\n     7 | horizon: x\n       |          ^\n"
	if got != want {
		t.Errorf("Pretty =\n%q\nwant\n%q", got, want)
	}
}

func TestAliasBomb(t *testing.T) {
	var b strings.Builder
	b.WriteString(minimal)
	b.WriteString("x0: &a0 [1,1,1,1,1,1,1,1,1,1]\n")
	for i := 1; i < 9; i++ {
		b.WriteString("x" + string(rune('0'+i)) + ": &a" + string(rune('0'+i)) + " [")
		for j := 0; j < 10; j++ {
			if j > 0 {
				b.WriteString(",")
			}
			b.WriteString("*a" + string(rune('0'+i-1)))
		}
		b.WriteString("]\n")
	}
	b.WriteString("methods2: *a8\n")
	_, err := Parse([]byte(b.String()), "bomb.yaml")
	if err == nil || !strings.Contains(err.Error(), "unknown key") {
		t.Fatalf("want unknown-key errors, got %v", err)
	}
	// The same bomb under a key that is decoded must stop at the limit.
	src := strings.Replace(b.String(), "methods: [naive]\n", "", 1)
	src = strings.Replace(src, "methods2: *a8", "methods: *a8", 1)
	_, err = Parse([]byte(src), "bomb.yaml")
	if err == nil || !strings.Contains(err.Error(), "YAML aliases expand to more than") {
		t.Fatalf("want alias limit error, got %v", err)
	}
}

func TestSpecTooLarge(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "big.yaml")
	big := minimal + "# " + strings.Repeat("x", int(MaxSpecBytes)) + "\n"
	if err := os.WriteFile(p, []byte(big), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := Load(p)
	if err == nil || !strings.Contains(err.Error(), "larger than the limit of 1048576 bytes") || !strings.Contains(err.Error(), p) {
		t.Fatalf("got %v", err)
	}
}

// A device or a pipe has no size to stat: the read itself is bounded, so
// /dev/zero fails at the limit instead of filling memory.
func TestSpecFromEndlessDevice(t *testing.T) {
	if _, err := os.Stat("/dev/zero"); err != nil {
		t.Skip("no /dev/zero")
	}
	_, err := Load("/dev/zero")
	if err == nil || !strings.Contains(err.Error(), "/dev/zero: spec file is larger than the limit of 1048576 bytes") {
		t.Fatalf("got %v", err)
	}
}

func TestBounds(t *testing.T) {
	cases := []struct{ extra, want string }{
		{"horizon: 10000", ""},
		{"horizon: 10001", "horizon: horizon must be between 1 and 10000 periods, found 10001"},
		{"horizon: 2147483647", "horizon must be between 1 and 10000 periods, found 2147483647"},
		{"horizon: 3\nbacktest: {folds: 2, horizon: 10001}", "backtest.horizon: horizon must be between 1 and 10000, found 10001"},
		{"horizon: 3\nbacktest: {folds: 2, step: 2147483647}", "backtest.step: step must be between 1 and 10000, found 2147483647"},
		{"horizon: 3\nbacktest: {folds: 101}", "backtest.folds: folds must be between 1 and 100, found 101"},
	}
	for _, c := range cases {
		src := strings.Replace(boundsBase, "HORIZON", strings.ReplaceAll(c.extra, "\\n", "\n"), 1)
		_, err := Parse([]byte(src), "b.yaml")
		if c.want == "" {
			if err != nil {
				t.Errorf("%s: %v", c.extra, err)
			}
			continue
		}
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: got %v, want %q", c.extra, err, c.want)
		}
	}
}

const boundsBase = `version: 1
name: b
sources: [d.csv]
columns: {time: t, value: v, keys: [k]}
calendar: {frequency: month}
methods: [naive]
HORIZON
`

func TestKeysScalarWithComma(t *testing.T) {
	src := strings.Replace(boundsBase, "columns: {time: t, value: v, keys: [k]}", "columns:\n  time: t\n  value: v\n  keys: store, product", 1)
	src = strings.Replace(src, "HORIZON", "horizon: 3", 1)
	_, err := Parse([]byte(src), "k.yaml")
	want := `k.yaml:7:9: columns.keys: "store, product" is one name holding a comma; for several key columns write a list: keys: [store, product]`
	if err == nil || err.Error() != want {
		t.Fatalf("got %v, want %s", err, want)
	}
	// In a flow mapping the comma starts a new entry.
	src = strings.Replace(boundsBase, "keys: [k]", "keys: store, product", 1)
	src = strings.Replace(src, "HORIZON", "horizon: 3", 1)
	_, err = Parse([]byte(src), "k.yaml")
	if err == nil || !strings.Contains(err.Error(), `unknown key "product" in columns; allowed keys: time, value, keys (a comma after keys starts a new entry here; for several key columns write a list: keys: [store, product])`) {
		t.Fatalf("got %v", err)
	}
}

func TestKeyNamedLikeAnyOutputColumn(t *testing.T) {
	for _, k := range append(append([]string{}, OutputColumns...), "lower_80", "UPPER_95", "Interval_Source") {
		src := strings.Replace(boundsBase, "keys: [k]", "keys: ["+k+"]", 1)
		src = strings.Replace(src, "HORIZON", "horizon: 3", 1)
		_, err := Parse([]byte(src), "k.yaml")
		if err == nil || !strings.Contains(err.Error(), "has the name of an output column") || !strings.Contains(err.Error(), "runner_up_score") {
			t.Errorf("key %q: got %v", k, err)
		}
	}
	for _, k := range []string{"store", "lower_bound", "methods", "upper_"} {
		src := strings.Replace(boundsBase, "keys: [k]", "keys: ["+k+"]", 1)
		src = strings.Replace(src, "HORIZON", "horizon: 3", 1)
		if _, err := Parse([]byte(src), "k.yaml"); err != nil {
			t.Errorf("key %q refused: %v", k, err)
		}
	}
}

func TestCanonicalIgnoresStyle(t *testing.T) {
	a, err := Parse([]byte(minimal), "a.yaml")
	if err != nil {
		t.Fatal(err)
	}
	restyled := `# same run, other style
horizon: 6
methods:
  - method: naive
    label: naive
calendar:
  frequency: month
  season_length: 12
columns:
  value: qty
  time: date
sources:
  - path: data.csv
    format: csv
name: t
version: 1
shaping: {gaps: zero, combine: sum}
output: runs/t
`
	b, err := Parse([]byte(restyled), "b.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if string(a.Canonical()) != string(b.Canonical()) || a.Hash() != b.Hash() {
		t.Errorf("canonical forms differ:\n%s\n%s", a.Canonical(), b.Canonical())
	}
	c, _ := Parse([]byte(strings.Replace(minimal, "horizon: 6", "horizon: 7", 1)), "c.yaml")
	if c.Hash() == a.Hash() {
		t.Error("a changed horizon kept the hash")
	}
	if len(a.Hash()) != 64 {
		t.Errorf("hash %q is not hex SHA-256", a.Hash())
	}
}

// A spec rebuilt from its canonical form is the same spec: same canonical
// bytes, same hash. Checked on every example spec and the test specs.
func TestFromCanonicalRoundTrip(t *testing.T) {
	paths, _ := filepath.Glob("../examples/*/spec.yaml")
	more, _ := filepath.Glob("testdata/*.yaml")
	paths = append(paths, more...)
	if len(paths) < 3 {
		t.Fatalf("found %d specs", len(paths))
	}
	extra := `version: 1
name: rt
sources: [{path: "a/*.tsv"}]
columns: {time: t, value: v, keys: [k]}
calendar: {frequency: week, season_length: 13}
shaping: {combine: last, gaps: missing, end: series}
decomposition: {method: stl, robust: true, seasonal_window: 9}
methods: [naive, {method: holt_winters, seasonal: multiplicative, damped: true}, {method: tsb, alpha: 0.2, beta: 0.05}, stl]
horizon: 4
backtest: {folds: 2, window: sliding, window_length: 30}
selection: {metric: rmsse, fallback: naive, combine: {kind: median, top: 2}, route: {lumpy: [tsb]}}
intervals: {levels: [90], source: model, all_methods: true}
limits: {max_series: 50}
`
	specs := []*Spec{}
	s, err := Parse([]byte(extra), "rt.yaml")
	if err != nil {
		t.Fatal(err)
	}
	specs = append(specs, s)
	for _, p := range paths {
		s, err := Load(p)
		if err != nil {
			t.Fatal(err)
		}
		specs = append(specs, s)
	}
	for _, s := range specs {
		back, err := FromCanonical(s.Canonical(), "manifest.json")
		if err != nil {
			t.Fatalf("%s: %v\n%s", s.Name, err, s.Canonical())
		}
		if string(back.Canonical()) != string(s.Canonical()) {
			t.Errorf("%s: round trip changed the canonical form:\n%s\n%s", s.Name, s.Canonical(), back.Canonical())
		}
	}
}

func TestShapingGuards(t *testing.T) {
	base := strings.Replace(boundsBase, "HORIZON", "horizon: 3", 1)
	plain, err := Parse([]byte(base), "g.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if plain.Shaping.StrayDates != StrayStop || plain.Shaping.Partial != PartialDrop || plain.Shaping.KeyVariants != KeyVariantsWarn || plain.Problems != DetailSummary {
		t.Fatalf("defaults: %+v, %q", plain.Shaping, plain.Problems)
	}
	if strings.Contains(string(plain.Canonical()), "until") || strings.Contains(string(plain.Canonical()), "problems") {
		t.Fatalf("defaults of the new options must stay out of the canonical form: %s", plain.Canonical())
	}
	s, err := Parse([]byte(base+"shaping: {until: 2024-03-31, stray_dates: drop, partial_period: keep, key_variants: lower}\nproblems: {detail: series}\n"), "g.yaml")
	if err != nil {
		t.Fatal(err)
	}
	want := Shaping{Combine: CombineSum, Gaps: GapsZero, End: EndPanel, Until: "2024-03-31", StrayDates: StrayDrop, Partial: PartialKeep, KeyVariants: KeyVariantsLower}
	if s.Shaping != want || s.Problems != DetailSeries {
		t.Fatalf("got %+v %q", s.Shaping, s.Problems)
	}
	back, err := FromCanonical(s.Canonical(), "c")
	if err != nil || back.Hash() != s.Hash() || back.Shaping != want {
		t.Fatalf("round trip: %v %+v", err, back)
	}
	for _, c := range []struct{ v, want string }{
		{"2024-02-30", `shaping.until: "2024-02-30" is not a day of the calendar (years 1 to 9999)`},
		{"24-03-01", `shaping.until: "24-03-01" is not a day; write YYYY-MM-DD`},
		{"0000-01-01", `"0000-01-01" is not a day of the calendar (years 1 to 9999)`},
		{"2024-03", `"2024-03" is not a day; write YYYY-MM-DD`},
	} {
		_, err := Parse([]byte(base+"shaping: {until: \""+c.v+"\"}\n"), "g.yaml")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("until %s: got %v", c.v, err)
		}
	}
}
