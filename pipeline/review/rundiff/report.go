package rundiff

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Number formats shared by both reports (and documented for readers of
// the tests): totals and changes with two decimals, relative changes in
// percent with one decimal and a sign, scores with four decimals.

// FormatTotal formats a forecast total; "" for an undefined one.
func FormatTotal(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	return strconv.FormatFloat(v, 'f', 2, 64)
}

// FormatChange formats an absolute change, with its sign.
func FormatChange(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	return fmt.Sprintf("%+.2f", v)
}

// FormatRel formats a relative change as a signed percentage; "from 0"
// for a change from a zero base.
func FormatRel(v float64) string {
	switch {
	case math.IsNaN(v):
		return ""
	case math.IsInf(v, 0):
		return "from 0"
	}
	return fmt.Sprintf("%+.1f%%", 100*v)
}

// FormatScore formats a backtest score.
func FormatScore(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	return strconv.FormatFloat(v, 'f', 4, 64)
}

// FormatScoreChange formats a score change, with its sign.
func FormatScoreChange(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	return fmt.Sprintf("%+.4f", v)
}

// grid is a table to render as text or Markdown.
type grid struct {
	head  []string
	right []bool // right-aligned columns
	rows  [][]string
}

func (d *Diff) keyHeads() []string {
	if len(d.Keys) == 0 {
		return []string{"series"}
	}
	return d.Keys
}

func (d *Diff) keyCells(r Row) []string {
	if len(d.Keys) == 0 {
		return []string{"(all)"}
	}
	return r.Key
}

func label(l string) string {
	if l == "" {
		return "(none)"
	}
	return l
}

func (d *Diff) methodCell(r Row, arrow string) string {
	if d.Mode == ModePerMethod {
		return r.Method
	}
	if r.BaseMethod == r.HeadMethod {
		return label(r.BaseMethod)
	}
	return label(r.BaseMethod) + arrow + label(r.HeadMethod)
}

func (d *Diff) moversGrid(arrow string) grid {
	g := grid{head: append(append([]string{}, d.keyHeads()...), "method", "base total", "head total", "change", "change %")}
	if d.Mode == ModeChosen {
		g.head = append(g.head, "score change")
	}
	g.right = make([]bool, len(g.head))
	for i := len(d.keyHeads()) + 1; i < len(g.head); i++ {
		g.right[i] = true
	}
	for _, r := range d.Movers {
		row := append(append([]string{}, d.keyCells(r)...), d.methodCell(r, arrow),
			FormatTotal(r.BaseTotal), FormatTotal(r.HeadTotal), FormatChange(r.AbsChange), FormatRel(r.RelChange))
		if d.Mode == ModeChosen {
			row = append(row, FormatScoreChange(r.ScoreChange))
		}
		g.rows = append(g.rows, row)
	}
	return g
}

func (d *Diff) transitionsGrid() grid {
	g := grid{head: []string{"from", "to", "series"}, right: []bool{false, false, true}}
	for _, t := range d.Transitions {
		g.rows = append(g.rows, []string{label(t.From), label(t.To), strconv.Itoa(t.Series)})
	}
	return g
}

// switchesGrid lists switched series, at most the list limit; it returns
// how many were left out.
func (d *Diff) switchesGrid() (grid, int) {
	g := grid{head: append(append([]string{}, d.keyHeads()...), "base method", "head method", "base score", "head score", "score change", "change %")}
	g.right = make([]bool, len(g.head))
	for i := len(d.keyHeads()) + 2; i < len(g.head); i++ {
		g.right[i] = true
	}
	rows := d.Switches
	left := 0
	if d.listLimit > 0 && len(rows) > d.listLimit {
		left = len(rows) - d.listLimit
		rows = rows[:d.listLimit]
	}
	for _, r := range rows {
		g.rows = append(g.rows, append(append([]string{}, d.keyCells(r)...), label(r.BaseMethod), label(r.HeadMethod),
			FormatScore(r.BaseScore), FormatScore(r.HeadScore), FormatScoreChange(r.ScoreChange), FormatRel(r.RelChange)))
	}
	return g, left
}

func (d *Diff) countsGrid() grid {
	c := d.Counts
	g := grid{head: []string{"", "base", "head"}, right: []bool{false, true, true}}
	g.rows = [][]string{
		{"series", strconv.Itoa(c.BaseSeries), strconv.Itoa(c.HeadSeries)},
		{"horizon", strconv.Itoa(d.Base.Horizon), strconv.Itoa(d.Head.Horizon)},
		{"methods", strconv.Itoa(len(d.Base.Methods)), strconv.Itoa(len(d.Head.Methods))},
		{"backtest", yesNo(d.Base.Backtest), yesNo(d.Head.Backtest)},
	}
	if d.Base.Metric != "" || d.Head.Metric != "" {
		g.rows = append(g.rows, []string{"selection metric", d.Base.Metric, d.Head.Metric})
	}
	g.rows = append(g.rows, []string{"spec hash", shortHash(d.Base.SpecSHA256), shortHash(d.Head.SpecSHA256)})
	return g
}

func (d *Diff) changesGrid() grid {
	c := d.Counts
	unit := "series"
	if d.Mode == ModePerMethod {
		unit = "series × method"
	}
	g := grid{head: []string{unit, "count"}, right: []bool{false, true}}
	g.rows = [][]string{
		{"changed", strconv.Itoa(c.Changed)},
		{"unchanged", strconv.Itoa(c.Unchanged)},
		{"added", strconv.Itoa(c.Added)},
		{"removed", strconv.Itoa(c.Removed)},
		{"forecast total changed", strconv.Itoa(c.TotalsChanged)},
	}
	if d.Mode == ModeChosen {
		g.rows = append(g.rows,
			[]string{"switched method", strconv.Itoa(c.Switched)},
			[]string{"score better", strconv.Itoa(c.ScoreBetter)},
			[]string{"score worse", strconv.Itoa(c.ScoreWorse)})
	}
	return g
}

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

func shortHash(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

// headline is the one-sentence summary.
func (d *Diff) headline() string {
	c := d.Counts
	unit := "series"
	if d.Mode == ModePerMethod {
		unit = "series × method rows"
	}
	total := c.Changed + c.Unchanged
	var b strings.Builder
	fmt.Fprintf(&b, "%d of %d %s in both runs changed", c.Changed, total, unit)
	if d.Mode == ModeChosen {
		fmt.Fprintf(&b, ", %d switched method", c.Switched)
	}
	fmt.Fprintf(&b, "; %d series added, %d removed.", c.AddedSeries, c.RemovedSeries)
	return b.String()
}

// totalsLine describes the like-for-like sum of forecast totals.
func (d *Diff) totalsLine() string {
	c := d.Counts
	rel := math.NaN()
	if c.BaseSum != 0 {
		rel = (c.HeadSum - c.BaseSum) / math.Abs(c.BaseSum)
	}
	s := fmt.Sprintf("Sum of forecast totals over rows in both runs: %s → %s (%s)", FormatTotal(c.BaseSum), FormatTotal(c.HeadSum), FormatChange(c.HeadSum-c.BaseSum))
	if !math.IsNaN(rel) {
		s = strings.TrimSuffix(s, ")") + ", " + FormatRel(rel) + ")"
	}
	return s + "."
}

func (d *Diff) scoreLine() string {
	c := d.Counts
	if d.Mode != ModeChosen || c.ScoresCompared == 0 {
		return ""
	}
	return fmt.Sprintf("Mean change of the chosen entry's %s over %d scored series: %s (lower is better).",
		d.Head.Metric, c.ScoresCompared, FormatScoreChange(c.MeanScoreChange))
}

// specLines are the spec and input changes as plain sentences; code wraps
// identifiers (backticks in Markdown).
func (d *Diff) specLines(code func(string) string) []string {
	var out []string
	if d.SpecChanged {
		out = append(out, fmt.Sprintf("spec hash %s → %s", code(shortHash(d.Base.SpecSHA256)), code(shortHash(d.Head.SpecSHA256))))
	}
	for _, f := range d.SpecFields {
		out = append(out, fmt.Sprintf("spec %s: %s", code(f.Field), f.Note))
	}
	for _, in := range d.Inputs {
		switch in.Change {
		case "added":
			out = append(out, fmt.Sprintf("input %s added (%d rows)", code(in.Path), in.HeadRows))
		case "removed":
			out = append(out, fmt.Sprintf("input %s removed (had %d rows)", code(in.Path), in.BaseRows))
		case "moved":
			out = append(out, fmt.Sprintf("input %s is now read from %s (same content)", code(in.From), code(in.Path)))
		default:
			out = append(out, fmt.Sprintf("input %s changed: %s → %s, rows %d → %d, bytes %d → %d", code(in.Path),
				code(shortHash(in.BaseSHA256)), code(shortHash(in.HeadSHA256)), in.BaseRows, in.HeadRows, in.BaseSize, in.HeadSize))
		}
	}
	return out
}

// WriteText writes the comparison as plain text for a terminal.
func (d *Diff) WriteText(w io.Writer) {
	p := func(format string, args ...any) { fmt.Fprintf(w, format, args...) }
	name := d.Head.SpecName
	if d.Base.SpecName != d.Head.SpecName {
		name = d.Base.SpecName + " -> " + d.Head.SpecName
	}
	p("run comparison: %s\n", name)
	p("  base  %s\n  head  %s\n\n", d.Base.Dir, d.Head.Dir)
	p("%s\n%s\n", strings.ReplaceAll(d.headline(), "→", "->"), strings.ReplaceAll(d.totalsLine(), "→", "->"))
	if s := d.scoreLine(); s != "" {
		p("%s\n", s)
	}
	p("\n")
	writeTextGrid(w, d.countsGrid())
	p("\n")
	writeTextGrid(w, d.changesGrid())
	if len(d.Movers) == 0 {
		p("\nLargest movers: none (no forecast total changed)\n")
	} else {
		p("\nLargest movers (top %d by relative change of the forecast total)\n", len(d.Movers))
		writeTextGrid(w, d.moversGrid(" -> "))
	}
	if d.Mode == ModeChosen {
		p("\nMethod switches (%d)\n", d.Counts.Switched)
		if len(d.Switches) == 0 {
			p("  none\n")
		} else {
			writeTextGrid(w, d.transitionsGrid())
			p("\n")
			g, left := d.switchesGrid()
			writeTextGrid(w, g)
			if left > 0 {
				p("  ... and %d more\n", left)
			}
		}
	}
	p("\nSpec and inputs\n")
	lines := d.specLines(func(s string) string { return s })
	if len(lines) == 0 {
		p("  same spec, same inputs\n")
	}
	for _, l := range lines {
		p("  %s\n", strings.ReplaceAll(l, "→", "->"))
	}
	if len(d.Notes) > 0 {
		p("\nNotes\n")
		for _, n := range d.Notes {
			p("  %s\n", n)
		}
	}
}

func writeTextGrid(w io.Writer, g grid) {
	width := make([]int, len(g.head))
	for i, h := range g.head {
		width[i] = utf8.RuneCountInString(h)
	}
	for _, r := range g.rows {
		for i, c := range r {
			if n := utf8.RuneCountInString(textCell(c)); n > width[i] {
				width[i] = n
			}
		}
	}
	line := func(cells []string) {
		var b strings.Builder
		b.WriteString(" ")
		for i, c := range cells {
			pad := strings.Repeat(" ", width[i]-utf8.RuneCountInString(c))
			b.WriteString(" ")
			if g.right[i] {
				b.WriteString(pad + c)
			} else {
				b.WriteString(c + pad)
			}
		}
		fmt.Fprintln(w, strings.TrimRight(b.String(), " "))
	}
	line(g.head)
	rule := make([]string, len(g.head))
	for i := range rule {
		rule[i] = strings.Repeat("-", width[i])
	}
	line(rule)
	for _, r := range g.rows {
		cells := make([]string, len(r))
		for i, c := range r {
			cells[i] = textCell(c)
		}
		line(cells)
	}
}

func textCell(c string) string {
	if c == "" {
		return "-"
	}
	return c
}

// WriteMarkdown writes the comparison as GitHub-flavoured Markdown, ready
// to paste into a pull-request comment.
func (d *Diff) WriteMarkdown(w io.Writer) {
	p := func(format string, args ...any) { fmt.Fprintf(w, format, args...) }
	name := d.Head.SpecName
	if d.Base.SpecName != d.Head.SpecName {
		name = d.Base.SpecName + " → " + d.Head.SpecName
	}
	p("### Forecast run comparison: %s\n\n", mdEscape(name))
	p("**%s**\n", d.headline())
	p("%s\n", d.totalsLine())
	if s := d.scoreLine(); s != "" {
		p("%s\n", s)
	}
	p("\n")
	writeMarkdownGrid(w, d.countsGrid())
	p("\n")
	writeMarkdownGrid(w, d.changesGrid())
	p("\n#### Largest movers\n\n")
	if len(d.Movers) == 0 {
		p("No forecast total changed.\n")
	} else {
		p("Top %d by relative change of the forecast total over the horizon.\n\n", len(d.Movers))
		writeMarkdownGrid(w, d.moversGrid(" → "))
	}
	if d.Mode == ModeChosen {
		p("\n#### Method switches\n\n")
		if len(d.Switches) == 0 {
			p("No series switched method.\n")
		} else {
			writeMarkdownGrid(w, d.transitionsGrid())
			p("\n")
			g, left := d.switchesGrid()
			writeMarkdownGrid(w, g)
			if left > 0 {
				p("\n… and %d more switched series (see the Parquet diff).\n", left)
			}
		}
	}
	p("\n#### Spec and inputs\n\n")
	lines := d.specLines(func(s string) string { return "`" + strings.ReplaceAll(s, "`", "'") + "`" })
	if len(lines) == 0 {
		p("Same spec, same inputs.\n")
	}
	for _, l := range lines {
		p("- %s\n", l)
	}
	if len(d.Notes) > 0 {
		p("\n<sub>")
		for i, n := range d.Notes {
			if i > 0 {
				p(" · ")
			}
			p("%s", mdEscape(n))
		}
		p("</sub>\n")
	}
}

func writeMarkdownGrid(w io.Writer, g grid) {
	row := func(cells []string) {
		esc := make([]string, len(cells))
		for i, c := range cells {
			esc[i] = mdEscape(c)
		}
		fmt.Fprintf(w, "| %s |\n", strings.Join(esc, " | "))
	}
	row(g.head)
	rule := make([]string, len(g.head))
	for i := range rule {
		rule[i] = "---"
		if g.right[i] {
			rule[i] = "---:"
		}
	}
	fmt.Fprintf(w, "|%s|\n", strings.Join(rule, "|"))
	for _, r := range g.rows {
		cells := make([]string, len(r))
		for i, c := range r {
			cells[i] = c
			if c == "" {
				cells[i] = "—"
			}
		}
		row(cells)
	}
}

// mdEscape keeps a cell on one line and its pipes literal.
func mdEscape(s string) string {
	r := strings.NewReplacer("|", `\|`, "\n", " ", "\r", " ", "<", "&lt;", ">", "&gt;")
	return r.Replace(s)
}
