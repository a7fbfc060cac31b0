package spec

import (
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"time"

	"gopkg.in/yaml.v3"
)

// Limits that keep a hostile or broken spec from exhausting the machine.
var (
	// MaxSpecBytes is the largest spec file Load reads.
	MaxSpecBytes int64 = 1 << 20
	// MaxAliasNodes bounds how many nodes YAML aliases may expand to.
	MaxAliasNodes = 10000
)

// Load reads, decodes, defaults and validates the spec at path. On bad input
// it returns an ErrorList with every problem found, each with file:line:col.
// Other errors (the file cannot be read) are returned as they are.
func Load(path string) (*Spec, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("spec %s: %w", path, err)
	}
	defer f.Close()
	if info, err := f.Stat(); err == nil && info.IsDir() {
		return nil, fmt.Errorf("spec %s: is a directory, not a spec file", path)
	}
	// Bounded by the bytes actually read, not by stat: a pipe or a device
	// (/dev/zero) reports no size and would otherwise be read until memory
	// runs out.
	src, err := io.ReadAll(io.LimitReader(f, MaxSpecBytes+1))
	if err != nil {
		return nil, fmt.Errorf("spec %s: %w", path, err)
	}
	if int64(len(src)) > MaxSpecBytes {
		return nil, ErrorList{{File: path, Msg: fmt.Sprintf("spec file is larger than the limit of %d bytes (reading stopped there; a spec this large is almost certainly not hand-written)", MaxSpecBytes)}}
	}
	s, err := Parse(src, path)
	if err != nil {
		return nil, err
	}
	abs, err := filepath.Abs(path)
	if err != nil {
		return nil, err
	}
	s.File = path
	s.Dir = filepath.Dir(abs)
	return s, nil
}

// Parse decodes spec source; file is used only in error messages.
func Parse(src []byte, file string) (*Spec, error) {
	if int64(len(src)) > MaxSpecBytes {
		return nil, ErrorList{{File: file, Msg: fmt.Sprintf("spec is %d bytes; the limit is %d bytes", len(src), MaxSpecBytes)}}
	}
	d := &decoder{file: file, src: src}
	var root yaml.Node
	if err := yaml.Unmarshal(src, &root); err != nil {
		return nil, ErrorList{d.yamlError(err)}
	}
	if root.Kind == 0 || len(root.Content) == 0 {
		return nil, ErrorList{{File: file, Line: 1, Col: 1, Msg: "spec is empty; expected a mapping with version, name, sources, columns, calendar, methods and horizon"}}
	}
	s := d.spec(root.Content[0])
	if len(d.errs) > 0 {
		sort.SliceStable(d.errs, func(i, j int) bool {
			a, b := d.errs[i], d.errs[j]
			if a.Line != b.Line {
				return a.Line < b.Line
			}
			return a.Col < b.Col
		})
		return nil, d.errs
	}
	return s, nil
}

var yamlLineRE = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

func (d *decoder) yamlError(err error) *Error {
	msg := err.Error()
	if m := yamlLineRE.FindStringSubmatch(msg); m != nil {
		line, _ := strconv.Atoi(m[1])
		lines := strings.Split(string(d.src), "\n")
		for _, l := range lines[max(0, line-2):min(len(lines), line+1)] {
			if strings.HasPrefix(strings.TrimLeft(l, " "), "\t") {
				m[2] += " (YAML does not allow tabs for indentation; indent with spaces)"
				break
			}
		}
		// yaml.v3 reports the line of the enclosing construct for some
		// errors, so the line is a neighbourhood, not a pinpoint.
		return &Error{File: d.file, Line: line, Col: 1, Msg: "YAML syntax error (at or just after this line): " + m[2]}
	}
	var te *yaml.TypeError
	if errors.As(err, &te) {
		return &Error{File: d.file, Msg: "YAML: " + strings.Join(te.Errors, "; ")}
	}
	return &Error{File: d.file, Msg: "YAML: " + strings.TrimPrefix(msg, "yaml: ")}
}

type decoder struct {
	routeNodes []labelRef
	chooseNode *yaml.Node // selection.choose, when given
	file       string
	src        []byte
	errs       ErrorList
	aliases    int
}

func (d *decoder) errAt(n *yaml.Node, path, format string, args ...any) {
	e := &Error{File: d.file, Path: path, Msg: fmt.Sprintf(format, args...)}
	if n != nil {
		e.Line, e.Col = n.Line, n.Column
	}
	d.errs = append(d.errs, e)
}

