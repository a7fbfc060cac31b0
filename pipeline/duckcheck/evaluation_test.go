package duckcheck

// Checks of the evaluation stage against tables.md: accuracy.parquet,
// choices.parquet, the forecasts columns chosen, interval_source,
// lower_<L> and upper_<L>, and the manifest's leaderboard. Everything is
// recomputed by DuckDB from the input, the accuracy table and the
// canonical spec in manifest.json.

import (
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"
)

// forEachBacktest runs f as a subtest per example whose spec has a
// backtest; there must be one.
func forEachBacktest(t *testing.T, f func(t *testing.T, ex *example)) {
	ready(t)
	n := 0
	for _, ex := range examples {
		if ex.eval == nil {
			continue
		}
		n++
		t.Run(ex.name, func(t *testing.T) { f(t, ex) })
	}
	if n == 0 {
		t.Fatal("no example has a backtest")
	}
}

// routed is a SQL condition: the entry in column method may be chosen for
// a series of the demand class in column class (selection.route of the
// canonical spec; a class without a route allows every entry).
func (ex *example) routed(class, method string) string {
	route := ex.canon.Selection.Route
	if len(route) == 0 {
		return "TRUE"
	}
	classes := make([]string, 0, len(route))
	for c := range route {
		classes = append(classes, c)
	}
	sort.Strings(classes)
	var b strings.Builder
	b.WriteString("CASE " + class)
	for _, c := range classes {
		labels := make([]string, len(route[c]))
		for i, l := range route[c] {
			labels[i] = sqlStr(l)
		}
		fmt.Fprintf(&b, " WHEN %s THEN list_contains([%s]::VARCHAR[], %s)", sqlStr(c), strings.Join(labels, ", "), method)
	}
	b.WriteString(" ELSE TRUE END")
	return b.String()
}

// scores is a query for each series' mean MASE per entry over its folds,
// for the entries that could be scored: a row for each of the series'
// folds (choices.folds), every one with status ok and a MASE. acc and ch
// name the accuracy and choices relations.
func (ex *example) scores(acc, ch string) string {
	return `SELECT ` + ex.keyList("a") + `, a.method, avg(a.mase) AS m, c.demand_class
		FROM ` + acc + ` a JOIN ` + ch + ` c ON ` + ex.on("a", "c") + `
		GROUP BY ` + ex.keyList("a") + `, a.method, c.folds, c.demand_class
		HAVING count(*) = c.folds AND count(*) FILTER (WHERE a.status = 'ok' AND a.mase IS NOT NULL) = c.folds`
}

// choiceRule is a query for the choices rows that break the selection
// rule: for a series with folds, chosen is the routed entry with the lowest
// mean MASE (ties to spec order, the combination last), score its mean,
// runner_up and runner_up_score the second; with no entry scored, the
// fallback. ch names the choices relation.
func (ex *example) choiceRule(ch string) string {
	return ex.sql(`
		WITH sc AS (` + ex.scores("{acc}", ch) + `),
			rk AS (SELECT *, row_number() OVER (PARTITION BY {K} ORDER BY m, list_position({entries}, method)) AS r
				FROM sc WHERE ` + ex.routed("demand_class", "method") + `),
			want AS (SELECT {K},
					any_value(method) FILTER (WHERE r = 1) AS chosen, any_value(m) FILTER (WHERE r = 1) AS score,
					any_value(method) FILTER (WHERE r = 2) AS runner_up, any_value(m) FILTER (WHERE r = 2) AS runner_up_score
				FROM rk GROUP BY {K})
		SELECT ` + ex.keyList("c") + `, c.demand_class, c.chosen, w.chosen AS want_chosen, c.score, w.score AS want_score,
			c.runner_up, w.runner_up AS want_runner_up, c.runner_up_score, w.runner_up_score AS want_runner_up_score
		FROM ` + ch + ` c LEFT JOIN want w ON ` + ex.on("c", "w") + `
		WHERE c.folds > 0 AND NOT (
			c.chosen IS NOT DISTINCT FROM coalesce(w.chosen, ` + sqlStr(ex.canon.Selection.Fallback) + `)
			AND near12(c.score, w.score)
			AND c.runner_up IS NOT DISTINCT FROM w.runner_up
			AND near12(c.runner_up_score, w.runner_up_score))`)
}

