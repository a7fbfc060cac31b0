// Package report writes report.html into an almanac run folder: one
// self-contained page (inline CSS and SVG, no scripts, nothing fetched)
// that summarises the run, its leaderboard and the spread of per-series
// scores, and charts a handful of series — those asked for, the worst
// scoring, and those whose forecast changed most since a previous run.
package report

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"almanac/pipeline/runfolder"
)

// FileName is the report's file name inside the run folder.
const FileName = "report.html"

// DefaultPicks is how many series each automatic pick adds when
// Options.Picks is 0.
const DefaultPicks = 6

// Headings of the page's sections, in page order. A section without
// material (no backtest, no previous run, no series) is left out.
const (
	HeadSummary     = "Run summary"
	HeadLeaderboard = "Leaderboard"
	HeadScores      = "Scores across series"
	HeadWorst       = "Worst-scoring series"
	HeadChanged     = "Changed most since the previous run"
	HeadSeries      = "Series charts"
)

// Options say what the report shows.
type Options struct {
	// Title heads the page; "" means "Forecast report: <spec name>".
	Title string
	// Series to chart, each a key as "a / b": the key values in spec key
	// order joined by " / " ("" for the one series of a run without key
	// columns). Keys not in the run are listed on the page, not an error.
	Series []string
	// Picks is how many series each automatic pick adds: the worst scoring
	// by the chosen entry's backtest score and, with Previous, those whose
	// forecast changed most. 0 means DefaultPicks; negative means none.
	Picks int
	// Previous is an earlier run folder to compare forecasts with; "" for
	// none. A previous run that cannot be read or matched is noted on the
	// page, not an error.
	Previous string
	// Method is the method (label) to chart for runs without a backtest,
	// which have no chosen rows; "" means the spec's first method. Runs
	// with a backtest always chart each series' chosen entry.
	Method string
}

// Write writes runDir/report.html. runDir is a run folder, committed or
// still staged (it needs manifest.json and the tables); the file is
// written to a temporary name and renamed into place.
func Write(runDir string, opt Options) error {
	m, err := load(runDir, opt)
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	page := m.render()
	tmp := filepath.Join(runDir, "."+FileName+".tmp")
	if err := os.WriteFile(tmp, []byte(page), 0o644); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	if err := os.Rename(tmp, filepath.Join(runDir, FileName)); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("report: %w", err)
	}
	return nil
}

// displayKey is how a series key reads on the page.
func displayKey(k string) string {
	if k == "" {
		return "(the only series)"
	}
	return k
}

type page struct {
	strings.Builder
}

func (p *page) f(format string, args ...any) { fmt.Fprintf(&p.Builder, format, args...) }

