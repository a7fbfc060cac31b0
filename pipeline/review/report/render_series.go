package report

import (
	"fmt"
	"math"
	"strings"
)

func (m *model) renderWorst(p *page) {
	p.f("<section id=\"worst\">\n<h2>%s</h2>\n", HeadWorst)
	p.f("<p>The %d series whose chosen entry scored worst in the backtest (highest %s). Each is charted below.</p>\n", len(m.worst), esc(strings.ToUpper(m.metric)))
	p.f("<table class=\"worst\">\n<thead><tr><th class=\"num\">#</th><th>series</th><th>chosen</th><th class=\"num\">score</th><th>runner-up (score)</th><th>demand</th><th class=\"num\">folds</th><th>why chosen</th></tr></thead>\n<tbody>\n")
	for i, c := range m.worst {
		p.f("<tr data-key=\"%s\"><td class=\"num\">%d</td><td>%s</td><td>%s</td><td class=\"num\" data-value=\"%s\">%s</td><td>%s</td><td>%s</td><td class=\"num\">%d</td><td class=\"note\">%s</td></tr>\n",
			esc(c.key), i+1, m.seriesLink(c.key), esc(c.chosen), exact(c.score), fmtNum(c.score, 3), runnerUp(c), esc(dash(c.demandClass)), c.folds, esc(c.reason))
	}
	p.f("</tbody>\n</table>\n</section>\n")
}

func runnerUp(c choice) string {
	if c.runnerUp == "" {
		return "—"
	}
	return fmt.Sprintf("%s (%s)", esc(c.runnerUp), fmtNum(c.runnerUpScore, 3))
}

func dash(s string) string {
	if s == "" {
		return "—"
	}
	return s
}

func (m *model) renderChanged(p *page) {
	p.f("<section id=\"changed\">\n<h2>%s</h2>\n", HeadChanged)
	p.f("<p>Compared with the run in <code>%s</code>.</p>\n", esc(m.prevDir))
	if m.prevErr != "" {
		p.f("<p class=\"warn\">No comparison: %s</p>\n</section>\n", esc(m.prevErr))
		return
	}
	if len(m.changes) == 0 {
		p.f("<p>No series has forecast periods in common with the previous run.</p>\n")
	} else {
		n := m.opt.Picks
		if n == 0 {
			n = DefaultPicks
		}
		n = max(0, min(n, len(m.changes)))
		p.f("<p>Change is the mean absolute difference between the two runs' forecasts over the periods both forecast, as a share of the previous forecast's mean absolute value. The %d that changed most are charted below, with the previous forecast dotted. %d series were compared.</p>\n", n, len(m.changes))
		p.f("<table class=\"changed\">\n<thead><tr><th class=\"num\">#</th><th>series</th><th class=\"num\">change</th><th class=\"num\">periods compared</th><th>previous entry</th><th>entry now</th></tr></thead>\n<tbody>\n")
		for i, c := range m.changes[:n] {
			ch := fmtNum(100*c.rel, 1) + " %"
			if math.IsInf(c.rel, 1) {
				ch = "from zero"
			}
			p.f("<tr data-key=\"%s\"><td class=\"num\">%d</td><td>%s</td><td class=\"num\" data-value=\"%s\">%s</td><td class=\"num\">%d</td><td>%s</td><td>%s</td></tr>\n",
				esc(c.key), i+1, m.seriesLink(c.key), exact(c.rel), ch, c.periods, esc(c.prevMethod), esc(c.nowMethod))
		}
		p.f("</tbody>\n</table>\n")
	}
	if m.newOnly > 0 || m.prevOnly > 0 {
		p.f("<p class=\"note\">%s only in this run, %s only in the previous one.</p>\n", plural(m.newOnly, "series"), plural(m.prevOnly, "series"))
	}
	p.f("</section>\n")
}