// accuracyRule is a query for the accuracy rows of the naive and
// seasonal_naive entries whose metrics differ from DuckDB's: each fold
// forecasts the backtest horizon from the periods before its origin; MASE
// divides the MAE by the mean absolute seasonal difference |y_t − y_{t−m}|
// over the fold's training part, RMSSE the RMSE by the root mean square
// one-period difference y_t − y_{t−1} there (the M5 scale; tables.md does
// not name the lags). Rows missing on either side count too. acc names the
// accuracy relation.
func (ex *example) accuracyRule(acc string) string {
	var kinds []string
	for _, m := range ex.methods {
		if m.kind == "naive" || m.kind == "seasonal_naive" {
			kinds = append(kinds, fmt.Sprintf("(%s, %s)", sqlStr(m.label), sqlStr(m.kind)))
		}
	}
	if len(kinds) == 0 {
		return ""
	}
	return ex.sql(`
		WITH k(label, kind) AS (VALUES ` + strings.Join(kinds, ", ") + `),
			d AS (SELECT {K}, idx, y - lag(y, {M}) OVER (PARTITION BY {K} ORDER BY idx) AS sd,
					y - lag(y) OVER (PARTITION BY {K} ORDER BY idx) AS d1 FROM {shaped}),
			scale AS (SELECT ` + ex.keyList("b") + `, b.fold, avg(abs(d.sd)) AS s1, sqrt(avg(d.d1 * d.d1)) AS s2
				FROM {bt} b JOIN d ON ` + ex.on("d", "b") + ` AND d.idx < b.o GROUP BY ALL),
			e AS (SELECT ` + ex.keyList("b") + `, k.label, b.fold, t.y, l.y AS f
				FROM {bt} b CROSS JOIN k
				JOIN {shaped} t ON ` + ex.on("t", "b") + ` AND t.idx >= b.o AND t.idx < b.o + b.h
				JOIN {shaped} l ON ` + ex.on("l", "b") + ` AND l.idx = CASE k.kind WHEN 'naive' THEN b.o - 1 ELSE b.o - {M} + (t.idx - b.o) % {M} END),
			m AS (SELECT {K}, label, fold, avg(abs(y - f)) AS mae, sqrt(avg((y - f) * (y - f))) AS rmse,
					sum(abs(y - f)) / nullif(sum(abs(y)), 0) AS wape, count(*) FILTER (WHERE y = 0) AS zeros
				FROM e GROUP BY ALL),
			want AS (SELECT m.*, m.mae / nullif(s.s1, 0) AS mase, m.rmse / nullif(s.s2, 0) AS rmsse
				FROM m JOIN scale s USING ({K}, fold)),
			got AS (SELECT * FROM ` + acc + ` WHERE method IN (SELECT label FROM k))
		SELECT ` + ex.keyList("g") + `, g.method, g.fold, w.label, w.fold AS want_fold, g.mase, w.mase AS want_mase,
			g.mae, w.mae AS want_mae, g.rmse, w.rmse AS want_rmse, g.rmsse, w.rmsse AS want_rmsse,
			g.wape, w.wape AS want_wape, g.mape_zeros, w.zeros AS want_zeros
		FROM got g FULL JOIN want w ON ` + ex.on("g", "w") + ` AND g.method = w.label AND g.fold = w.fold
		WHERE g.method IS NULL OR w.label IS NULL OR g.status <> 'ok'
			OR NOT near(g.mase, w.mase) OR NOT near(g.mae, w.mae) OR NOT near(g.rmse, w.rmse) OR NOT near(g.rmsse, w.rmsse)
			OR NOT near(g.wape, w.wape) OR g.mape_zeros IS DISTINCT FROM w.zeros`)
}