// resolve follows aliases, counting how many nodes they expand to.
func (d *decoder) resolve(n *yaml.Node) *yaml.Node {
	for n != nil && n.Kind == yaml.AliasNode {
		d.aliases += countNodes(n.Alias, MaxAliasNodes+1)
		if d.aliases > MaxAliasNodes {
			d.errAt(n, "", "YAML aliases expand to more than %d nodes; refusing to expand further", MaxAliasNodes)
			return nil
		}
		n = n.Alias
	}
	return n
}

func countNodes(n *yaml.Node, limit int) int {
	if n == nil {
		return 0
	}
	c := 1
	for _, k := range n.Content {
		if c > limit {
			break
		}
		if k.Kind == yaml.AliasNode {
			c += countNodes(k.Alias, limit-c)
		} else {
			c += countNodes(k, limit-c)
		}
	}
	return c
}

func kindName(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.ScalarNode:
		switch n.Tag {
		case "!!null":
			return "null"
		case "!!bool":
			return "a boolean"
		case "!!int":
			return "an integer"
		case "!!float":
			return "a number"
		}
		return fmt.Sprintf("the string %q", n.Value)
	}
	return "an unexpected node"
}

// field is one key of a mapping: its name, whether it must be present, and
// how to decode its value.
type field struct {
	name     string
	required bool
	decode   func(n *yaml.Node, path string)
}

// mapping decodes a mapping node against a field table: unknown keys are
// rejected with a suggestion, duplicate keys are rejected, and missing
// required keys are reported at the mapping.
func (d *decoder) mapping(n *yaml.Node, path, what string, fields []field) {
	n = d.resolve(n)
	if n == nil {
		return
	}
	if n.Kind != yaml.MappingNode {
		d.errAt(n, path, "expected %s (a mapping), found %s", what, kindName(n))
		return
	}
	names := make([]string, len(fields))
	for i, f := range fields {
		names[i] = f.name
	}
	seen := map[string]*yaml.Node{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		if k.Kind != yaml.ScalarNode {
			d.errAt(k, path, "keys must be plain names, found %s", kindName(k))
			continue
		}
		key := k.Value
		sub := joinPath(path, key)
		if prev, dup := seen[key]; dup {
			d.errAt(k, sub, "duplicate key %q (first given at line %d)", key, prev.Line)
			continue
		}
		seen[key] = k
		var f *field
		for j := range fields {
			if fields[j].name == key {
				f = &fields[j]
				break
			}
		}
		if f == nil {
			msg := fmt.Sprintf("unknown key %q in %s", key, what)
			if s := suggest(key, names); s != "" {
				msg += fmt.Sprintf(" (did you mean %q?)", s)
			} else {
				msg += "; allowed keys: " + quoteList(names)
			}
			if what == "columns" && v.Tag == "!!null" && v.Value == "" && i >= 2 && n.Content[i-2].Value == "keys" {
				msg += fmt.Sprintf(" (a comma after keys starts a new entry here; for several key columns write a list: keys: [%s, %s])", n.Content[i-1].Value, key)
			}
			d.errAt(k, sub, "%s", msg)
			continue
		}
		f.decode(v, sub)
	}
	for _, f := range fields {
		if f.required {
			if _, ok := seen[f.name]; !ok {
				d.errAt(n, path, "missing required key %q in %s", f.name, what)
			}
		}
	}
}

