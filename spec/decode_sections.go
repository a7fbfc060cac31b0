package spec

import (
	"fmt"
	"regexp"

	"gopkg.in/yaml.v3"
)

var nameRE = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._-]*$`)

// spec decodes the whole spec: a table of its top-level sections, then the
// defaults that depend on several sections and the checks across them.
func (d *decoder) spec(root *yaml.Node) *Spec {
	s := &Spec{
		Shaping:       DefaultShaping,
		Decomposition: DefaultDecomposition,
		Limits:        DefaultLimits,
		Selection:     DefaultSelection,
		Problems:      DetailSummary,
	}
	sn := &specNodes{}
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
			sn.seasonNode = d.calendar(n, p, &s.Calendar)
		}},
		{"events", false, func(n *yaml.Node, p string) { s.Events, sn.eventNodes = d.events(n, p) }},
		{"shaping", false, func(n *yaml.Node, p string) { d.shaping(n, p, &s.Shaping) }},
		{"problems", false, func(n *yaml.Node, p string) {
			d.mapping(n, p, "problems", []field{
				{"detail", false, func(n *yaml.Node, p string) {
					d.enum(n, p, "problem detail", ProblemDetails, (*string)(&s.Problems))
				}},
			})
		}},
		{"decomposition", false, func(n *yaml.Node, p string) {
			sn.decompNode, sn.haveDecomp = n, true
			d.decomposition(n, p, &s.Decomposition)
		}},
		{"methods", false, func(n *yaml.Node, p string) {
			s.Methods, sn.methodNodes = d.methods(n, p)
			sn.haveMethods = true
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
			sn.backtestNode = n
			d.backtest(n, p, &s.Backtest)
		}},
		{"selection", false, func(n *yaml.Node, p string) {
			sn.selectionNode = n
			d.selection(n, p, &s.Selection)
		}},
		{"intervals", false, func(n *yaml.Node, p string) {
			sn.intervalsNode = n
			d.intervals(n, p, &s.Intervals)
		}},
		{"totals", false, func(n *yaml.Node, p string) {
			sn.totalsNode = n
			d.totals(n, p, &s.Totals)
		}},
		{"report", false, func(n *yaml.Node, p string) { s.Report = d.report(n, p) }},
		{"limits", false, func(n *yaml.Node, p string) { d.limits(n, p, &s.Limits) }},
	})
	d.specDefaults(s, sn, root)
	d.checkSelection(s, sn)
	d.checkLabels(s, sn)
	d.checkBacktestNeeds(s, sn)
	d.checkSeasonLength(s, sn)
	d.checkEvents(s, sn.eventNodes)
	return s
}

// specNodes holds the nodes of the sections that later checks point at,
// and which optional sections the spec gave.
type specNodes struct {
	backtestNode, selectionNode, intervalsNode *yaml.Node
	totalsNode                                 *yaml.Node
	decompNode, seasonNode                     *yaml.Node
	methodNodes, eventNodes                    []*yaml.Node
	haveDecomp, haveMethods                    bool
}

// specDefaults fills the defaults that depend on other fields.
func (d *decoder) specDefaults(s *Spec, sn *specNodes, root *yaml.Node) {
	if s.Calendar.Frequency != "" && s.Calendar.SeasonLength == 0 && sn.seasonNode == nil {
		s.Calendar.SeasonLength = DefaultSeasonLength[s.Calendar.Frequency]
	}
	if s.Output == "" && s.Name != "" {
		s.Output = DefaultOutputRoot + "/" + s.Name
	}
	if !sn.haveMethods && s.Calendar.SeasonLength > 0 {
		// The default automatic spec: almanac's pool, and its backtest
		// and selection where the spec gives none.
		s.Automatic = true
		s.Methods = DefaultMethods(s.Calendar, hasDrivers(s))
		sn.methodNodes = make([]*yaml.Node, len(s.Methods))
		for i := range sn.methodNodes {
			sn.methodNodes[i] = root
		}
		if sn.backtestNode == nil {
			s.Backtest = DefaultAutomaticBacktest
		}
		if sn.selectionNode == nil {
			s.Selection = DefaultAutomaticSelection(len(s.Methods), EventAware(s))
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
}

// checkSelection checks the selection has a backtest to rank by and a
// combination no wider than the method list.
func (d *decoder) checkSelection(s *Spec, sn *specNodes) {
	if sn.selectionNode != nil && sn.backtestNode == nil && !s.Automatic {
		d.errAt(sn.selectionNode, "selection", "selection ranks methods by their backtest; add a backtest section")
	}
	if c := s.Selection.Combine; c != nil && c.Top > len(s.Methods) && len(s.Methods) > 0 && len(d.errs) == 0 {
		d.errAt(childAt(sn.selectionNode, "combine", "top"), "selection.combine.top", "top is %d but the spec names only %d method(s)", c.Top, len(s.Methods))
	}
}

// checkLabels checks method labels are unique and that the selection's
// fallback, routes and combination refer to them rightly.
func (d *decoder) checkLabels(s *Spec, sn *specNodes) {
	seen := map[string]int{}
	for i, m := range s.Methods {
		if j, dup := seen[m.Label]; dup {
			d.errAt(sn.methodNodes[i], fmt.Sprintf("methods[%d]", i),
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
				d.errAt(sn.selectionNode, "selection.fallback", "fallback %q is not the label of a method; labels: %s", fb, quoteList(labels))
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
			d.errAt(sn.selectionNode, "selection.combine.label", "label %q is already used by a method; give the combination another label", c.Label)
		}
	}
}

// checkBacktestNeeds checks the sections that draw on backtest errors.
func (d *decoder) checkBacktestNeeds(s *Spec, sn *specNodes) {
	if sn.totalsNode != nil {
		switch {
		case sn.backtestNode == nil:
			d.errAt(sn.totalsNode, "totals", "quantiles of totals come from backtest errors; add a backtest section")
		case s.Horizon > 0 && s.Backtest.Horizon > 0:
			for _, l := range s.Totals.LeadTimes {
				if l > s.Horizon {
					d.errAt(sn.totalsNode, "totals.lead_times", "lead time %d is longer than the horizon (%d)", l, s.Horizon)
				} else if l > s.Backtest.Horizon {
					d.errAt(sn.totalsNode, "totals.lead_times", "lead time %d is longer than the backtest horizon (%d): its quantiles come from backtest windows at least that long", l, s.Backtest.Horizon)
				}
			}
		}
	}
	if sn.intervalsNode != nil && s.Intervals.Source == "empirical" && sn.backtestNode == nil {
		d.errAt(sn.intervalsNode, "intervals", "empirical intervals come from backtest errors; add a backtest section or use source: model")
	}
}

// checkSeasonLength checks the seasonal methods and the decomposition
// against a season length of 1.
func (d *decoder) checkSeasonLength(s *Spec, sn *specNodes) {
	if s.Calendar.SeasonLength == 1 {
		for i, m := range s.Methods {
			if catalog[m.Method].Seasonal {
				d.errAt(sn.methodNodes[i], fmt.Sprintf("methods[%d]", i),
					"%s needs a season length of at least 2, but calendar.season_length is %d%s",
					m.Method, s.Calendar.SeasonLength, defaultNote(sn.seasonNode, s.Calendar.Frequency))
			}
		}
		if sn.haveDecomp {
			d.errAt(sn.decompNode, "decomposition",
				"a decomposition needs a season length of at least 2, but calendar.season_length is %d%s",
				s.Calendar.SeasonLength, defaultNote(sn.seasonNode, s.Calendar.Frequency))
		}
	}
}

// shaping decodes the shaping section into sh.
func (d *decoder) shaping(n *yaml.Node, p string, sh *Shaping) {
	d.mapping(n, p, "shaping", []field{
		{"combine", false, func(n *yaml.Node, p string) {
			d.enum(n, p, "combine rule", CombineRules, (*string)(&sh.Combine))
		}},
		{"gaps", false, func(n *yaml.Node, p string) {
			d.enum(n, p, "gap rule", GapRules, (*string)(&sh.Gaps))
		}},
		{"end", false, func(n *yaml.Node, p string) {
			d.enum(n, p, "history end", Ends, (*string)(&sh.End))
		}},
		{"until", false, func(n *yaml.Node, p string) { d.day(n, p, "the last day to read", &sh.Until) }},
		{"stray_dates", false, func(n *yaml.Node, p string) {
			d.enum(n, p, "stray date rule", StrayRules, (*string)(&sh.StrayDates))
		}},
		{"partial_period", false, func(n *yaml.Node, p string) {
			d.enum(n, p, "partial period rule", PartialRules, (*string)(&sh.Partial))
		}},
		{"key_variants", false, func(n *yaml.Node, p string) {
			d.enum(n, p, "key variant rule", KeyVariantRules, (*string)(&sh.KeyVariants))
		}},
	})
}

// report decodes the report section.
func (d *decoder) report(n *yaml.Node, p string) *Report {
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
	return r
}

// limits decodes the limits section into l.
func (d *decoder) limits(n *yaml.Node, p string, l *Limits) {
	d.mapping(n, p, "limits", []field{
		{"max_series", false, func(n *yaml.Node, p string) {
			if d.integer(n, p, "the most series a run may hold", &l.MaxSeries) && l.MaxSeries < 1 {
				d.errAt(n, p, "max_series must be at least 1, found %d", l.MaxSeries)
			}
		}},
		{"max_periods", false, func(n *yaml.Node, p string) {
			if d.integer(n, p, "the longest series, in periods", &l.MaxPeriods) && l.MaxPeriods < 1 {
				d.errAt(n, p, "max_periods must be at least 1, found %d", l.MaxPeriods)
			}
		}},
	})
}

func defaultNote(seasonNode *yaml.Node, f Frequency) string {
	if seasonNode != nil {
		return ""
	}
	return fmt.Sprintf(" (the default for frequency %s); set calendar.season_length", f)
}

// childAt returns the node at the path of keys below the mapping n, or
// the deepest mapping on the way when a key is absent, so that an error
// about a value points at it. Aliases are followed (the decoder has
// already counted and bounded them).
func childAt(n *yaml.Node, keys ...string) *yaml.Node {
	for _, k := range keys {
		for n != nil && n.Kind == yaml.AliasNode {
			n = n.Alias
		}
		if n == nil || n.Kind != yaml.MappingNode {
			return n
		}
		var next *yaml.Node
		for i := 0; i+1 < len(n.Content); i += 2 {
			if n.Content[i].Value == k {
				next = n.Content[i+1]
				break
			}
		}
		if next == nil {
			return n
		}
		n = next
	}
	return n
}