const css = `
:root{color-scheme:light}
*{box-sizing:border-box}
body{margin:0;background:#fbfbf8;color:#1d1d1d;font:15px/1.5 system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif}
main{max-width:1060px;margin:0 auto;padding:28px 28px 60px}
h1{font-size:26px;margin:0 0 4px;font-weight:650;letter-spacing:-.01em}
h2{font-size:20px;margin:40px 0 10px;padding-top:14px;border-top:2px solid #1d1d1d;font-weight:650}
h3{font-size:17px;margin:30px 0 4px;font-weight:650}
p{margin:6px 0 10px}
.lede{color:#4a4a4a;margin:0 0 14px}
a{color:#1b4f8a}
nav ol{margin:6px 0 0;padding:0;list-style:none;display:flex;flex-wrap:wrap;gap:4px 18px;font-size:14px}
code,.mono{font-family:ui-monospace,SFMono-Regular,Menlo,Consolas,monospace;font-size:13px}
.hash{word-break:break-all}
table{border-collapse:collapse;margin:8px 0 14px;font-size:14px}
th,td{padding:4px 12px 4px 0;text-align:left;vertical-align:top;border-bottom:1px solid #dedbd2}
thead th{border-bottom:1.5px solid #1d1d1d;font-weight:600}
td.num,th.num{text-align:right;font-variant-numeric:tabular-nums;padding-left:12px}
tr.best td{font-weight:650}
dl.facts{display:grid;grid-template-columns:max-content 1fr;gap:3px 18px;margin:8px 0 14px}
dl.facts dt{color:#555}
dl.facts dd{margin:0}
.note{color:#4a4a4a;font-size:14px}
.warn{background:#fff4e0;border-left:4px solid #b15a00;padding:6px 10px}
figure{margin:10px 0 6px}
figcaption{font-size:13px;color:#4a4a4a}
table.totals caption{caption-side:top;text-align:left;font-size:14px;color:#4a4a4a;padding:8px 0 4px}
svg.chart{display:block;width:100%;height:auto;max-width:1000px;background:#fbfaf6;border:1px solid #e4e1d8}
svg .tick{font-size:12px;fill:#404040}
svg .axis{font-size:12.5px;fill:#2b2b2b}
svg .head{font-size:13px;font-weight:600;fill:#1d1d1d}
svg .small{font-size:12px;fill:#2b2b2b}
svg .value{font-size:12px;fill:#1d1d1d;font-variant-numeric:tabular-nums}
svg .label{font-size:13px;fill:#1d1d1d}
svg .strong{font-weight:700}
svg text{font-family:system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif}
article.series{margin-bottom:26px}
.why{font-size:13px;color:#555;margin:0 0 6px}
details{margin:4px 0 10px;font-size:14px}
summary{cursor:pointer;color:#1b4f8a}
ul.problems{font-size:14px;margin:4px 0 10px;padding-left:20px}
footer{margin-top:48px;border-top:1px solid #c9c5b9;padding-top:10px;font-size:13px;color:#555}
@media print{body{background:#fff}svg.chart{border:none}h2{break-after:avoid}article.series{break-inside:avoid}}
`

