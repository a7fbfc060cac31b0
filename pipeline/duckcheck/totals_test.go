package duckcheck

import (
	"fmt"
	"strings"
	"testing"
)

// totals.parquet (tables.md): one row per series with a chosen entry and
// lead time; the total is the sum of the chosen forecast over steps
// 1..lead_time, the periods those of steps 1 and lead_time; the quantiles
// rise with the level, are never below zero for a series whose history
// never is, and never fall as the lead time grows for such a series.
func TestTotals(t *testing.T) {
	n := 0
	forEachBacktest(t, func(t *testing.T, ex *example) {
		ev := ex.eval
		if len(ev.leads) == 0 {
			return
		}
		n++
		leads := make([]string, len(ev.leads))
		for i, l := range ev.leads {
			leads[i] = fmt.Sprint(l)
		}
		// Rows: the chosen series × lead times, no more, no fewer.
		none(t, "one row per chosen series and lead time", ex.sql(`
			WITH want AS (SELECT {K}, c.chosen AS method, unnest([`+strings.Join(leads, ", ")+`]) AS lead_time FROM {ch} c WHERE c.chosen IS NOT NULL)
			SELECT `+ex.keyList("w")+`, `+ex.keyList("g")+`, w.method, g.method, w.lead_time, g.lead_time
			FROM want w FULL JOIN {tot} g ON `+ex.on("w", "g")+` AND w.lead_time = g.lead_time
			WHERE w.method IS DISTINCT FROM g.method`))
		// The total and its periods, from the chosen forecast rows.
		none(t, "total and periods from the chosen forecast", ex.sql(`
			WITH f AS (SELECT {K}, step, period, value FROM {fc} WHERE chosen)
			SELECT g.*, sum(f.value) AS want, min(f.period) AS first, max(f.period) AS last
			FROM {tot} g JOIN f ON `+ex.on("g", "f")+` AND f.step <= g.lead_time
			GROUP BY ALL
			HAVING NOT near(g.total, sum(f.value)) OR g.first_period <> min(f.period) OR g.last_period <> max(f.period)
				OR count(*) <> g.lead_time`))
		if c := count(t, ex.sql("SELECT count(*) FROM {tot} WHERE total_source IS NOT NULL")); c == 0 {
			t.Fatal("no totals row has quantiles")
		}
		none(t, "total_source names a method", ex.sql(`
			SELECT {K}, lead_time, total_source FROM {tot}
			WHERE total_source NOT IN ('backtest totals', 'backtest totals, censored at 0', 'resampled demand')`))
		var rising, present []string
		for i, l := range ev.quantiles {
			present = append(present, fmt.Sprintf("(quantile_%d IS NULL) <> (total_source IS NULL)", l))
			if i > 0 {
				rising = append(rising, fmt.Sprintf("quantile_%d < quantile_%d", l, ev.quantiles[i-1]))
			}
		}
		none(t, "quantiles exactly where total_source is set", ex.sql("SELECT {K}, lead_time FROM {tot} WHERE "+strings.Join(present, " OR ")))
		none(t, "quantiles rise with the level", ex.sql("SELECT * EXCLUDE (file_row_number) FROM {tot} WHERE "+strings.Join(rising, " OR ")))
		// Series whose shaped history never goes below zero.
		nonNeg := `(SELECT {K} FROM {shaped} GROUP BY {K} HAVING min(y) >= 0)`
		var negative []string
		for _, l := range ev.quantiles {
			negative = append(negative, fmt.Sprintf("quantile_%d < 0", l))
		}
		none(t, "no negative quantile for a non-negative series", ex.sql(`
			SELECT g.* EXCLUDE (file_row_number) FROM {tot} g JOIN `+nonNeg+` s ON `+ex.on("g", "s")+`
			WHERE g.total < 0 OR `+strings.Join(negative, " OR ")))
		none(t, "censored at 0 exactly for non-negative series", ex.sql(`
			SELECT g.* EXCLUDE (file_row_number) FROM {tot} g LEFT JOIN `+nonNeg+` s ON `+ex.on("g", "s")+`
			WHERE g.total_source = 'backtest totals, censored at 0' AND s.`+ex.keys[0]+` IS NULL`))
		var falls []string
		for _, l := range ev.quantiles {
			falls = append(falls, fmt.Sprintf("b.quantile_%[1]d < a.quantile_%[1]d", l))
		}
		none(t, "a longer lead time's quantiles are no lower", ex.sql(`
			SELECT `+ex.keyList("a")+`, a.lead_time, b.lead_time FROM {tot} a JOIN {tot} b ON `+ex.on("a", "b")+` AND b.lead_time > a.lead_time
			JOIN `+nonNeg+` s ON `+ex.on("a", "s")+`
			WHERE `+strings.Join(falls, " OR ")))
		// Each per-step bound of a non-negative series is at least zero.
		if len(ev.levels) > 0 {
			var neg []string
			for _, l := range ev.levels {
				neg = append(neg, fmt.Sprintf("f.lower_%d < 0", l))
			}
			none(t, "no negative bound for a non-negative series", ex.sql(`
				SELECT `+ex.keyList("f")+`, f.method, f.step FROM {fc} f JOIN `+nonNeg+` s ON `+ex.on("f", "s")+`
				WHERE f.value < 0 AND f.interval_source IS NOT NULL OR `+strings.Join(neg, " OR ")))
		}
	})
	if n == 0 {
		t.Fatal("no example has totals")
	}
}