func TestAccuracy(t *testing.T) {
	forEachBacktest(t, func(t *testing.T, ex *example) {
		if n := count(t, ex.sql("SELECT count(*) FROM {acc}")); n == 0 {
			t.Fatal("accuracy.parquet is empty")
		}
		none(t, "accuracy fields", ex.sql(`
			SELECT {K}, method, fold, status, mae, rmse, mase, test_periods, mape_zeros FROM {acc}
			WHERE list_position({entries}, method) IS NULL OR status NOT IN ('ok', 'failed')
				OR (status = 'failed' AND NOT (mae IS NULL AND rmse IS NULL AND mape IS NULL AND smape IS NULL AND mase IS NULL
					AND rmsse IS NULL AND wape IS NULL AND bias IS NULL))
				OR (status = 'ok' AND (mae IS NULL OR rmse IS NULL OR mape_zeros IS NULL))`))
		// One row per series × entry × fold: every entry of a series that
		// had folds, for each of its folds; nothing for the others.
		none(t, "accuracy rows: series × entry × fold", ex.sql(`
			WITH want AS (
					SELECT f.*, e.method FROM (SELECT {K}, CAST(unnest(range(1, folds + 1)) AS INTEGER) AS fold FROM {ch}) f
					CROSS JOIN (SELECT unnest({entries}) AS method) e),
				got AS (SELECT {K}, fold, method FROM {acc})
			SELECT 'missing', * FROM (SELECT * FROM want EXCEPT SELECT * FROM got)
			UNION ALL SELECT 'unexpected', * FROM (SELECT * FROM got EXCEPT ALL SELECT * FROM want)`))
		// choices.folds: the folds that fit the series, from its length
		// and the canonical backtest settings.
		none(t, "folds per series recomputed", ex.sql(`
			SELECT `+ex.keyList("c")+`, c.folds, b.folds AS want FROM {ch} c
			LEFT JOIN (SELECT DISTINCT {K}, folds FROM {bt}) b ON `+ex.on("b", "c")+`
			WHERE c.folds IS DISTINCT FROM coalesce(b.folds, 0)`))
		if n := count(t, ex.sql("SELECT count(*) FROM {ch} WHERE folds > 0")); n == 0 {
			t.Error("no series had a backtest fold")
		}
		// The fold layout: origin, training start (expanding: the series'
		// first period) and lengths.
		none(t, "fold layout recomputed", ex.sql(`
			SELECT `+ex.keyList("a")+`, a.method, a.fold, a.origin, o.period AS want_origin, a.train_start, b.p0 AS want_train_start,
				a.train_periods, b.o AS want_train_periods, a.test_periods, b.h AS want_test_periods
			FROM {acc} a LEFT JOIN {bt} b ON `+ex.on("b", "a")+` AND b.fold = a.fold
			LEFT JOIN {shaped} o ON `+ex.on("o", "a")+` AND o.idx = b.o
			WHERE o.period IS NULL OR a.origin <> o.period OR a.train_start <> b.p0
				OR a.train_periods <> b.o OR a.test_periods <> b.h`))
		q := ex.accuracyRule("{acc}")
		if q == "" {
			t.Fatal("the spec has neither naive nor seasonal_naive, nothing to recompute")
		}
		none(t, "naive and seasonal_naive metrics recomputed by DuckDB", q)
	})
}