func joinPath(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

func (d *decoder) scalar(n *yaml.Node, path, what string) (*yaml.Node, bool) {
	n = d.resolve(n)
	if n == nil {
		return nil, false
	}
	if n.Kind != yaml.ScalarNode || n.Tag == "!!null" {
		d.errAt(n, path, "expected %s, found %s", what, kindName(n))
		return nil, false
	}
	return n, true
}

func (d *decoder) str(n *yaml.Node, path, what string, dst *string) {
	if n, ok := d.scalar(n, path, what); ok {
		if n.Tag == "!!bool" {
			d.errAt(n, path, "expected %s, found the boolean %s (quote it if you mean the text)", what, n.Value)
			return
		}
		if strings.TrimSpace(n.Value) == "" {
			d.errAt(n, path, "expected %s, found an empty string", what)
			return
		}
		*dst = n.Value
	}
}

func (d *decoder) integer(n *yaml.Node, path, what string, dst *int) bool {
	n, ok := d.scalar(n, path, what)
	if !ok {
		return false
	}
	if n.Tag != "!!int" {
		d.errAt(n, path, "expected %s, found %s", what, kindName(n))
		return false
	}
	// Decimal only: YAML 1.2 reads 012 as twelve, and so does almanac.
	v, err := strconv.ParseInt(strings.TrimPrefix(n.Value, "+"), 10, 32)
	if err != nil {
		d.errAt(n, path, "expected %s, found %s (write a decimal integer within ±2147483647)", what, n.Value)
		return false
	}
	*dst = int(v)
	return true
}

func (d *decoder) enum(n *yaml.Node, path, what string, allowed []string, dst *string) {
	n, ok := d.scalar(n, path, what)
	if !ok {
		return
	}
	for _, a := range allowed {
		if n.Value == a {
			*dst = a
			return
		}
	}
	msg := fmt.Sprintf("%q is not a valid %s; allowed: %s", n.Value, what, quoteList(allowed))
	if s := suggest(n.Value, allowed); s != "" {
		msg += fmt.Sprintf(" (did you mean %q?)", s)
	}
	d.errAt(n, path, "%s", msg)
}

var nameRE = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._-]*$`)

func (d *decoder) spec(root *yaml.Node) *Spec {
	s := &Spec{
		Shaping:       DefaultShaping,
		Decomposition: DefaultDecomposition,
		Limits:        DefaultLimits,
		Selection:     DefaultSelection,
		Problems:      DetailSummary,
	}
	var (
		backtestNode, selectionNode, intervalsNode *yaml.Node
		totalsNode                                 *yaml.Node
		decompNode, seasonNode                     *yaml.Node
		methodNodes                                []*yaml.Node
		haveDecomp, haveMethods                    bool
	)
	d.mapping(root, "", "the spec", []field{
		{"version", true, func(n *yaml.Node, p string) {
			if d.integer(n, p, "the spec format version (an integer)", &s.Version) && s.Version != FormatVersion {
				d.errAt(n, p, "unsupported spec format version %d; this almanac reads version %d", s.Version, FormatVersion)
			}
		}},
		{"name", true, func(n *yaml.Node, p string) {
			d.str(n, p, "a run name", &s.Name)
			if s.Name != "" && !nameRE.MatchString(s.Name) {
				d.errAt(n, p, "name %q may hold only letters, digits, '.', '_' and '-', starting with a letter or digit", s.Name)
			}
		}},
		{"sources", true, func(n *yaml.Node, p string) { s.Sources = d.sources(n, p) }},
		{"columns", true, func(n *yaml.Node, p string) { d.columns(n, p, &s.Columns) }},
		{"calendar", true, func(n *yaml.Node, p string) {
			seasonNode = d.calendar(n, p, &s.Calendar)
		}},
		{"shaping", false, func(n *yaml.Node, p string) {
			d.mapping(n, p, "shaping", []field{
				{"combine", false, func(n *yaml.Node, p string) {
					d.enum(n, p, "combine rule", CombineRules, (*string)(&s.Shaping.Combine))
				}},
				{"gaps", false, func(n *yaml.Node, p string) {
					d.enum(n, p, "gap rule", GapRules, (*string)(&s.Shaping.Gaps))
				}},
				{"end", false, func(n *yaml.Node, p string) {
					d.enum(n, p, "history end", Ends, (*string)(&s.Shaping.End))
				}},
				{"until", false, func(n *yaml.Node, p string) {
					var v string
					d.str(n, p, "the last day to read (YYYY-MM-DD)", &v)
					if v == "" {
						return
					}
					if msg := CheckDay(v); msg != "" {
						d.errAt(n, p, "%s", msg)
						return
					}
					s.Shaping.Until = v
				}},
				{"stray_dates", false, func(n *yaml.Node, p string) {
					d.enum(n, p, "stray date rule", StrayRules, (*string)(&s.Shaping.StrayDates))
				}},
				{"partial_period", false, func(n *yaml.Node, p string) {
					d.enum(n, p, "partial period rule", PartialRules, (*string)(&s.Shaping.Partial))
				}},
				{"key_variants", false, func(n *yaml.Node, p string) {
					d.enum(n, p, "key variant rule", KeyVariantRules, (*string)(&s.Shaping.KeyVariants))
				}},
			})
		}},
		{"problems", false, func(n *yaml.Node, p string) {
			d.mapping(n, p, "problems", []field{
				{"detail", false, func(n *yaml.Node, p string) {
					d.enum(n, p, "problem detail", ProblemDetails, (*string)(&s.Problems))
				}},
			})
		}},
		{"decomposition", false, func(n *yaml.Node, p string) {
			decompNode, haveDecomp = n, true
			d.decomposition(n, p, &s.Decomposition)
		}},
		{"methods", false, func(n *yaml.Node, p string) {
			s.Methods, methodNodes = d.methods(n, p)
			haveMethods = true
		}},
		{"horizon", true, func(n *yaml.Node, p string) {
			if d.integer(n, p, "the forecast horizon (a whole number of periods)", &s.Horizon) && (s.Horizon <= 0 || s.Horizon > MaxHorizon) {
				d.errAt(n, p, "horizon must be between 1 and %d periods, found %d", MaxHorizon, s.Horizon)
				s.Horizon = 0
			}
		}},
		{"output", false, func(n *yaml.Node, p string) {
			d.str(n, p, "the output folder", &s.Output)
		}},
		{"backtest", false, func(n *yaml.Node, p string) {
			backtestNode = n
			d.backtest(n, p, &s.Backtest)
		}},
		{"selection", false, func(n *yaml.Node, p string) {
			selectionNode = n
			d.selection(n, p, &s.Selection)
		}},
		{"intervals", false, func(n *yaml.Node, p string) {
			intervalsNode = n
			d.intervals(n, p, &s.Intervals)
		}},
		{"totals", false, func(n *yaml.Node, p string) {
			totalsNode = n
			d.totals(n, p, &s.Totals)
		}},
		{"report", false, func(n *yaml.Node, p string) {
			r := &Report{Picks: 6}
			d.mapping(n, p, "report", []field{
				{"series", false, func(n *yaml.Node, p string) {
					n = d.resolve(n)
					if n == nil {
						return
					}
					if n.Kind != yaml.SequenceNode {
						d.errAt(n, p, "expected a list of series keys (key values joined by \" / \")")
						return
					}
					for i, item := range n.Content {
						var k string
						d.str(item, fmt.Sprintf("%s[%d]", p, i), "a series key", &k)
						if k != "" {
							r.Series = append(r.Series, k)
						}
					}
				}},
				{"picks", false, func(n *yaml.Node, p string) {
					if d.integer(n, p, "how many series to pick automatically", &r.Picks) && (r.Picks < 0 || r.Picks > 100) {
						d.errAt(n, p, "picks must be between 0 and 100, found %d", r.Picks)
					}
				}},
			})
			s.Report = r
		}},
		{"limits", false, func(n *yaml.Node, p string) {
			d.mapping(n, p, "limits", []field{
				{"max_series", false, func(n *yaml.Node, p string) {
					if d.integer(n, p, "the most series a run may hold", &s.Limits.MaxSeries) && s.Limits.MaxSeries < 1 {
						d.errAt(n, p, "max_series must be at least 1, found %d", s.Limits.MaxSeries)
					}
				}},
				{"max_periods", false, func(n *yaml.Node, p string) {
					if d.integer(n, p, "the longest series, in periods", &s.Limits.MaxPeriods) && s.Limits.MaxPeriods < 1 {
						d.errAt(n, p, "max_periods must be at least 1, found %d", s.Limits.MaxPeriods)
					}
				}},
			})
		}},
	})

	// Defaults that depend on other fields.
	if s.Calendar.Frequency != "" && s.Calendar.SeasonLength == 0 && seasonNode == nil {
		s.Calendar.SeasonLength = DefaultSeasonLength[s.Calendar.Frequency]
	}
	if s.Output == "" && s.Name != "" {
		s.Output = DefaultOutputRoot + "/" + s.Name
	}
	if !haveMethods && s.Calendar.SeasonLength > 0 {
		// The default automatic spec: almanac's pool, and its backtest
		// and selection where the spec gives none.
		s.Automatic = true
		s.Methods = DefaultMethods(s.Calendar.SeasonLength)
		methodNodes = make([]*yaml.Node, len(s.Methods))
		for i := range methodNodes {
			methodNodes[i] = root
		}
		if backtestNode == nil {
			s.Backtest = DefaultAutomaticBacktest
		}
		if selectionNode == nil {
			s.Selection = DefaultAutomaticSelection(len(s.Methods))
		}
	}
	if s.Selection.Choose == ChooseCombination && s.Selection.Combine == nil && d.chooseNode != nil {
		d.errAt(d.chooseNode, "selection.choose", "choose: combination needs a combine section (kind and top) to say what the combination is")
	}
	if b := &s.Backtest; b.Folds > 0 {
		if b.Horizon == 0 {
			b.Horizon = s.Horizon
		}
		if b.Step == 0 {
			b.Step = b.Horizon
		}
		if b.MinTrain == 0 {
			b.MinTrain = max(2*s.Calendar.SeasonLength, 3)
		}
	}
	if selectionNode != nil && backtestNode == nil && !s.Automatic {
		d.errAt(selectionNode, "selection", "selection ranks methods by their backtest; add a backtest section")
	}
	if c := s.Selection.Combine; c != nil && c.Top > len(s.Methods) && len(s.Methods) > 0 && len(d.errs) == 0 {
		d.errAt(selectionNode, "selection.combine.top", "top is %d but the spec names only %d method(s)", c.Top, len(s.Methods))
	}
	seen := map[string]int{}
	for i, m := range s.Methods {
		if j, dup := seen[m.Label]; dup {
			d.errAt(methodNodes[i], fmt.Sprintf("methods[%d]", i),
				"label %q is already used by methods[%d]; give one of them a different label", m.Label, j)
			continue
		}
		seen[m.Label] = i
	}
	if s.Backtest.Folds > 0 {
		if fb := s.Selection.Fallback; fb != "" {
			if _, ok := seen[fb]; !ok {
				labels := make([]string, len(s.Methods))
				for i, m := range s.Methods {
					labels[i] = m.Label
				}
				d.errAt(selectionNode, "selection.fallback", "fallback %q is not the label of a method; labels: %s", fb, quoteList(labels))
			}
		} else if len(s.Methods) > 0 {
			s.Selection.Fallback = s.Methods[0].Label
			for _, m := range s.Methods {
				if m.Method == "seasonal_naive" {
					s.Selection.Fallback = m.Label
					break
				}
			}
		}
	}
	for _, ref := range d.routeNodes {
		if _, ok := seen[ref.label]; !ok {
			msg := fmt.Sprintf("%q is not the label of a method", ref.label)
			labels := make([]string, 0, len(s.Methods))
			for _, m := range s.Methods {
				labels = append(labels, m.Label)
			}
			if sg := suggest(ref.label, labels); sg != "" {
				msg += fmt.Sprintf(" (did you mean %q?)", sg)
			}
			d.errAt(ref.node, ref.path, "%s; labels: %s", msg, quoteList(labels))
		}
	}
	if c := s.Selection.Combine; c != nil {
		if _, dup := seen[c.Label]; dup {
			d.errAt(selectionNode, "selection.combine.label", "label %q is already used by a method; give the combination another label", c.Label)
		}
	}
	if totalsNode != nil {
		switch {
		case backtestNode == nil:
			d.errAt(totalsNode, "totals", "quantiles of totals come from backtest errors; add a backtest section")
		case s.Horizon > 0 && s.Backtest.Horizon > 0:
			for _, l := range s.Totals.LeadTimes {
				if l > s.Horizon {
					d.errAt(totalsNode, "totals.lead_times", "lead time %d is longer than the horizon (%d)", l, s.Horizon)
				} else if l > s.Backtest.Horizon {
					d.errAt(totalsNode, "totals.lead_times", "lead time %d is longer than the backtest horizon (%d): its quantiles come from backtest windows at least that long", l, s.Backtest.Horizon)
				}
			}
		}
	}
	if intervalsNode != nil && s.Intervals.Source == "empirical" && backtestNode == nil {
		d.errAt(intervalsNode, "intervals", "empirical intervals come from backtest errors; add a backtest section or use source: model")
	}

	// Cross-field checks.
	if s.Calendar.SeasonLength == 1 {
		for i, m := range s.Methods {
			if catalog[m.Method].Seasonal {
				d.errAt(methodNodes[i], fmt.Sprintf("methods[%d]", i),
					"%s needs a season length of at least 2, but calendar.season_length is %d%s",
					m.Method, s.Calendar.SeasonLength, defaultNote(seasonNode, s.Calendar.Frequency))
			}
		}
		if haveDecomp {
			d.errAt(decompNode, "decomposition",
				"a decomposition needs a season length of at least 2, but calendar.season_length is %d%s",
				s.Calendar.SeasonLength, defaultNote(seasonNode, s.Calendar.Frequency))
		}
	}

	return s
}

func defaultNote(seasonNode *yaml.Node, f Frequency) string {
	if seasonNode != nil {
		return ""
	}
	return fmt.Sprintf(" (the default for frequency %s); set calendar.season_length", f)
}

// decomposition decodes the decomposition section: a method that
// decomposes (classical by default) and that method's options, less the
// ones that only matter for forecasting.
func (d *decoder) decomposition(n *yaml.Node, path string, dc *Decomposition) {
	n = d.resolve(n)
	if n == nil {
		return
	}
	method := "classical"
	if n.Kind == yaml.MappingNode {
		for i := 0; i+1 < len(n.Content); i += 2 {
			if n.Content[i].Value == "method" {
				var m string
				d.enum(d.resolve(n.Content[i+1]), path+".method", "decomposition method", DecompositionMethods(), &m)
				if m == "" {
					return
				}
				method = m
			}
		}
	}
	def := catalog[method]
	dc.Method = method
	dc.Options = map[string]any{}
	fields := []field{{"method", false, func(*yaml.Node, string) {}}}
	for _, name := range MethodOptionNames(method) {
		opt := def.Options[name]
		if opt.ForecastOnly {
			continue
		}
		if opt.Default != nil {
			dc.Options[name] = opt.Default
		}
		fields = append(fields, field{name, false, func(n *yaml.Node, p string) {
			if v, ok := d.option(n, p, method, name, opt); ok {
				dc.Options[name] = v
			}
		}})
	}
	d.mapping(n, path, "decomposition ("+method+")", fields)
	if def.Check != nil {
		if msg := def.Check(dc.Options); msg != "" {
			d.errAt(n, path, "%s: %s", method, msg)
		}
	}
	if method == "classical" {
		dc.Form = Form(dc.Options["form"].(string))
		dc.Average = dc.Options["average"].(string)
	}
}

// DecompositionMethods lists the methods that can serve as the decomposition.
func DecompositionMethods() []string {
	var out []string
	for _, n := range MethodNames() {
		if catalog[n].Decomposes {
			out = append(out, n)
		}
	}
	return out
}

func (d *decoder) sources(n *yaml.Node, path string) []Source {
	n = d.resolve(n)
	if n == nil {
		return nil
	}
	if n.Kind != yaml.SequenceNode {
		d.errAt(n, path, "expected a list of sources, found %s", kindName(n))
		return nil
	}
	if len(n.Content) == 0 {
		d.errAt(n, path, "at least one source is needed")
	}
	var out []Source
	for i, item := range n.Content {
		p := fmt.Sprintf("%s[%d]", path, i)
		item = d.resolve(item)
		if item == nil {
			continue
		}
		var src Source
		var formatGiven bool
		if item.Kind == yaml.ScalarNode {
			d.str(item, p, "a source path", &src.Path)
		} else {
			d.mapping(item, p, "a source", []field{
				{"path", true, func(n *yaml.Node, p string) { d.str(n, p, "a file path or glob", &src.Path) }},
				{"format", false, func(n *yaml.Node, p string) {
					formatGiven = true
					d.enum(n, p, "format", Formats, (*string)(&src.Format))
				}},
				{"delimiter", false, func(n *yaml.Node, p string) {
					sn, ok := d.scalar(n, p, "a one-character CSV delimiter")
					if !ok {
						return
					}
					s := sn.Value // not trimmed: a tab or a space is a delimiter
					if s == "\\t" || s == "tab" {
						s = "\t"
					}
					if len([]rune(s)) != 1 || s == "\"" || s == "\n" || s == "\r" {
						d.errAt(sn, p, "delimiter must be one character other than a quote or newline, found %q", s)
						return
					}
					src.Delimiter = s
				}},
			})
		}
		if src.Path == "" {
			continue
		}
		if !formatGiven {
			switch strings.ToLower(filepath.Ext(src.Path)) {
			case ".csv", ".tsv", ".txt":
				src.Format = FormatCSV
			case ".parquet", ".pq":
				src.Format = FormatParquet
			default:
				d.errAt(item, p, "cannot tell the format of %q from its extension; add format: (one of %s)", src.Path, quoteList(Formats))
			}
		}
		if src.Format == FormatCSV && src.Delimiter == "" {
			src.Delimiter = ","
			if strings.EqualFold(filepath.Ext(src.Path), ".tsv") {
				src.Delimiter = "\t"
			}
		}
		if src.Format == FormatParquet && src.Delimiter != "" {
			d.errAt(item, p, "delimiter applies only to CSV sources")
		}
		if err := checkGlob(src.Path); err != nil {
			d.errAt(item, p, "bad glob pattern %q: %v", src.Path, err)
		}
		out = append(out, src)
	}
	return out
}

func (d *decoder) columns(n *yaml.Node, path string, c *Columns) {
	var keysNode *yaml.Node
	d.mapping(n, path, "columns", []field{
		{"time", true, func(n *yaml.Node, p string) { d.str(n, p, "the name of the time column", &c.Time) }},
		{"value", true, func(n *yaml.Node, p string) { d.str(n, p, "the name of the value column", &c.Value) }},
		{"keys", false, func(n *yaml.Node, p string) {
			keysNode = d.resolve(n)
			if keysNode == nil {
				return
			}
			if keysNode.Kind == yaml.ScalarNode && keysNode.Tag != "!!null" {
				var k string
				d.str(keysNode, p, "a key column name", &k)
				if strings.Contains(k, ",") {
					parts := strings.Split(k, ",")
					for i := range parts {
						parts[i] = strings.TrimSpace(parts[i])
					}
					d.errAt(keysNode, p, "%q is one name holding a comma; for several key columns write a list: keys: [%s]", k, strings.Join(parts, ", "))
					return
				}
				if k != "" {
					c.Keys = []string{k}
				}
				return
			}
			if keysNode.Kind != yaml.SequenceNode {
				d.errAt(keysNode, p, "expected a list of key column names, found %s", kindName(keysNode))
				return
			}
			c.Keys = []string{}
			for i, k := range keysNode.Content {
				var name string
				d.str(k, fmt.Sprintf("%s[%d]", p, i), "a key column name", &name)
				if name != "" {
					c.Keys = append(c.Keys, name)
				}
			}
		}},
	})
	if c.Time != "" && c.Time == c.Value {
		d.errAt(n, path, "time and value name the same column %q", c.Time)
	}
	if keysNode == nil {
		return
	}
	seen := map[string]bool{c.Time: true, c.Value: true}
	for i, k := range c.Keys {
		p := fmt.Sprintf("%s.keys[%d]", path, i)
		at := keysNode
		if keysNode.Kind == yaml.SequenceNode && i < len(keysNode.Content) {
			at = keysNode.Content[i]
		}
		if seen[k] {
			d.errAt(at, p, "column %q is listed twice among time, value and keys", k)
		}
		seen[k] = true
		if IsOutputColumn(k) {
			d.errAt(at, p, "key column %q has the name of an output column, so the tables would hold two columns of that name; rename it in the input (reserved, in any letter case: %s, and lower_<level>, upper_<level>, quantile_<level>)", k, quoteList(OutputColumns))
		}
	}
}

// checkGlob reports a malformed pattern: filepath.Match finds a bad
// character class only when matching reaches it.
func checkGlob(pattern string) error {
	for i := 0; i < len(pattern); i++ {
		switch pattern[i] {
		case '\\':
			i++
		case '[':
			j := i + 1
			if j < len(pattern) && pattern[j] == '^' {
				j++
			}
			if j < len(pattern) && pattern[j] == ']' {
				j++ // a literal ] first in a class is still malformed in Go; let Match say so
			}
			for j < len(pattern) && pattern[j] != ']' {
				if pattern[j] == '\\' {
					j++
				}
				j++
			}
			if j >= len(pattern) {
				return filepath.ErrBadPattern
			}
			if _, err := filepath.Match(pattern[i:j+1], "a"); err != nil {
				return err
			}
			i = j
		}
	}
	_, err := filepath.Match(pattern, "")
	return err
}

func (d *decoder) calendar(n *yaml.Node, path string, c *Calendar) (seasonNode *yaml.Node) {
	d.mapping(n, path, "calendar", []field{
		{"frequency", true, func(n *yaml.Node, p string) {
			d.enum(n, p, "frequency", Frequencies, (*string)(&c.Frequency))
		}},
		{"season_length", false, func(n *yaml.Node, p string) {
			seasonNode = n
			if d.integer(n, p, "the season length (periods per season)", &c.SeasonLength) && (c.SeasonLength < 1 || c.SeasonLength > 1000) {
				d.errAt(n, p, "season_length must be between 1 and 1000, found %d", c.SeasonLength)
				c.SeasonLength = 0
			}
		}},
	})
	return seasonNode
}

func (d *decoder) methods(n *yaml.Node, path string) ([]MethodSpec, []*yaml.Node) {
	n = d.resolve(n)
	if n == nil {
		return nil, nil
	}
	if n.Kind != yaml.SequenceNode {
		d.errAt(n, path, "expected a list of methods, found %s", kindName(n))
		return nil, nil
	}
	if len(n.Content) == 0 {
		d.errAt(n, path, "at least one method is needed; choose from %s", quoteList(MethodNames()))
	}
	var out []MethodSpec
	var nodes []*yaml.Node
	for i, item := range n.Content {
		p := fmt.Sprintf("%s[%d]", path, i)
		item = d.resolve(item)
		if item == nil {
			continue
		}
		if m, ok := d.method(item, p); ok {
			out = append(out, m)
			nodes = append(nodes, item)
		}
	}
	return out, nodes
}

func (d *decoder) methodName(n *yaml.Node, path string) (string, bool) {
	var name string
	d.str(n, path, "a method name", &name)
	if name == "" {
		return "", false
	}
	if _, ok := catalog[name]; !ok {
		msg := fmt.Sprintf("unknown method %q", name)
		if s := suggest(name, MethodNames()); s != "" {
			msg += fmt.Sprintf(" (did you mean %q?)", s)
		}
		msg += "; methods: " + quoteList(MethodNames())
		d.errAt(n, path, "%s", msg)
		return "", false
	}
	return name, true
}

func (d *decoder) method(n *yaml.Node, path string) (MethodSpec, bool) {
	switch n.Kind {
	case yaml.ScalarNode:
		name, ok := d.methodName(n, path)
		if !ok {
			return MethodSpec{}, false
		}
		return MethodSpec{Method: name, Label: name, Options: defaults(catalog[name])}, true
	case yaml.MappingNode:
	default:
		d.errAt(n, path, "expected a method name or a mapping with a method key, found %s", kindName(n))
		return MethodSpec{}, false
	}
	// Find the method key first: the allowed options depend on it.
	var nameNode *yaml.Node
	for i := 0; i+1 < len(n.Content); i += 2 {
		if n.Content[i].Value == "method" {
			nameNode = n.Content[i+1]
			break
		}
	}
	if nameNode == nil {
		d.errAt(n, path, "missing required key \"method\" in a method mapping")
		return MethodSpec{}, false
	}
	name, ok := d.methodName(d.resolve(nameNode), path+".method")
	if !ok {
		return MethodSpec{}, false
	}
	def := catalog[name]
	m := MethodSpec{Method: name, Label: name, Options: defaults(def)}
	fields := []field{
		{"method", true, func(*yaml.Node, string) {}},
		{"label", false, func(n *yaml.Node, p string) {
			d.str(n, p, "a label", &m.Label)
			if m.Label != "" && !nameRE.MatchString(m.Label) {
				d.errAt(n, p, "label %q may hold only letters, digits, '.', '_' and '-', starting with a letter or digit", m.Label)
			}
		}},
	}
	for _, optName := range MethodOptionNames(name) {
		opt := def.Options[optName]
		fields = append(fields, field{optName, false, func(n *yaml.Node, p string) {
			if v, ok := d.option(n, p, name, optName, opt); ok {
				m.Options[optName] = v
			}
		}})
	}
	what := fmt.Sprintf("method %s", name)
	if len(def.Options) == 0 {
		what = fmt.Sprintf("method %s (which takes no options besides label)", name)
	}
	d.mapping(n, path, what, fields)
	if def.Check != nil {
		if msg := def.Check(m.Options); msg != "" {
			d.errAt(n, path, "%s: %s", name, msg)
		}
	}
	return m, true
}

func defaults(def methodDef) map[string]any {
	out := map[string]any{}
	for k, o := range def.Options {
		if o.Default != nil {
			out[k] = o.Default
		}
	}
	return out
}

func (d *decoder) option(n *yaml.Node, path, method, name string, o optionDef) (any, bool) {
	switch o.Kind {
	case kindEnum:
		var v string
		d.enum(n, path, fmt.Sprintf("%s %s", method, name), o.Allowed, &v)
		return v, v != ""
	case kindIntOrWord:
		sn, ok := d.scalar(n, path, fmt.Sprintf("%s %s (an integer or %s)", method, name, quoteList(o.Allowed)))
		if !ok {
			return nil, false
		}
		if sn.Tag != "!!int" {
			var v string
			d.enum(sn, path, fmt.Sprintf("%s %s (an integer or %s)", method, name, quoteList(o.Allowed)), o.Allowed, &v)
			return v, v != ""
		}
		fallthrough
	case kindInt:
		var v int
		if !d.integer(n, path, fmt.Sprintf("%s %s (an integer)", method, name), &v) {
			return nil, false
		}
		if float64(v) < o.Min || float64(v) > o.Max {
			d.errAt(n, path, "%s %s must be between %g and %g, found %d", method, name, o.Min, o.Max, v)
			return nil, false
		}
		if o.Odd && v%2 == 0 {
			d.errAt(n, path, "%s %s must be odd, found %d", method, name, v)
			return nil, false
		}
		return v, true
	case kindFloat:
		sn, ok := d.scalar(n, path, fmt.Sprintf("%s %s (a number)", method, name))
		if !ok {
			return nil, false
		}
		if sn.Tag != "!!int" && sn.Tag != "!!float" {
			d.errAt(sn, path, "expected %s %s (a number), found %s", method, name, kindName(sn))
			return nil, false
		}
		v, err := strconv.ParseFloat(sn.Value, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			d.errAt(sn, path, "expected %s %s (a finite number), found %s", method, name, sn.Value)
			return nil, false
		}
		if v < o.Min || v > o.Max {
			d.errAt(sn, path, "%s %s must be between %g and %g, found %g", method, name, o.Min, o.Max, v)
			return nil, false
		}
		return v, true
	case kindBool:
		sn, ok := d.scalar(n, path, fmt.Sprintf("%s %s (true or false)", method, name))
		if !ok {
			return nil, false
		}
		if sn.Tag != "!!bool" {
			d.errAt(sn, path, "expected %s %s (true or false), found %s", method, name, kindName(sn))
			return nil, false
		}
		return sn.Value == "true", true
	}
	panic("spec: unknown option kind")
}

// CheckDay checks a day written as YYYY-MM-DD (years 1 to 9999) and returns
// what is wrong with it, or "" when it is a real day.
func CheckDay(v string) string {
	if len(v) != 10 || v[4] != '-' || v[7] != '-' {
		return fmt.Sprintf("%q is not a day; write YYYY-MM-DD, e.g. 2024-03-31", v)
	}
	t, err := time.Parse("2006-01-02", v)
	if err != nil || t.Year() < 1 {
		return fmt.Sprintf("%q is not a day of the calendar (years 1 to 9999); write YYYY-MM-DD, e.g. 2024-03-31", v)
	}
	return ""
}