func (m *model) render() string {
	var p page
	man := &m.run.Manifest
	title := m.opt.Title
	if title == "" {
		title = "Forecast report: " + man.Spec.Name
	}
	p.f("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
	p.f("<title>%s</title>\n<style>%s</style>\n</head>\n<body>\n<main>\n", esc(title), css)
	p.f("<header>\n<h1>%s</h1>\n", esc(title))
	lede := []string{"spec <strong>" + esc(man.Spec.Name) + "</strong>"}
	if m.spec.Calendar.Frequency != "" {
		lede = append(lede, fmt.Sprintf("%s data, season of %d", esc(freqWord(m.spec.Calendar.Frequency)), m.spec.Calendar.SeasonLength))
	}
	if m.spec.Horizon > 0 {
		lede = append(lede, fmt.Sprintf("%d periods ahead", m.spec.Horizon))
	}
	if m.extra.StartedAt != "" {
		lede = append(lede, "run started "+esc(shortTime(m.extra.StartedAt)))
	}
	p.f("<p class=\"lede\">%s</p>\n", strings.Join(lede, " · "))

	type sec struct{ id, head string }
	var secs []sec
	secs = append(secs, sec{"summary", HeadSummary})
	lb := man.Leaderboard
	if lb != nil && len(lb.Entries) > 0 {
		secs = append(secs, sec{"leaderboard", HeadLeaderboard})
	}
	scores := m.scores()
	if len(scores) > 0 {
		secs = append(secs, sec{"scores", HeadScores})
	}
	if len(m.worst) > 0 {
		secs = append(secs, sec{"worst", HeadWorst})
	}
	if m.prevDir != "" {
		secs = append(secs, sec{"changed", HeadChanged})
	}
	if len(m.series) > 0 || len(m.missing) > 0 {
		secs = append(secs, sec{"series", HeadSeries})
	}
	p.f("<nav aria-label=\"Sections\"><ol>")
	for _, s := range secs {
		p.f("<li><a href=\"#%s\">%s</a></li>", s.id, esc(s.head))
	}
	p.f("</ol></nav>\n</header>\n")

	m.renderSummary(&p)
	if lb != nil && len(lb.Entries) > 0 {
		m.renderLeaderboard(&p)
	}
	if len(scores) > 0 {
		m.renderScores(&p, scores)
	}
	if len(m.worst) > 0 {
		m.renderWorst(&p)
	}
	if m.prevDir != "" {
		m.renderChanged(&p)
	}
	if len(m.series) > 0 || len(m.missing) > 0 {
		m.renderSeries(&p)
	}
	p.f("<footer><p>Written by almanac %s from the tables of this run folder. Forecasts are estimates, not facts: compare them with the benchmark methods and read the problems table before acting on them.</p></footer>\n", esc(man.Almanac))
	p.f("</main>\n</body>\n</html>\n")
	return p.String()
}

func freqWord(f string) string {
	if w, ok := map[string]string{"day": "daily", "week": "weekly", "month": "monthly", "quarter": "quarterly", "year": "yearly"}[f]; ok {
		return w
	}
	return f
}

func shortTime(rfc string) string {
	// 2026-12-01T22:30:04.458762124Z → 2026-12-01 22:30:04 UTC
	s := strings.Replace(rfc, "T", " ", 1)
	if i := strings.IndexByte(s, '.'); i > 0 {
		s = s[:i]
	}
	s = strings.TrimSuffix(s, "Z")
	if strings.HasSuffix(rfc, "Z") {
		s += " UTC"
	}
	return s
}

func (m *model) renderSummary(p *page) {
	man := &m.run.Manifest
	p.f("<section id=\"summary\">\n<h2>%s</h2>\n<dl class=\"facts\">\n", HeadSummary)
	fact := func(k, v string) { p.f("<dt>%s</dt><dd>%s</dd>\n", esc(k), v) }
	fact("Spec", esc(man.Spec.Name))
	if man.Spec.File != "" {
		fact("Spec file", "<code>"+esc(man.Spec.File)+"</code>")
	}
	fact("Spec SHA-256", "<code class=\"hash\">"+esc(man.Spec.SHA256)+"</code>")
	if man.RunID != "" {
		fact("Run id", "<code>"+esc(man.RunID)+"</code>")
	}
	if man.Almanac != "" {
		fact("almanac version", esc(man.Almanac))
	}
	if m.extra.StartedAt != "" {
		v := esc(shortTime(m.extra.StartedAt))
		if m.extra.Seconds > 0 {
			v += fmt.Sprintf(", took %s s", fmtNum(m.extra.Seconds, 2))
		}
		fact("Started", v)
	}
	keys := "none (one series)"
	if len(m.keys) > 0 {
		keys = esc(strings.Join(m.keys, ", "))
	}
	fact("Key columns", keys)
	fact("Series", fmtNum(float64(man.Series), 0))
	if m.extra.RowsRead > 0 {
		v := fmtNum(float64(m.extra.RowsRead), 0)
		if m.extra.MissingValues > 0 {
			v += fmt.Sprintf(" (%s with no value)", fmtNum(float64(m.extra.MissingValues), 0))
		}
		fact("Rows read", v)
	}
	var methods []string
	for _, me := range man.Methods {
		methods = append(methods, esc(me.Label))
	}
	if len(methods) > 0 {
		fact("Methods", strings.Join(methods, ", "))
	}
	if bt := m.specX.Backtest; bt != nil && bt.Folds > 0 {
		v := fmt.Sprintf("%d folds, %s window", bt.Folds, esc(bt.Window))
		if m.metric != "" {
			v += ", selection by " + esc(strings.ToUpper(m.metric))
		}
		fact("Backtest", v)
	} else {
		fact("Backtest", "none (no scores, no choices)")
	}
	if len(m.levels) > 0 {
		v := esc(joinLevels(m.levels))
		if m.specX.Intervals != nil && m.specX.Intervals.Source != "" {
			v += ", " + esc(m.specX.Intervals.Source)
		}
		fact("Intervals", v)
	}
	p.f("</dl>\n")

	m.renderInputs(p)
	m.renderProblemCounts(p)
	p.f("</section>\n")
}

// renderInputs writes the table of the run's inputs.
func (m *model) renderInputs(p *page) {
	man := &m.run.Manifest
	if len(man.Inputs) > 0 {
		p.f("<table class=\"inputs\">\n<caption class=\"note\" style=\"text-align:left\">Inputs</caption>\n<thead><tr><th>path</th><th>format</th><th class=\"num\">rows</th><th class=\"num\">size</th><th>SHA-256</th></tr></thead>\n<tbody>\n")
		for _, in := range man.Inputs {
			p.f("<tr><td><code>%s</code></td><td>%s</td><td class=\"num\">%s</td><td class=\"num\">%s</td><td><code title=\"%s\">%s…</code></td></tr>\n",
				esc(in.Path), esc(in.Format), fmtNum(float64(in.Rows), 0), runfolder.HumanBytes(in.Size), esc(in.SHA256), esc(prefix(in.SHA256, 12)))
		}
		p.f("</tbody>\n</table>\n")
	}
}

// renderProblemCounts writes the problems counted by severity and stage.
func (m *model) renderProblemCounts(p *page) {
	// problems by severity, and by stage
	sev := map[string]int{}
	byStage := map[string]map[string]int{}
	var stages []string
	for _, pr := range m.problems {
		sev[pr.severity]++
		if byStage[pr.stage] == nil {
			byStage[pr.stage] = map[string]int{}
			stages = append(stages, pr.stage)
		}
		byStage[pr.stage][pr.severity]++
	}
	p.f("<h3 id=\"problems\">Problems</h3>\n")
	if len(m.problems) == 0 {
		p.f("<p class=\"problem-counts\">No problems were recorded: <span data-severity=\"error\">0 errors</span>, <span data-severity=\"warning\">0 warnings</span>.</p>\n")
	} else {
		p.f("<p class=\"problem-counts\"><span data-severity=\"error\">%s</span>, <span data-severity=\"warning\">%s</span> in the problems table. An error means a series or method gave no output; a warning, output with a caveat.</p>\n",
			plural(sev["error"], "error"), plural(sev["warning"], "warning"))
		sevs := []string{"error", "warning"}
		for s := range sev {
			if s != "error" && s != "warning" {
				sevs = append(sevs, s)
			}
		}
		sort.Strings(sevs[2:])
		p.f("<table class=\"problems-by-stage\">\n<thead><tr><th>stage</th>")
		for _, s := range sevs {
			p.f("<th class=\"num\">%s</th>", esc(s))
		}
		p.f("</tr></thead>\n<tbody>\n")
		for _, st := range stages {
			p.f("<tr><td>%s</td>", esc(st))
			for _, s := range sevs {
				p.f("<td class=\"num\">%d</td>", byStage[st][s])
			}
			p.f("</tr>\n")
		}
		p.f("</tbody>\n</table>\n")
	}
}

func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	if strings.HasSuffix(word, "s") {
		return fmtNum(float64(n), 0) + " " + word
	}
	return fmt.Sprintf("%s %ss", fmtNum(float64(n), 0), word)
}