func (m *model) renderSeries(p *page) {
	p.f("<section id=\"series\">\n<h2>%s</h2>\n", HeadSeries)
	if m.methodNote != "" {
		p.f("<p class=\"warn\">%s</p>\n", esc(m.methodNote))
	}
	if m.noPickBy != "" {
		p.f("<p class=\"note\">%s</p>\n", esc(m.noPickBy))
	}
	if len(m.missing) > 0 {
		var ks []string
		for _, k := range m.missing {
			ks = append(ks, "<code>"+esc(displayKey(k))+"</code>")
		}
		p.f("<p class=\"warn missing-series\">Asked for but not in this run: %s. Keys are the key values in the order %s, joined by “ / ”.</p>\n",
			strings.Join(ks, ", "), esc(strings.Join(m.keys, ", ")))
	}
	if len(m.series) > 0 {
		p.f("<p>Black: the history. Dashed orange: the decomposition's trend, where it is defined. Blue: the forecast drawn")
		if len(m.levels) > 0 {
			p.f(", shaded by its intervals")
		}
		p.f(". Below each: the seasonal pattern the decomposition found.</p>\n")
	}
	freq := m.spec.Calendar.Frequency
	for i, s := range m.series {
		id := fmt.Sprintf("series-%d", i+1)
		p.f("<article class=\"series\" id=\"%s\" data-key=\"%s\">\n<h3>%s</h3>\n", id, esc(s.key), esc(displayKey(s.key)))
		p.f("<p class=\"why\">Listed: %s.</p>\n", esc(strings.Join(s.reasons, "; ")))
		p.f("<dl class=\"facts\">\n")
		if s.method != "" {
			what := esc(s.method)
			if s.choice == nil && len(m.choices) == 0 {
				if m.opt.Method != "" {
					what += " <span class=\"note\">(as asked; the run has no backtest to choose by)</span>"
				} else {
					what += " <span class=\"note\">(the spec's first method; the run has no backtest to choose by)</span>"
				}
			}
			p.f("<dt>Forecast drawn</dt><dd>%s</dd>\n", what)
		}
		if s.model != "" {
			p.f("<dt>Model</dt><dd><code>%s</code></dd>\n", esc(s.model))
		}
		if c := s.choice; c != nil {
			if !math.IsNaN(c.score) {
				p.f("<dt>Score</dt><dd>%s %s over %d folds", esc(strings.ToUpper(c.metric)), fmtNum(c.score, 3), c.folds)
				if c.runnerUp != "" {
					p.f("; runner-up %s at %s", esc(c.runnerUp), fmtNum(c.runnerUpScore, 3))
				}
				p.f("</dd>\n")
			}
			if c.demandClass != "" {
				p.f("<dt>Demand</dt><dd>%s</dd>\n", esc(c.demandClass))
			}
			if c.reason != "" {
				p.f("<dt>Why chosen</dt><dd>%s</dd>\n", esc(c.reason))
			}
		}
		if s.source != "" {
			p.f("<dt>Intervals</dt><dd>%s</dd>\n", esc(s.source))
		}
		p.f("</dl>\n")
		shown := ""
		if hist := m.maxHistory(); hist > 0 && len(s.periods) > hist {
			shown = fmt.Sprintf(" The last %d of %d periods of history are drawn.", hist, len(s.periods))
		}
		p.f("<figure>\n%s\n<figcaption>%s: history and forecast.%s</figcaption>\n</figure>\n",
			seriesChart("chart-"+id, s, m.levels, freq, m.maxHistory()), esc(displayKey(s.key)), shown)
		if len(s.factors) > 0 && m.spec.Calendar.SeasonLength > 1 {
			p.f("<figure>\n%s\n<figcaption>Seasonal pattern of %s (bars above the line: above the neutral value).</figcaption>\n</figure>\n",
				factorChart("factors-"+id, s, freq, m.spec.Calendar.SeasonLength), esc(displayKey(s.key)))
		} else if m.spec.Calendar.SeasonLength > 1 {
			p.f("<p class=\"note\">No seasonal factors for this series (see its problems).</p>\n")
		}
		if len(s.forecast) > 0 {
			m.renderForecastTable(p, s)
		}
		m.renderTotals(p, s)
		if len(s.problems) > 0 {
			p.f("<ul class=\"problems\">\n")
			for _, pr := range s.problems {
				where := pr.stage
				if pr.method != "" {
					where += ", " + pr.method
				}
				p.f("<li><strong>%s</strong> (%s): %s</li>\n", esc(pr.severity), esc(where), esc(pr.message))
			}
			p.f("</ul>\n")
		}
		p.f("</article>\n")
	}
	p.f("</section>\n")
}

// maxHistory is how many periods of history a series chart draws: enough
// for three seasons and for eight times the horizon, and at least 60, so
// that the forecast stays legible beside a long history.
func (m *model) maxHistory() int {
	return max(60, 3*m.spec.Calendar.SeasonLength, 8*m.spec.Horizon)
}

func (m *model) renderForecastTable(p *page, s *seriesData) {
	lv := drawnLevels(s, m.levels)
	idx := map[int]int{}
	for j, l := range m.levels {
		idx[l] = j
	}
	p.f("<details>\n<summary>Forecast values (%d periods)</summary>\n<table class=\"forecast\">\n<thead><tr><th>period</th><th class=\"num\">forecast</th>", len(s.forecast))
	for _, l := range lv {
		p.f("<th class=\"num\">%d%% low</th><th class=\"num\">%d%% high</th>", l, l)
	}
	p.f("</tr></thead>\n<tbody>\n")
	for _, pt := range s.forecast {
		p.f("<tr><td>%s</td><td class=\"num\">%s</td>", isoDate(pt.period), fmtAuto(pt.value))
		for _, l := range lv {
			j := idx[l]
			p.f("<td class=\"num\">%s</td><td class=\"num\">%s</td>", fmtAuto(pt.lower[j]), fmtAuto(pt.upper[j]))
		}
		p.f("</tr>\n")
	}
	p.f("</tbody>\n</table>\n</details>\n")
}