func TestChoices(t *testing.T) {
	forEachBacktest(t, func(t *testing.T, ex *example) {
		sel := ex.canon.Selection
		none(t, "one choice per series", ex.sql(`
			SELECT 'missing', * FROM (SELECT DISTINCT {K} FROM {raw} EXCEPT SELECT {K} FROM {ch})
			UNION ALL SELECT 'unexpected', * FROM (SELECT {K} FROM {ch} EXCEPT ALL SELECT DISTINCT {K} FROM {raw})`))
		none(t, "choices fields", ex.sql(`
			SELECT {K}, chosen, metric, reason FROM {ch}
			WHERE metric IS DISTINCT FROM `+sqlStr(sel.Metric)+` OR reason IS NULL OR reason = ''
				OR (chosen IS NOT NULL AND list_position({entries}, chosen) IS NULL)
				OR (runner_up IS NOT NULL AND (list_position({entries}, runner_up) IS NULL OR runner_up = chosen))`))
		// The demand class (Syntetos, Boylan & Croston 2005): ADI, the
		// periods per period with demand, and CV², the squared coefficient
		// of variation of the non-zero demands, cut at 1.32 and 0.49.
		none(t, "demand class recomputed by DuckDB", ex.sql(`
			WITH d AS (SELECT {K}, count(y) AS n, count(*) FILTER (WHERE y > 0) AS nz, min(y) AS min_y,
					var_pop(y) FILTER (WHERE y > 0) / (avg(y) FILTER (WHERE y > 0) * avg(y) FILTER (WHERE y > 0)) AS cv2
				FROM {shaped} GROUP BY {K}),
				w AS (SELECT *, CASE WHEN nz > 0 THEN n / nz END AS adi FROM d),
				want AS (SELECT *, CASE WHEN min_y < 0 THEN NULL WHEN nz = 0 THEN 'none'
						WHEN adi < 1.32 THEN CASE WHEN cv2 < 0.49 THEN 'smooth' ELSE 'erratic' END
						ELSE CASE WHEN cv2 < 0.49 THEN 'intermittent' ELSE 'lumpy' END END AS class FROM w)
			SELECT `+ex.keyList("c")+`, c.demand_class, w.class, c.adi, w.adi AS want_adi, c.cv2, w.cv2 AS want_cv2
			FROM {ch} c LEFT JOIN want w ON `+ex.on("c", "w")+`
			WHERE c.demand_class IS DISTINCT FROM w.class
				OR (w.nz > 0 AND w.min_y >= 0 AND NOT (near(c.adi, w.adi) AND near(c.cv2, w.cv2)))`))
		if n := count(t, ex.sql("SELECT count(DISTINCT demand_class) FROM {ch}")); n < 2 {
			t.Errorf("only %d demand class(es); the routing check needs routed and unrouted series", n)
		}
		none(t, "chosen, score and runner_up recomputed from accuracy.parquet", ex.choiceRule("{ch}"))
		// Series without folds fall back; only series with no usable
		// history have no choice.
		none(t, "fallback rows", ex.sql(`
			SELECT {K}, chosen, score, runner_up, runner_up_score FROM {ch} c
			WHERE folds = 0 AND NOT (score IS NULL AND runner_up IS NULL AND runner_up_score IS NULL
				AND chosen IS NOT DISTINCT FROM CASE WHEN EXISTS (
					SELECT 1 FROM {shaped} s WHERE `+ex.on("s", "c")+` AND s.y IS NOT NULL) THEN `+sqlStr(sel.Fallback)+` END)`))
		if n := count(t, ex.sql("SELECT count(*) FROM {ch} WHERE folds = 0")); n == 0 {
			t.Error("no fallback row to check")
		}
		none(t, "routed series choose a routed entry", ex.sql(`
			SELECT {K}, demand_class, chosen, runner_up FROM {ch}
			WHERE score IS NOT NULL AND NOT (`+ex.routed("demand_class", "chosen")+`
				AND (runner_up IS NULL OR `+ex.routed("demand_class", "runner_up")+`))`))
		if sel.Combine == nil {
			return
		}
		// The combination's members: the series' best routed methods by
		// mean MASE, as many as selection.combine.top, best first.
		none(t, "combination members are the best routed methods", ex.sql(fmt.Sprintf(`
			WITH sc AS (%s),
				top AS (SELECT {K}, list(method ORDER BY m, list_position({entries}, method))[1:%d] AS want
					FROM sc WHERE method <> {comb} AND %s GROUP BY {K}),
				got AS (SELECT DISTINCT {K}, model,
						string_split(regexp_extract(model, '^combination\(mean of (.+)\)$', 1), ', ') AS members
					FROM {fc} WHERE method = {comb})
			SELECT `+ex.keyList("g")+`, `+ex.keyList("t")+`, g.model, t.want FROM got g FULL JOIN top t ON `+ex.on("g", "t")+`
			WHERE g.members IS DISTINCT FROM t.want`, ex.scores("{acc}", "{ch}"), sel.Combine.Top, ex.routed("demand_class", "method"))))
	})
}