func prefix(s string, n int) string {
	if len(s) <= n {
		return s
	}
	return s[:n]
}

func (m *model) renderLeaderboard(p *page) {
	lb := m.run.Manifest.Leaderboard
	p.f("<section id=\"leaderboard\">\n<h2>%s</h2>\n", HeadLeaderboard)
	p.f("<p>For each entry, the mean and the median over the series it could score of each series' mean backtest MASE: the forecast's mean absolute error divided by that of the seasonal naive method within the fold's training part, so that below 1 means smaller errors than that benchmark made in-sample. Win share is the share of all series the entry was chosen for")
	if m.metric != "" && m.metric != "mase" {
		p.f(" (choices rank by %s, the leaderboard by MASE)", esc(strings.ToUpper(m.metric)))
	}
	p.f(".</p>\n")
	lowest := -1
	for i, e := range lb.Entries {
		if e.Series > 0 && !math.IsNaN(float64(e.MeanMASE)) && (lowest < 0 || e.MeanMASE < lb.Entries[lowest].MeanMASE) {
			lowest = i
		}
	}
	p.f("<table class=\"leaderboard\">\n<thead><tr><th>entry</th><th class=\"num\">series scored</th><th class=\"num\">mean MASE</th><th class=\"num\">median MASE</th><th class=\"num\">win share</th><th class=\"num\">series chosen</th></tr></thead>\n<tbody>\n")
	var entries []lbEntry
	for i, e := range lb.Entries {
		mean, med := float64(e.MeanMASE), float64(e.MedianMASE)
		if e.Series == 0 {
			mean, med = math.NaN(), math.NaN()
		}
		chosen := lb.Chosen[e.Method]
		cls := ""
		if i == lowest {
			cls = " class=\"best\""
		}
		p.f("<tr%s data-entry=\"%s\"><td>%s%s</td><td class=\"num\" data-value=\"%d\">%d</td><td class=\"num\" data-value=\"%s\">%s</td><td class=\"num\" data-value=\"%s\">%s</td><td class=\"num\" data-value=\"%s\">%s</td><td class=\"num\" data-value=\"%d\">%d</td></tr>\n",
			cls, esc(e.Method), esc(e.Method), boolClass(i == lowest, " <span class=\"note\">(lowest mean)</span>"),
			e.Series, e.Series, exact(mean), fmtNum(mean, 3), exact(med), fmtNum(med, 3), exact(e.WinShare), fmtNum(100*e.WinShare, 1)+" %", chosen, chosen)
		entries = append(entries, lbEntry{label: e.Method, scored: e.Series, mean: mean, median: med, chosen: chosen, lowest: i == lowest})
	}
	p.f("</tbody>\n</table>\n")
	if m.extra.Leaderboard != nil && m.extra.Leaderboard.OnFallback > 0 {
		p.f("<p class=\"note\">%s had no entry that could be scored and took the fallback, <strong>%s</strong>.</p>\n",
			plural(m.extra.Leaderboard.OnFallback, "series"), esc(m.extra.Leaderboard.Fallback))
	}
	p.f("<figure>\n%s\n<figcaption>Entries sorted by mean MASE, lowest first. The dashed line marks MASE 1.</figcaption>\n</figure>\n", leaderboardChart("chart-leaderboard", entries))
	p.f("</section>\n")
}

