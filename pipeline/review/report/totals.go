package report

import (
	"strconv"
	"strings"
	"time"

	"almanac/pipeline/runfolder"
)

// totalRow is one lead time of a series' totals table rows.
type totalRow struct {
	lead        int
	first, last time.Time
	total       float64
	source      string
	quantiles   []float64 // by the run's totals levels
}

// totalLevels are the levels of the quantile_<P> columns of the totals
// table, in table order.
func totalLevels(cols []string) []int {
	var out []int
	for _, c := range cols {
		if l, ok := strings.CutPrefix(c, "quantile_"); ok {
			if v, err := strconv.Atoi(l); err == nil {
				out = append(out, v)
			}
		}
	}
	return out
}

// loadTotals reads the totals rows of the charted series.
func (m *model) loadTotals(r *runfolder.Run, by map[string]*seriesData, filter func(cols ...string) runfolder.ScanFilter) error {
	if !r.HasTable(runfolder.TableTotals) {
		return nil
	}
	cols, err := r.Columns(runfolder.TableTotals)
	if err != nil {
		return err
	}
	m.totalLevels = totalLevels(cols)
	want := []string{runfolder.ColLeadTime, runfolder.ColFirstPeriod, runfolder.ColLastPeriod, runfolder.ColTotal, runfolder.ColTotalSource}
	for _, l := range m.totalLevels {
		want = append(want, runfolder.ColQuantile(l))
	}
	return r.Scan(runfolder.TableTotals, filter(want...), func(t *runfolder.Table) error {
		for i := 0; i < t.Rows; i++ {
			s := by[t.Key(m.keys, i)]
			if s == nil {
				continue
			}
			var row totalRow
			row.lead, _ = t.Int(runfolder.ColLeadTime, i)
			row.first, _ = t.Date(runfolder.ColFirstPeriod, i)
			row.last, _ = t.Date(runfolder.ColLastPeriod, i)
			row.total = t.Float(runfolder.ColTotal, i)
			row.source = strClone(t, runfolder.ColTotalSource, i)
			for _, l := range m.totalLevels {
				row.quantiles = append(row.quantiles, t.Float(runfolder.ColQuantile(l), i))
			}
			s.totals = append(s.totals, row)
		}
		return nil
	})
}

// renderTotals writes a series' lead-time totals and their quantiles.
func (m *model) renderTotals(p *page, s *seriesData) {
	if len(s.totals) == 0 {
		return
	}
	src := s.totals[0].source
	for _, r := range s.totals {
		if r.source != src {
			src = "several sources"
		}
	}
	if src == "" {
		src = "none"
	}
	p.f("<table class=\"totals\">\n<caption>Lead-time totals of %s (quantiles: %s). The actual total stays at or below the “≤ P%%” value with probability P.</caption>\n", esc(s.method), esc(src))
	p.f("<thead><tr><th class=\"num\">lead</th><th>periods</th><th class=\"num\">total</th>")
	for _, l := range m.totalLevels {
		p.f("<th class=\"num\">≤ %d%%</th>", l)
	}
	p.f("</tr></thead>\n<tbody>\n")
	for _, r := range s.totals {
		p.f("<tr><td class=\"num\">%d</td><td>%s … %s</td><td class=\"num\">%s</td>", r.lead, isoDate(r.first), isoDate(r.last), fmtAuto(r.total))
		for _, q := range r.quantiles {
			p.f("<td class=\"num\">%s</td>", fmtAuto(q))
		}
		p.f("</tr>\n")
	}
	p.f("</tbody>\n</table>\n")
}