func TestChosenForecasts(t *testing.T) {
	forEachBacktest(t, func(t *testing.T, ex *example) {
		none(t, "chosen is never NULL", ex.sql("SELECT {K}, method, step FROM {fc} WHERE chosen IS NULL"))
		// The rows of exactly one entry per series are chosen: all the
		// horizon's rows of the entry choices.parquet names.
		none(t, "chosen rows are those of the choice", ex.sql(`
			WITH got AS (SELECT {K}, list(DISTINCT method) FILTER (WHERE chosen) AS methods, count(*) FILTER (WHERE chosen) AS n
				FROM {fc} GROUP BY {K})
			SELECT `+ex.keyList("c")+`, `+ex.keyList("g")+`, c.chosen, g.methods, g.n FROM {ch} c FULL JOIN got g ON `+ex.on("c", "g")+`
			WHERE coalesce(g.n, 0) <> CASE WHEN c.chosen IS NULL THEN 0 ELSE {H} END
				OR (c.chosen IS NOT NULL AND g.methods IS DISTINCT FROM [c.chosen])`))
		if n := count(t, ex.sql("SELECT count(*) FROM {fc} WHERE chosen")); n == 0 {
			t.Error("no chosen forecast rows")
		}
		if lv := ex.eval.levels; len(lv) > 0 {
			iv := ex.canon.Intervals
			onRows := "f.chosen"
			if iv.AllMethods {
				onRows = "TRUE"
			}
			// The source says how the bounds were made: the spec's source,
			// read as censored at zero for a series that never goes below
			// zero, or resampled demand for intermittent and lumpy series.
			none(t, "interval_source on the chosen rows only", ex.sql(`
				SELECT {fK}, f.method, f.step, f.chosen, f.interval_source FROM {fc} f LEFT JOIN {ch} c ON `+ex.on("f", "c")+`
				WHERE (f.interval_source IS NOT NULL) <> `+onRows+`
					OR f.interval_source IS NOT NULL AND NOT (
						f.interval_source IN (`+sqlStr(iv.Source)+`, `+sqlStr(iv.Source+", censored at 0")+`)
						OR f.interval_source = 'resampled demand' AND c.demand_class IN ('intermittent', 'lumpy'))`))
			levels := append([]int(nil), lv...)
			sort.Ints(levels)
			var present, nested []string
			nested = append(nested, fmt.Sprintf("lower_%d <= value", levels[0]), fmt.Sprintf("value <= upper_%d", levels[0]))
			for i, l := range levels {
				present = append(present, fmt.Sprintf("(lower_%[1]d IS NULL) <> (interval_source IS NULL) OR (upper_%[1]d IS NULL) <> (interval_source IS NULL)", l))
				if i > 0 {
					nested = append(nested, fmt.Sprintf("lower_%d <= lower_%d", l, levels[i-1]), fmt.Sprintf("upper_%d <= upper_%d", levels[i-1], l))
				}
			}
			none(t, "bounds exactly where interval_source is set", ex.sql(
				"SELECT {K}, method, step FROM {fc} WHERE "+strings.Join(present, " OR ")))
			none(t, "nested bounds around the value", ex.sql(
				"SELECT * EXCLUDE (file_row_number) FROM {fc} WHERE interval_source IS NOT NULL AND NOT ("+strings.Join(nested, " AND ")+")"))
			wide := fmt.Sprintf("upper_%[1]d > lower_%[1]d", levels[0])
			if n := count(t, ex.sql("SELECT count(*) FROM {fc} WHERE "+wide)); n == 0 {
				t.Errorf("no interval has a positive width (%s)", wide)
			}
		}
		if ex.combination() == "" {
			return
		}
		// The combination's value at each step is the mean of its members'.
		if n := count(t, ex.sql("SELECT count(*) FROM {fc} WHERE method = {comb}")); n == 0 {
			t.Fatal("no combination rows")
		}
		none(t, "combination model", ex.sql(`
			SELECT DISTINCT {K}, model FROM {fc} WHERE method = {comb} AND NOT regexp_full_match(model, 'combination\(mean of .+\)')`))
		none(t, "combination values are the mean of its members'", ex.sql(`
			WITH cm AS (SELECT DISTINCT {K}, string_split(regexp_extract(model, '^combination\(mean of (.+)\)$', 1), ', ') AS members
				FROM {fc} WHERE method = {comb})
			SELECT {fK}, f.step, f.value, cm.members, avg(m.value) AS want, count(m.value) AS n
			FROM {fc} f JOIN cm ON `+ex.on("cm", "f")+`
			LEFT JOIN {fc} m ON `+ex.on("m", "f")+` AND m.step = f.step AND list_contains(cm.members, m.method)
			WHERE f.method = {comb}
			GROUP BY ALL
			HAVING count(m.value) <> len(cm.members) OR NOT near(f.value, avg(m.value))`))
	})
}