// scores are the chosen entries' finite scores.
func (m *model) scores() []float64 {
	var out []float64
	for _, c := range m.choices {
		if !math.IsNaN(c.score) && !math.IsInf(c.score, 0) {
			out = append(out, c.score)
		}
	}
	return out
}

func (m *model) renderScores(p *page, scores []float64) {
	p.f("<section id=\"scores\">\n<h2>%s</h2>\n", HeadScores)
	unscored := len(m.choices) - len(scores)
	p.f("<p>The score of each series' chosen entry: its mean %s over the backtest folds. %s scored",
		esc(strings.ToUpper(m.metric)), plural(len(scores), "series"))
	if unscored > 0 {
		p.f("; %s without a score (fallback or no usable history) are not counted", fmtNum(float64(unscored), 0))
	}
	p.f(".</p>\n<figure>\n%s\n<figcaption>Histogram of per-series scores; the dashed line is the median.</figcaption>\n</figure>\n</section>\n",
		histogramChart("chart-scores", m.metric, scores))
}

// anchor is the page anchor of a charted series, "" when not charted.
func (m *model) anchor(key string) string {
	for i, s := range m.series {
		if s.key == key {
			return fmt.Sprintf("series-%d", i+1)
		}
	}
	return ""
}

func (m *model) seriesLink(key string) string {
	if a := m.anchor(key); a != "" {
		return fmt.Sprintf("<a href=\"#%s\">%s</a>", a, esc(displayKey(key)))
	}
	return esc(displayKey(key))
}
