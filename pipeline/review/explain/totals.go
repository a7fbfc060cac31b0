package explain

import (
	"fmt"
	"io"
	"strconv"
	"strings"
	"time"

	"almanac/pipeline/runfolder"
)

// totalRow is one lead time of the series' totals table rows.
type totalRow struct {
	method      string
	lead        int
	first, last time.Time
	total       float64
	source      string
	quantiles   []float64 // by sd.totalLevels
}

// loadTotals reads the series' rows of the totals table.
func loadTotals(sd *seriesData, t *runfolder.Table) error {
	sd.totalLevels = nil
	for _, c := range t.Columns() {
		if l, ok := strings.CutPrefix(c, "quantile_"); ok {
			lvl, err := strconv.Atoi(l)
			if err != nil {
				return fmt.Errorf("%s: unexpected column %s", t.Path, c)
			}
			sd.totalLevels = append(sd.totalLevels, lvl)
		}
	}
	lo, hi := t.KeyRange(sd.keyCols, sd.key)
	for i := lo; i < hi; i++ {
		var r totalRow
		r.method, _ = t.Str(runfolder.ColMethod, i)
		r.lead, _ = t.Int(runfolder.ColLeadTime, i)
		r.first, _ = t.Date(runfolder.ColFirstPeriod, i)
		r.last, _ = t.Date(runfolder.ColLastPeriod, i)
		r.total = t.Float(runfolder.ColTotal, i)
		r.source, _ = t.Str(runfolder.ColTotalSource, i)
		for _, l := range sd.totalLevels {
			r.quantiles = append(r.quantiles, t.Float(runfolder.ColQuantile(l), i))
		}
		sd.totals = append(sd.totals, r)
	}
	return nil
}

// renderTotals prints the chosen entry's totals over each lead time and
// the quantiles of each total.
func renderTotals(w io.Writer, sd *seriesData) {
	if len(sd.totals) == 0 {
		return
	}
	title := "lead-time totals · " + sd.totals[0].method
	sources := map[string]bool{}
	for _, r := range sd.totals {
		if r.source != "" {
			sources[r.source] = true
		}
	}
	if len(sources) == 1 {
		for s := range sources {
			title += " · quantiles: " + s
		}
	}
	section(w, title)
	g := &grid{left: 0}
	head := []string{"lead", "periods", "total"}
	for _, l := range sd.totalLevels {
		head = append(head, fmt.Sprintf("≤ at %d%%", l))
	}
	if len(sources) > 1 {
		head = append(head, "source")
	}
	g.add(head...)
	for _, r := range sd.totals {
		row := []string{strconv.Itoa(r.lead), r.first.Format(dateFmt) + " … " + r.last.Format(dateFmt), fv(r.total)}
		for _, q := range r.quantiles {
			row = append(row, fv(q))
		}
		if len(sources) > 1 {
			s := r.source
			if s == "" {
				s = null
			}
			row = append(row, s)
		}
		g.add(row...)
	}
	g.write(w, "  ")
	fmt.Fprintf(w, "  The actual total over the lead time stays at or below the \"≤ at P%%\" value with probability P.\n")
}