func TestLeaderboard(t *testing.T) {
	forEachBacktest(t, func(t *testing.T, ex *example) {
		lb := ex.man.Leaderboard
		if lb == nil {
			t.Fatal("manifest.json has no leaderboard")
		}
		sel := ex.canon.Selection
		if lb.Metric != sel.Metric || lb.Label != sel.Fallback {
			t.Errorf("leaderboard selection_metric %q, fallback %q; canonical spec %q, %q", lb.Metric, lb.Label, sel.Metric, sel.Fallback)
		}
		// Per entry, over the series it could be scored on (routing
		// aside): how many, the mean and median of their mean MASE, and
		// the share of all series it won (a fallback is no win).
		got := rows(t, ex.sql(`
			WITH sc AS (`+ex.scores("{acc}", "{ch}")+`),
				per AS (SELECT method, count(*) AS n, avg(m) AS mean, median(m) AS median FROM sc GROUP BY method),
				wins AS (SELECT chosen AS method, count(*) AS w FROM {ch} WHERE score IS NOT NULL GROUP BY chosen),
				e AS (SELECT unnest({entries}) AS method, generate_subscripts({entries}, 1) AS i)
			SELECT e.method, coalesce(per.n, 0), per.mean, per.median, coalesce(wins.w, 0),
				coalesce(wins.w, 0) / (SELECT count(*) FROM {ch})
			FROM e LEFT JOIN per USING (method) LEFT JOIN wins USING (method) ORDER BY e.i`))
		if len(got) != len(lb.Entries) {
			t.Fatalf("leaderboard has %d entries, want %d (%v)", len(lb.Entries), len(got), got)
		}
		wins := map[string]int64{}
		for i, r := range got {
			e := lb.Entries[i]
			n, _ := strconv.ParseInt(r[1], 10, 64)
			w, _ := strconv.ParseInt(r[4], 10, 64)
			if w > 0 {
				wins[r[0]] = w
			}
			if e.Method != r[0] || e.Series != n || !close9(e.MeanMASE, r[2]) || !close9(e.MedianMASE, r[3]) || !close9(e.WinShare, r[5]) {
				t.Errorf("leaderboard entry %d: %s, %d series, mean %v, median %v, win share %v; DuckDB: %s, %s series, mean %s, median %s, win share %s",
					i, e.Method, e.Series, e.MeanMASE, e.MedianMASE, e.WinShare, r[0], r[1], r[2], r[3], r[5])
			}
		}
		if fmt.Sprint(lb.Chosen) != fmt.Sprint(wins) {
			t.Errorf("leaderboard series_per_chosen_method %v; DuckDB %v", lb.Chosen, wins)
		}
		if n := count(t, ex.sql("SELECT count(*) FROM {ch} WHERE score IS NULL AND chosen IS NOT NULL")); n != lb.Fallback {
			t.Errorf("leaderboard series_on_fallback %d; choices.parquet has %d", lb.Fallback, n)
		}
		if n := count(t, ex.sql("SELECT count(*) FROM {ch}")); n != ex.man.Series {
			t.Errorf("%d choices, manifest series %d", n, ex.man.Series)
		}
	})
}

// close9 reports whether got is within 1e-9 (relative, absolute below 1)
// of the value DuckDB rendered as want.
func close9(got float64, want string) bool {
	w, err := strconv.ParseFloat(want, 64)
	if err != nil {
		return false
	}
	return math.Abs(got-w) <= 1e-9*math.Max(1, math.Abs(w))
}

// brokenCopy writes the rows of query q to a Parquet file and returns a
// view of it with file_row_number, as the example's views have.
func brokenCopy(t *testing.T, name, q string) string {
	t.Helper()
	path := filepath.Join(workDir, name+".parquet")
	if _, err := db.Exec(fmt.Sprintf("COPY (%s) TO %s (FORMAT parquet)", q, sqlStr(path))); err != nil {
		t.Fatalf("%v\n%s", err, q)
	}
	if _, err := db.Exec(fmt.Sprintf("CREATE OR REPLACE VIEW %s AS SELECT * FROM read_parquet(%s, file_row_number = true)", name, sqlStr(path))); err != nil {
		t.Fatal(err)
	}
	return name
}
