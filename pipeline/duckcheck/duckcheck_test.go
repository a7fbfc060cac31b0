// Package duckcheck checks almanac's run folders with a second, independent
// engine: DuckDB reads the Parquet tables and the input files and recomputes
// what almanac should have written (see README.md).
//
// It is a nested module so that the main module does not depend on DuckDB.
// It never imports almanac's packages: it builds the almanac binary from the
// repository root and runs it as a separate process. Run it with
// go test -count=1: a cached result does not see changes to almanac.
package duckcheck

import (
	"bytes"
	"context"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	_ "github.com/duckdb/duckdb-go/v2"
)

// method is one method of an example spec, as the spec file states it.
type method struct {
	label, kind string
	form, trend string // classical only
	// opts are further options the spec file states, as the canonical
	// spec must carry them (compared as fmt.Sprint strings).
	opts map[string]any
	// twoSeasons: the method needs two full seasons, so a shorter series
	// gets an error for it.
	twoSeasons bool
}

// exact reports whether the test recomputes the method's values in SQL;
// the others are checked structurally.
func (m method) exact() bool {
	switch m.kind {
	case "naive", "seasonal_naive", "drift", "mean", "classical":
		return true
	}
	return false
}

// evaluation is what a spec file states about backtest, selection and
// intervals (tables.md: accuracy.parquet, choices.parquet and the forecasts
// columns chosen, interval_source, lower_<L>, upper_<L>).
type evaluation struct {
	folds      int
	window     string
	metric     string
	combine    string // the combination's kind; "" without selection.combine
	combineTop int
	route      map[string][]string
	levels     []int // interval levels; none without intervals
	source     string
	leads      []int // totals' lead times; none without totals
	quantiles  []int // totals' levels
}

// example is one example spec and what the test knows about it from the
// spec file and the data description, independently of almanac's output.
type example struct {
	name    string // subtest name and SQL view prefix
	spec    string // relative to this folder
	input   string // relative to the repository root
	keys    []string
	freq    string // week or quarter
	season  int
	horizon int
	methods []method
	// rawSQL selects the input, one row per input row: the keys, the
	// period (first day) as DATE and the value as DOUBLE. %s is the input
	// path as a SQL string literal.
	rawSQL string
	// combine and gaps are the spec's shaping rules.
	combine, gaps string
	// eval is nil for a spec without a backtest.
	eval *evaluation

	// Filled in by setup.
	dir   string    // run folder
	man   manifest  // its manifest.json
	canon canonical // its spec.canonical
	end   string    // shaping.end from the manifest ("series" when absent)
}

var examples = []*example{
	{
		name:    "garden",
		spec:    "../../examples/garden-supply/spec.yaml",
		input:   "examples/garden-supply/data/order_lines.csv",
		keys:    []string{"depot", "sku"},
		freq:    "week",
		season:  52,
		horizon: 13,
		methods: []method{
			{label: "naive", kind: "naive"},
			{label: "seasonal_naive", kind: "seasonal_naive"},
			{label: "drift", kind: "drift"},
			{label: "mean", kind: "mean"},
			{label: "classical_mult", kind: "classical", form: "multiplicative", trend: "adjusted_line", twoSeasons: true},
			{label: "classical_add_step", kind: "classical", form: "additive", trend: "trend_step", twoSeasons: true},
			{label: "holt_winters", kind: "holt_winters", opts: map[string]any{"seasonal": "multiplicative"}, twoSeasons: true},
			{label: "stl", kind: "stl", opts: map[string]any{"seasonal_window": "periodic"}, twoSeasons: true},
			{label: "sba", kind: "sba"},
		},
		// ISO weeks: date_trunc('week', …) is the Monday of the date's week.
		rawSQL: `SELECT depot, sku, CAST(date_trunc('week', order_date) AS DATE) AS period, CAST(units AS DOUBLE) AS value
			FROM read_csv(%s, header = true, auto_detect = false,
				columns = {'order_date': 'DATE', 'depot': 'VARCHAR', 'sku': 'VARCHAR', 'units': 'BIGINT'})`,
		combine: "sum",
		gaps:    "zero",
		eval: &evaluation{
			folds: 3, window: "expanding", metric: "mase", combine: "mean", combineTop: 3,
			route: map[string][]string{
				"intermittent": {"sba", "seasonal_naive", "mean"},
				"lumpy":        {"sba", "seasonal_naive", "mean"},
			},
			levels: []int{80, 95}, source: "empirical",
			leads: []int{4, 8, 13}, quantiles: []int{50, 80, 95, 99},
		},
	},
	{
		name:    "ferries",
		spec:    "../../examples/quarterly-ferries/spec.yaml",
		input:   "examples/quarterly-ferries/data/passengers.parquet",
		keys:    []string{"route"},
		freq:    "quarter",
		season:  4,
		horizon: 8,
		methods: []method{
			{label: "classical_mult", kind: "classical", form: "multiplicative", trend: "trend_line", twoSeasons: true},
			{label: "seasonal_naive", kind: "seasonal_naive"},
			{label: "drift", kind: "drift"},
			{label: "naive", kind: "naive"},
		},
		// quarter holds strings like 2016-Q1.
		rawSQL: `SELECT route,
				make_date(CAST(substr(quarter, 1, 4) AS INTEGER), (CAST(substr(quarter, 7, 1) AS INTEGER) - 1) * 3 + 1, 1) AS period,
				CAST(passengers AS DOUBLE) AS value
			FROM read_parquet(%s)`,
		combine: "reject",
		gaps:    "reject",
	},
}

type manifest struct {
	AlmanacVersion string `json:"almanac_version"`
	Spec           struct {
		Name      string          `json:"name"`
		File      string          `json:"file"`
		SHA256    string          `json:"sha256"`
		Canonical json.RawMessage `json:"canonical"`
	} `json:"spec"`
	Inputs []struct {
		Path   string `json:"path"`
		Format string `json:"format"`
		Size   int64  `json:"size"`
		SHA256 string `json:"sha256"`
		Rows   int64  `json:"rows"`
	} `json:"inputs"`
	RowsRead      int64 `json:"rows_read"`
	MissingValues int64 `json:"missing_values"`
	Series        int64 `json:"series"`
	Methods       []struct {
		Label   string         `json:"label"`
		Method  string         `json:"method"`
		Options map[string]any `json:"options"`
		Series  int64          `json:"series_forecast"`
	} `json:"methods"`
	Tables []struct {
		Name   string `json:"name"`
		File   string `json:"file"`
		Rows   int64  `json:"rows"`
		Bytes  int64  `json:"bytes"`
		SHA256 string `json:"sha256"`
	} `json:"tables"`
	Problems struct {
		Errors   int64 `json:"errors"`
		Warnings int64 `json:"warnings"`
	} `json:"problems"`
	// Leaderboard is present with a backtest.
	Leaderboard *struct {
		Metric  string `json:"selection_metric"`
		Entries []struct {
			Method     string  `json:"method"`
			Series     int64   `json:"series_scored"`
			MeanMASE   float64 `json:"mean_mase"`
			MedianMASE float64 `json:"median_mase"`
			WinShare   float64 `json:"win_share"`
		} `json:"entries"`
		Chosen   map[string]int64 `json:"series_per_chosen_method"`
		Fallback int64            `json:"series_on_fallback"`
		Label    string           `json:"fallback"`
	} `json:"leaderboard"`
}

// canonical is the part of the manifest's canonical spec the checks read.
type canonical struct {
	Columns struct {
		Keys []string `json:"keys"`
	} `json:"columns"`
	Calendar struct {
		Frequency    string `json:"frequency"`
		SeasonLength int    `json:"season_length"`
	} `json:"calendar"`
	Shaping struct {
		Combine string `json:"combine"`
		Gaps    string `json:"gaps"`
		End     string `json:"end"`
	} `json:"shaping"`
	Decomposition struct {
		Form    string `json:"form"`
		Average string `json:"average"`
	} `json:"decomposition"`
	// Options may be strings, booleans or numbers.
	Methods []struct {
		Method  string         `json:"method"`
		Label   string         `json:"label"`
		Options map[string]any `json:"options"`
	} `json:"methods"`
	Horizon int `json:"horizon"`
	// The evaluation sections, absent from a spec without them.
	Backtest *struct {
		Folds        int    `json:"folds"`
		Step         int    `json:"step"`
		Horizon      int    `json:"horizon"`
		Window       string `json:"window"`
		MinTrain     int    `json:"min_train"`
		WindowLength int    `json:"window_length"`
	} `json:"backtest"`
	Selection *struct {
		Fallback string              `json:"fallback"`
		Route    map[string][]string `json:"route"`
		Metric   string              `json:"metric"`
		Combine  *struct {
			Kind  string `json:"kind"`
			Top   int    `json:"top"`
			Label string `json:"label"`
		} `json:"combine"`
	} `json:"selection"`
	Intervals *struct {
		Levels     []int  `json:"levels"`
		Source     string `json:"source"`
		AllMethods bool   `json:"all_methods"`
	} `json:"intervals"`
}

// combination is the combination entry's label, "" without one.
func (ex *example) combination() string {
	if s := ex.canon.Selection; s != nil && s.Combine != nil {
		return s.Combine.Label
	}
	return ""
}

// entries are the labels of the backtest's entries: the methods in spec
// order, then the combination.
func (ex *example) entries() []string {
	var out []string
	for _, m := range ex.methods {
		out = append(out, m.label)
	}
	if c := ex.combination(); c != "" {
		out = append(out, c)
	}
	return out
}

// tableNames are the Parquet tables the run writes, in manifest order.
func (ex *example) tableNames() []string {
	names := []string{"forecasts", "components", "seasonal_factors", "problems"}
	if ex.eval != nil {
		names = append(names, "accuracy", "choices")
		if len(ex.eval.leads) > 0 {
			names = append(names, "totals")
		}
	}
	return names
}

var (
	db       *sql.DB
	duckErr  error // DuckDB could not be loaded: every test skips
	setupErr error // building or running almanac failed: every test fails
	repoRoot string
	workDir  string
	binPath  string
)

func TestMain(m *testing.M) {
	os.Exit(mainRun(m))
}

func mainRun(m *testing.M) int {
	db, duckErr = openDuck()
	if duckErr == nil {
		defer db.Close()
		tmp, err := os.MkdirTemp("", "duckcheck-")
		if err != nil {
			setupErr = err
		} else {
			defer os.RemoveAll(tmp)
			workDir = tmp
			setupErr = setup()
		}
	}
	return m.Run()
}

func openDuck() (*sql.DB, error) {
	d, err := sql.Open("duckdb", "")
	if err != nil {
		return nil, err
	}
	// One connection: the views and macros below live in it.
	d.SetMaxOpenConns(1)
	var v string
	if err := d.QueryRow("SELECT version()").Scan(&v); err != nil {
		d.Close()
		return nil, err
	}
	if _, err := d.Exec("SET threads = 2"); err != nil {
		d.Close()
		return nil, err
	}
	return d, nil
}

// setup builds almanac, runs both examples and defines the SQL views.
func setup() error {
	wd, err := os.Getwd()
	if err != nil {
		return err
	}
	repoRoot = filepath.Clean(filepath.Join(wd, "..", ".."))
	gomod, err := os.ReadFile(filepath.Join(repoRoot, "go.mod"))
	if err != nil || !regexp.MustCompile(`(?m)^module almanac\s*$`).Match(gomod) {
		return fmt.Errorf("%s is not the almanac module root (go.mod: %v)", repoRoot, err)
	}
	binPath = filepath.Join(workDir, "almanac")
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Minute)
	defer cancel()
	build := exec.CommandContext(ctx, "go", "build", "-o", binPath, "./cmd/almanac")
	build.Dir = repoRoot
	if out, err := build.CombinedOutput(); err != nil {
		return fmt.Errorf("go build ./cmd/almanac: %v\n%s", err, out)
	}
	for _, ex := range examples {
		if err := ex.run(ctx, wd); err != nil {
			return fmt.Errorf("%s: %w", ex.name, err)
		}
		if err := ex.defineViews(); err != nil {
			return fmt.Errorf("%s: defining views: %w", ex.name, err)
		}
	}
	return defineMacros()
}

// run runs almanac on the example and reads its manifest.
func (ex *example) run(ctx context.Context, wd string) error {
	ex.dir = filepath.Join(workDir, ex.name)
	// SPEC first and the flags after it, as README.md gives the command.
	cmd := exec.CommandContext(ctx, binPath, "run", ex.spec, "--out", ex.dir, "--workers", "2", "--quiet")
	cmd.Dir = wd
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		return fmt.Errorf("almanac run %s: %v\nstdout:\n%s\nstderr:\n%s", ex.spec, err, stdout.String(), stderr.String())
	}
	if stderr.Len() > 0 {
		return fmt.Errorf("almanac run --quiet %s wrote to stderr:\n%s", ex.spec, stderr.String())
	}
	b, err := os.ReadFile(filepath.Join(ex.dir, "manifest.json"))
	if err != nil {
		return err
	}
	if err := json.Unmarshal(b, &ex.man); err != nil {
		return fmt.Errorf("manifest.json: %w", err)
	}
	if err := json.Unmarshal(ex.man.Spec.Canonical, &ex.canon); err != nil {
		return fmt.Errorf("manifest.json spec.canonical: %w", err)
	}
	// shaping.end appeared after shaping.gaps; without it every series
	// ended at its own last row.
	ex.end = ex.canon.Shaping.End
	if ex.end == "" {
		ex.end = "series"
	}
	return nil
}

// sqlStr quotes s as a SQL string literal.
func sqlStr(s string) string { return "'" + strings.ReplaceAll(s, "'", "''") + "'" }

func (ex *example) table(name string) string { return filepath.Join(ex.dir, name+".parquet") }

// on is the join condition on the key columns of the aliases a and b.
func (ex *example) on(a, b string) string {
	parts := make([]string, len(ex.keys))
	for i, k := range ex.keys {
		parts[i] = fmt.Sprintf("%s.%s = %s.%s", a, k, b, k)
	}
	return strings.Join(parts, " AND ")
}

// sql expands the placeholders of a query template: {K} the key columns,
// {KO} their byte order, {M} the season length, {H} the horizon, {fc},
// {comp}, {sf}, {prob}, {raw}, {shaped}, {dec}, {deca} the example's
// views, {acc} and {ch} its accuracy and choices views (with a
// backtest), {tot} its totals view (with totals), {bt} the backtest folds the test expects, {next} and {pos}
// its period macros, {fK} the key columns of
// alias f, {labels} the method labels as a SQL list in spec order,
// {entries} the same with the combination's label last, {comb} the
// combination's label as a SQL string.
func (ex *example) sql(q string) string {
	enc := make([]string, len(ex.keys))
	for i, k := range ex.keys {
		enc[i] = "encode(" + k + ")"
	}
	labels := make([]string, len(ex.methods))
	for i, m := range ex.methods {
		labels[i] = sqlStr(m.label)
	}
	entries := make([]string, 0, len(labels)+1)
	for _, e := range ex.entries() {
		entries = append(entries, sqlStr(e))
	}
	p := ex.name
	return strings.NewReplacer(
		"{K}", strings.Join(ex.keys, ", "),
		"{fK}", ex.keyList("f"),
		"{KO}", strings.Join(enc, ", "),
		"{M}", strconv.Itoa(ex.season),
		"{H}", strconv.Itoa(ex.horizon),
		"{fc}", p+"_fc",
		"{comp}", p+"_comp",
		"{sf}", p+"_sf",
		"{prob}", p+"_prob",
		"{raw}", p+"_raw",
		"{shaped}", p+"_shaped",
		"{deca}", p+"_deca",
		"{dec}", p+"_dec",
		"{next}", p+"_next",
		"{pos}", p+"_pos",
		"{acc}", p+"_acc",
		"{ch}", p+"_ch",
		"{tot}", p+"_tot",
		"{bt}", p+"_bt",
		"{labels}", "["+strings.Join(labels, ", ")+"]",
		"{entries}", "["+strings.Join(entries, ", ")+"]",
		"{comb}", sqlStr(ex.combination()),
	).Replace(q)
}

func defineMacros() error {
	for _, m := range []string{
		`CREATE OR REPLACE MACRO near(a, b) AS
		(a IS NULL AND b IS NULL) OR
		(a IS NOT NULL AND b IS NOT NULL AND abs(a - b) <= 1e-9 * greatest(1.0, abs(b)))`,
		// The same within 1e-12, for means of the same few numbers.
		`CREATE OR REPLACE MACRO near12(a, b) AS
		(a IS NULL AND b IS NULL) OR
		(a IS NOT NULL AND b IS NOT NULL AND abs(a - b) <= 1e-12 * greatest(1.0, abs(b)))`,
	} {
		if _, err := db.Exec(m); err != nil {
			return err
		}
	}
	return nil
}

// defineViews names the example's tables and the independent
// recomputation of its series and decompositions.
func (ex *example) defineViews() error {
	var next, pos, step string
	switch ex.freq {
	case "week":
		next = "CAST(d + to_days(CAST(7 * k AS INTEGER)) AS DATE)"
		// tables.md / calendar: weeks counted from Monday 1969-12-29, modulo m.
		pos = "CAST((date_diff('day', DATE '1969-12-29', d) // 7) % {M} AS INTEGER) + 1"
		step = "INTERVAL 7 DAY"
	case "quarter":
		next = "CAST(d + to_months(CAST(3 * k AS INTEGER)) AS DATE)"
		pos = "CAST((year(d) * 4 + quarter(d) - 1) % {M} AS INTEGER) + 1"
		step = "INTERVAL 3 MONTH"
	default:
		return fmt.Errorf("frequency %q not handled", ex.freq)
	}
	var fill string
	switch ex.gaps {
	case "zero":
		fill = "coalesce(a.value, 0)"
	case "reject":
		fill = "a.value" // TestInput asserts there are no gaps
	default:
		return fmt.Errorf("gaps %q not handled", ex.gaps)
	}
	var combine string
	switch ex.combine {
	case "sum":
		combine = "sum(value)"
	case "reject":
		combine = "any_value(value)" // TestInput asserts one row per period
	default:
		return fmt.Errorf("combine %q not handled", ex.combine)
	}
	var end string
	switch ex.end {
	case "series":
		end = "max(period)"
	case "panel":
		end = "(SELECT max(period) FROM {raw})"
	default:
		return fmt.Errorf("shaping.end %q not handled", ex.end)
	}
	half := ex.season / 2
	var trend string
	if ex.season%2 == 0 {
		// Centred moving average of even order: half weights at both ends.
		trend = fmt.Sprintf(`(sum(y) OVER w - 0.5 * lag(y, %d) OVER o - 0.5 * lead(y, %d) OVER o) / {M}`, half, half)
	} else {
		trend = "sum(y) OVER w / {M}"
	}
	stmts := []string{
		"CREATE OR REPLACE MACRO {next}(d, k) AS " + next,
		"CREATE OR REPLACE MACRO {pos}(d) AS " + pos,
		fmt.Sprintf("CREATE OR REPLACE VIEW {fc} AS SELECT * FROM read_parquet(%s, file_row_number = true)", sqlStr(ex.table("forecasts"))),
		fmt.Sprintf("CREATE OR REPLACE VIEW {comp} AS SELECT * FROM read_parquet(%s, file_row_number = true)", sqlStr(ex.table("components"))),
		fmt.Sprintf("CREATE OR REPLACE VIEW {sf} AS SELECT * FROM read_parquet(%s, file_row_number = true)", sqlStr(ex.table("seasonal_factors"))),
		fmt.Sprintf("CREATE OR REPLACE VIEW {prob} AS SELECT * FROM read_parquet(%s, file_row_number = true)", sqlStr(ex.table("problems"))),
		"CREATE OR REPLACE VIEW {raw} AS " + fmt.Sprintf(ex.rawSQL, sqlStr(filepath.Join(repoRoot, ex.input))),
		// One value per series and period, every period from the series'
		// first row to its end, gaps filled by the gap rule; idx counts
		// from 0, n is the series length.
		`CREATE OR REPLACE VIEW {shaped} AS
		WITH agg AS (SELECT {K}, period, ` + combine + ` AS value FROM {raw} GROUP BY {K}, period),
		span AS (SELECT {K}, min(period) AS p0, ` + end + ` AS p1 FROM agg GROUP BY {K}),
		grid AS (SELECT {K}, CAST(unnest(generate_series(CAST(p0 AS TIMESTAMP), CAST(p1 AS TIMESTAMP), ` + step + `)) AS DATE) AS period FROM span)
		SELECT {K}, period, ` + fill + ` AS y,
			row_number() OVER (PARTITION BY {K} ORDER BY period) - 1 AS idx,
			count(*) OVER (PARTITION BY {K}) AS n
		FROM grid LEFT JOIN agg a USING ({K}, period)`,
	}
	// The classical decomposition, once with the spec's form
	// (multiplicative, falling back to additive when a value is ≤ 0) and
	// once additive, for series with at least two seasons.
	for _, v := range []struct{ name, form string }{
		{"{dec}", "CASE WHEN min(y) > 0 THEN 'multiplicative' ELSE 'additive' END"},
		{"{deca}", "'additive'"},
	} {
		stmts = append(stmts, `CREATE OR REPLACE VIEW `+v.name+` AS
		WITH forms AS (SELECT {K}, `+v.form+` AS form FROM {shaped} GROUP BY {K} HAVING count(y) >= 2 * {M}),
		ma AS (
			SELECT s.*, f.form, idx % {M} AS j,
				CASE WHEN idx >= `+strconv.Itoa(half)+` AND idx < n - `+strconv.Itoa(half)+` THEN `+trend+` END AS trend
			FROM {shaped} s JOIN forms f USING ({K})
			WINDOW w AS (PARTITION BY {K} ORDER BY idx ROWS BETWEEN `+strconv.Itoa(half)+` PRECEDING AND `+strconv.Itoa(half)+` FOLLOWING),
				o AS (PARTITION BY {K} ORDER BY idx)),
		raw AS (
			SELECT {K}, j, any_value(form) AS form,
				avg(CASE WHEN form = 'multiplicative' THEN y / trend ELSE y - trend END) AS rf,
				count(CASE WHEN form = 'multiplicative' THEN y / trend ELSE y - trend END) AS cnt
			FROM ma GROUP BY {K}, j),
		fac AS (
			SELECT {K}, j, cnt,
				CASE WHEN form = 'multiplicative' THEN rf / avg(rf) OVER (PARTITION BY {K})
					ELSE rf - avg(rf) OVER (PARTITION BY {K}) END AS factor
			FROM raw)
		SELECT ma.* EXCLUDE (j), ma.j, fac.factor AS seasonal, fac.cnt,
			CASE WHEN form = 'multiplicative' THEN y / fac.factor / trend ELSE y - fac.factor - trend END AS remainder,
			CASE WHEN form = 'multiplicative' THEN y / fac.factor ELSE y - fac.factor END AS adjusted
		FROM ma JOIN fac USING ({K}, j)`)
	}
	if ex.eval != nil {
		if ex.canon.Backtest == nil || ex.canon.Selection == nil {
			return fmt.Errorf("the spec file has a backtest and a selection, the canonical spec in manifest.json does not")
		}
		if len(ex.eval.leads) > 0 {
			stmts = append(stmts, fmt.Sprintf("CREATE OR REPLACE VIEW {tot} AS SELECT * FROM read_parquet(%s, file_row_number = true)", sqlStr(ex.table("totals"))))
		}
		stmts = append(stmts,
			fmt.Sprintf("CREATE OR REPLACE VIEW {acc} AS SELECT * FROM read_parquet(%s, file_row_number = true)", sqlStr(ex.table("accuracy"))),
			fmt.Sprintf("CREATE OR REPLACE VIEW {ch} AS SELECT * FROM read_parquet(%s, file_row_number = true)", sqlStr(ex.table("choices"))),
			// The folds each series should have: counting back from the
			// latest origin (the last backtest-horizon periods), step
			// periods apart, those whose training part has at least
			// min_train periods; numbered 1… oldest first. o is the
			// origin's index (= the training length, windows expanding).
			fmt.Sprintf(`CREATE OR REPLACE VIEW {bt} AS
			WITH s AS (SELECT {K}, any_value(n) AS n, min(period) AS p0 FROM {shaped} GROUP BY {K}),
				fit AS (SELECT s.*, r.k FROM s CROSS JOIN range(%[1]d) r(k) WHERE s.n - %[2]d - %[3]d * r.k >= %[4]d)
			SELECT {K}, n, p0, count(*) OVER (PARTITION BY {K}) AS folds,
				CAST(count(*) OVER (PARTITION BY {K}) - k AS INTEGER) AS fold, n - %[2]d - %[3]d * k AS o, %[2]d AS h
			FROM fit`, ex.canon.Backtest.Folds, ex.canon.Backtest.Horizon, ex.canon.Backtest.Step, ex.canon.Backtest.MinTrain))
	}
	for _, s := range stmts {
		if _, err := db.Exec(ex.sql(s)); err != nil {
			return fmt.Errorf("%v\n%s", err, ex.sql(s))
		}
	}
	return nil
}

// ready skips when DuckDB cannot be loaded and fails when setup failed.
func ready(t *testing.T) {
	t.Helper()
	if duckErr != nil {
		t.Skipf("DuckDB could not be loaded, nothing to check with: %v", duckErr)
	}
	if setupErr != nil {
		t.Fatalf("setup: %v", setupErr)
	}
}

// forEach runs f as a subtest per example.
func forEach(t *testing.T, f func(t *testing.T, ex *example)) {
	ready(t)
	for _, ex := range examples {
		t.Run(ex.name, func(t *testing.T) { f(t, ex) })
	}
}

// rows runs q and renders every row as a string.
func rows(t *testing.T, q string) [][]string {
	t.Helper()
	_, out := table(t, q)
	return out
}

// table runs q and returns its column names and rows, rendered as strings.
func table(t *testing.T, q string) ([]string, [][]string) {
	t.Helper()
	r, err := db.Query(q)
	if err != nil {
		t.Fatalf("query failed: %v\n%s", err, q)
	}
	defer r.Close()
	cols, err := r.Columns()
	if err != nil {
		t.Fatal(err)
	}
	var out [][]string
	for r.Next() {
		vals := make([]any, len(cols))
		ptrs := make([]any, len(cols))
		for i := range vals {
			ptrs[i] = &vals[i]
		}
		if err := r.Scan(ptrs...); err != nil {
			t.Fatalf("scan: %v\n%s", err, q)
		}
		row := make([]string, len(cols))
		for i, v := range vals {
			switch x := v.(type) {
			case nil:
				row[i] = "NULL"
			case time.Time:
				row[i] = x.Format("2006-01-02")
			case []byte:
				row[i] = string(x)
			default:
				row[i] = fmt.Sprint(x)
			}
		}
		out = append(out, row)
	}
	if err := r.Err(); err != nil {
		t.Fatalf("query failed: %v\n%s", err, q)
	}
	return cols, out
}

// none fails when q, a query for rows that break a rule, returns any.
func none(t *testing.T, rule, q string) {
	t.Helper()
	cols, got := table(t, q)
	if len(got) == 0 {
		return
	}
	var b strings.Builder
	fmt.Fprintf(&b, "  %s\n", strings.Join(cols, " | "))
	for i, r := range got {
		if i == 10 {
			fmt.Fprintf(&b, "  … %d rows in all\n", len(got))
			break
		}
		fmt.Fprintf(&b, "  %s\n", strings.Join(r, " | "))
	}
	t.Errorf("%s: %d violating row(s):\n%s", rule, len(got), b.String())
}

// one runs q, which must return a single value, rendered as a string.
func one(t *testing.T, q string) string {
	t.Helper()
	got := rows(t, q)
	if len(got) != 1 || len(got[0]) != 1 {
		t.Fatalf("expected one value, got %v\n%s", got, q)
	}
	return got[0][0]
}

func count(t *testing.T, q string) int64 {
	t.Helper()
	s := one(t, q)
	n, err := strconv.ParseInt(s, 10, 64)
	if err != nil {
		t.Fatalf("count %q: %v\n%s", s, err, q)
	}
	return n
}

// columns is the expected DuckDB schema of each table after the keys.
var columns = map[string][][2]string{
	"totals": {
		{"method", "VARCHAR"}, {"lead_time", "INTEGER"}, {"first_period", "DATE"}, {"last_period", "DATE"},
		{"total", "DOUBLE"}, {"total_source", "VARCHAR"},
	},
	"forecasts": {
		{"method", "VARCHAR"}, {"model", "VARCHAR"}, {"period", "DATE"}, {"step", "INTEGER"}, {"value", "DOUBLE"},
	},
	"components": {
		{"decomposition", "VARCHAR"}, {"form", "VARCHAR"}, {"period", "DATE"},
		{"observed", "DOUBLE"}, {"trend", "DOUBLE"}, {"seasonal", "DOUBLE"}, {"remainder", "DOUBLE"}, {"adjusted", "DOUBLE"},
	},
	"seasonal_factors": {
		{"decomposition", "VARCHAR"}, {"form", "VARCHAR"}, {"position", "INTEGER"}, {"factor", "DOUBLE"}, {"count", "INTEGER"},
	},
	"problems": {
		{"stage", "VARCHAR"}, {"severity", "VARCHAR"}, {"code", "VARCHAR"}, {"method", "VARCHAR"}, {"message", "VARCHAR"},
	},
	// In the order tables.md lists them.
	"accuracy": {
		{"method", "VARCHAR"}, {"fold", "INTEGER"}, {"origin", "DATE"}, {"train_start", "DATE"},
		{"train_periods", "INTEGER"}, {"test_periods", "INTEGER"}, {"scored_periods", "INTEGER"},
		{"mae", "DOUBLE"}, {"rmse", "DOUBLE"}, {"mape", "DOUBLE"}, {"mape_zeros", "INTEGER"},
		{"smape", "DOUBLE"}, {"mase", "DOUBLE"}, {"rmsse", "DOUBLE"}, {"wape", "DOUBLE"}, {"bias", "DOUBLE"},
		{"status", "VARCHAR"},
	},
	"choices": {
		{"chosen", "VARCHAR"}, {"metric", "VARCHAR"}, {"score", "DOUBLE"}, {"runner_up", "VARCHAR"}, {"runner_up_score", "DOUBLE"},
		{"folds", "INTEGER"}, {"demand_class", "VARCHAR"}, {"adi", "DOUBLE"}, {"cv2", "DOUBLE"}, {"reason", "VARCHAR"},
	},
}

// columns is the expected schema of the example's table after the keys:
// forecasts gains chosen with a backtest and the interval columns with
// intervals.
func (ex *example) columns(name string) [][2]string {
	cols := columns[name]
	if name == "totals" {
		cols = append([][2]string(nil), cols...)
		for _, l := range ex.eval.quantiles {
			cols = append(cols, [2]string{fmt.Sprintf("quantile_%d", l), "DOUBLE"})
		}
		return cols
	}
	if name != "forecasts" || ex.eval == nil {
		return cols
	}
	cols = append(append([][2]string(nil), cols...), [2]string{"chosen", "BOOLEAN"})
	if len(ex.eval.levels) > 0 {
		cols = append(cols, [2]string{"interval_source", "VARCHAR"})
		for _, l := range ex.eval.levels {
			cols = append(cols, [2]string{fmt.Sprintf("lower_%d", l), "DOUBLE"}, [2]string{fmt.Sprintf("upper_%d", l), "DOUBLE"})
		}
	}
	return cols
}

func TestSchema(t *testing.T) {
	forEach(t, func(t *testing.T, ex *example) {
		for _, name := range ex.tableNames() {
			var want []string
			for _, k := range ex.keys {
				want = append(want, k+" VARCHAR")
			}
			for _, c := range ex.columns(name) {
				want = append(want, c[0]+" "+c[1])
			}
			var got []string
			for _, r := range rows(t, fmt.Sprintf("DESCRIBE SELECT * FROM read_parquet(%s)", sqlStr(ex.table(name)))) {
				got = append(got, r[0]+" "+r[1])
			}
			if strings.Join(got, ", ") != strings.Join(want, ", ") {
				t.Errorf("%s.parquet columns:\n got  %s\n want %s", name, strings.Join(got, ", "), strings.Join(want, ", "))
			}
		}
	})
}

func TestRunFolderAndManifest(t *testing.T) {
	forEach(t, func(t *testing.T, ex *example) {
		if _, err := os.Stat(filepath.Join(ex.dir, ".almanac-run")); err != nil {
			t.Errorf("marker file: %v", err)
		}
		left, _ := filepath.Glob(filepath.Join(workDir, ".almanac-tmp-*"))
		if len(left) > 0 {
			t.Errorf("staging folders left behind: %v", left)
		}
		m := ex.man
		tableNames := ex.tableNames()
		if len(m.Tables) != len(tableNames) {
			t.Fatalf("manifest lists %d tables, want %d", len(m.Tables), len(tableNames))
		}
		if ex.eval == nil {
			for _, name := range []string{"accuracy", "choices"} {
				if _, err := os.Stat(ex.table(name)); !os.IsNotExist(err) {
					t.Errorf("no backtest in the spec, yet %s.parquet: %v", name, err)
				}
			}
			if m.Leaderboard != nil {
				t.Errorf("no backtest in the spec, yet a leaderboard in the manifest")
			}
		}
		for i, tb := range m.Tables {
			if tb.Name != tableNames[i] || tb.File != tableNames[i]+".parquet" {
				t.Errorf("manifest table %d: %s (%s), want %s", i, tb.Name, tb.File, tableNames[i])
				continue
			}
			b, err := os.ReadFile(ex.table(tb.Name))
			if err != nil {
				t.Fatal(err)
			}
			sum := sha256.Sum256(b)
			if hex.EncodeToString(sum[:]) != tb.SHA256 || int64(len(b)) != tb.Bytes {
				t.Errorf("%s: manifest says %d bytes sha256 %s; file has %d bytes sha256 %x", tb.File, tb.Bytes, tb.SHA256, len(b), sum)
			}
			n := count(t, fmt.Sprintf("SELECT count(*) FROM read_parquet(%s)", sqlStr(ex.table(tb.Name))))
			if n != tb.Rows {
				t.Errorf("%s: %d rows, manifest says %d", tb.File, n, tb.Rows)
			}
		}
		// The canonical spec hash is the sha256 of the compact canonical JSON.
		var compact bytes.Buffer
		if err := json.Compact(&compact, m.Spec.Canonical); err != nil {
			t.Fatal(err)
		}
		if sum := sha256.Sum256(compact.Bytes()); hex.EncodeToString(sum[:]) != m.Spec.SHA256 {
			t.Errorf("spec.sha256 %s is not the sha256 of spec.canonical (%x)", m.Spec.SHA256, sum)
		}
		// almanac check reports the same hash.
		out, err := exec.Command(binPath, "check", ex.spec).CombinedOutput()
		if err != nil {
			t.Fatalf("almanac check: %v\n%s", err, out)
		}
		if !strings.Contains(string(out), "sha256 "+m.Spec.SHA256[:16]) {
			t.Errorf("almanac check printed %q; manifest spec.sha256 is %s", out, m.Spec.SHA256)
		}
		// The spec as the test knows it.
		c := ex.canon
		if strings.Join(c.Columns.Keys, ",") != strings.Join(ex.keys, ",") || c.Calendar.Frequency != ex.freq ||
			c.Calendar.SeasonLength != ex.season || c.Horizon != ex.horizon ||
			c.Shaping.Combine != ex.combine || c.Shaping.Gaps != ex.gaps ||
			c.Decomposition.Form != "multiplicative" || c.Decomposition.Average != "mean" {
			t.Errorf("canonical spec %s differs from what the test expects of %s", m.Spec.Canonical, ex.spec)
		}
		if len(c.Methods) != len(ex.methods) || len(m.Methods) != len(ex.methods) {
			t.Fatalf("%d methods in the canonical spec, %d in the manifest, want %d", len(c.Methods), len(m.Methods), len(ex.methods))
		}
		for i, want := range ex.methods {
			got := c.Methods[i]
			if got.Label != want.label || got.Method != want.kind {
				t.Errorf("method %d: %+v, want %+v", i, got, want)
			}
			if want.kind == "classical" {
				if got.Options["form"] != want.form || got.Options["trend"] != want.trend {
					t.Errorf("method %s: form %v, trend %v; want %s, %s", want.label, got.Options["form"], got.Options["trend"], want.form, want.trend)
				}
				if got.Options["average"] != "mean" {
					t.Errorf("method %s: average %v, the SQL recomputation assumes mean", want.label, got.Options["average"])
				}
			}
			for k, v := range want.opts {
				if g, ok := got.Options[k]; !ok || fmt.Sprint(g) != fmt.Sprint(v) {
					t.Errorf("method %s: option %s = %v, the spec file says %v", want.label, k, g, v)
				}
			}
			if m.Methods[i].Label != want.label || m.Methods[i].Method != want.kind {
				t.Errorf("manifest method %d is %s (%s), want %s (%s)", i, m.Methods[i].Label, m.Methods[i].Method, want.label, want.kind)
			}
			if fmt.Sprint(m.Methods[i].Options) != fmt.Sprint(got.Options) {
				t.Errorf("manifest method %s: options %v, canonical spec %v", want.label, m.Methods[i].Options, got.Options)
			}
		}
		ev := ex.eval
		if (ev == nil) != (c.Backtest == nil) || (ev == nil) != (c.Selection == nil) {
			t.Fatalf("canonical spec: backtest %v, selection %v; the spec file has a backtest: %v", c.Backtest != nil, c.Selection != nil, ev != nil)
		}
		if ev != nil {
			b, sel := c.Backtest, c.Selection
			if b.Folds != ev.folds || b.Window != ev.window || b.Step < 1 || b.Horizon < 1 || b.MinTrain < 1 {
				t.Errorf("canonical backtest %+v; the spec file says folds %d, window %s", *b, ev.folds, ev.window)
			}
			if b.Window != "expanding" {
				t.Errorf("backtest window %s: the fold layout check handles expanding windows only", b.Window)
			}
			if sel.Metric != ev.metric || fmt.Sprint(sel.Route) != fmt.Sprint(ev.route) ||
				labelPos(ex.methods, sel.Fallback) == 0 {
				t.Errorf("canonical selection %+v; the spec file says metric %s, route %v (and the fallback must be a method)", *sel, ev.metric, ev.route)
			}
			if (sel.Combine == nil) != (ev.combine == "") ||
				(sel.Combine != nil && (sel.Combine.Kind != ev.combine || sel.Combine.Top != ev.combineTop || sel.Combine.Label == "" || labelPos(ex.methods, sel.Combine.Label) != 0)) {
				t.Errorf("canonical selection.combine %+v; the spec file says %s of the top %d", sel.Combine, ev.combine, ev.combineTop)
			}
			if sel.Combine != nil && sel.Combine.Kind != "mean" {
				t.Errorf("combination %s: the SQL recomputation handles mean only", sel.Combine.Kind)
			}
			iv := c.Intervals
			if (iv == nil) != (len(ev.levels) == 0) ||
				(iv != nil && (fmt.Sprint(iv.Levels) != fmt.Sprint(ev.levels) || iv.Source != ev.source || iv.AllMethods)) {
				t.Errorf("canonical intervals %+v; the spec file says levels %v, source %s, no all_methods", iv, ev.levels, ev.source)
			}
		} else if c.Intervals != nil {
			t.Errorf("canonical spec has intervals without a backtest")
		}
	})
}

func TestKeyValueMetadata(t *testing.T) {
	forEach(t, func(t *testing.T, ex *example) {
		if !regexp.MustCompile(`^[0-9a-f]{64}$`).MatchString(ex.man.Spec.SHA256) {
			t.Fatalf("manifest spec.sha256 %q is not a sha256", ex.man.Spec.SHA256)
		}
		for _, name := range ex.tableNames() {
			kv := map[string]string{}
			for _, r := range rows(t, fmt.Sprintf(`SELECT decode(key), decode(value) FROM parquet_kv_metadata(%s)
				WHERE starts_with(decode(key), 'almanac.')`, sqlStr(ex.table(name)))) {
				kv[r[0]] = r[1]
			}
			if kv["almanac.spec_sha256"] != ex.man.Spec.SHA256 {
				t.Errorf("%s: almanac.spec_sha256 = %q, manifest spec.sha256 = %q", name, kv["almanac.spec_sha256"], ex.man.Spec.SHA256)
			}
			if kv["almanac.version"] == "" || kv["almanac.version"] != ex.man.AlmanacVersion {
				t.Errorf("%s: almanac.version = %q, manifest almanac_version = %q", name, kv["almanac.version"], ex.man.AlmanacVersion)
			}
		}
	})
}

func TestParquetLayout(t *testing.T) {
	forEach(t, func(t *testing.T, ex *example) {
		for _, name := range ex.tableNames() {
			f := sqlStr(ex.table(name))
			chunks := count(t, "SELECT count(*) FROM parquet_metadata("+f+")")
			nrows := count(t, "SELECT count(*) FROM read_parquet("+f+")")
			ncols := int64(len(ex.keys) + len(ex.columns(name)))
			groups := count(t, "SELECT count(DISTINCT row_group_id) FROM parquet_metadata("+f+")")
			if nrows == 0 {
				// An empty table has no row groups and so no column chunks
				// to carry compression or statistics.
				if chunks != 0 {
					t.Errorf("%s: empty, yet %d column chunks", name, chunks)
				}
				continue
			}
			if chunks != ncols*groups || groups == 0 {
				t.Errorf("%s: %d column chunks in %d row groups, want %d columns each", name, chunks, groups, ncols)
			}
			none(t, name+": every column chunk zstd-compressed",
				"SELECT row_group_id, path_in_schema, compression FROM parquet_metadata("+f+") WHERE compression <> 'ZSTD'")
			none(t, name+": string columns dictionary-encoded",
				"SELECT row_group_id, path_in_schema, encodings FROM parquet_metadata("+f+") WHERE type = 'BYTE_ARRAY' AND encodings NOT LIKE '%DICTIONARY%'")
			none(t, name+": statistics on every column chunk that holds a value",
				`SELECT row_group_id, path_in_schema, stats_null_count, stats_min_value, stats_max_value FROM parquet_metadata(`+f+`)
				WHERE stats_null_count IS NULL OR (num_values > stats_null_count AND (stats_min_value IS NULL OR stats_max_value IS NULL))`)
			// The statistics of numeric and date columns are the true
			// minimum and maximum.
			for _, c := range ex.columns(name) {
				if c[1] == "VARCHAR" {
					continue
				}
				q := fmt.Sprintf(`SELECT
					(SELECT min(CAST(stats_min_value AS %[1]s)) FROM parquet_metadata(%[2]s) WHERE path_in_schema = '%[3]s') IS NOT DISTINCT FROM (SELECT min("%[3]s") FROM read_parquet(%[2]s))
					AND (SELECT max(CAST(stats_max_value AS %[1]s)) FROM parquet_metadata(%[2]s) WHERE path_in_schema = '%[3]s') IS NOT DISTINCT FROM (SELECT max("%[3]s") FROM read_parquet(%[2]s))
					AND (SELECT sum(stats_null_count) FROM parquet_metadata(%[2]s) WHERE path_in_schema = '%[3]s') = (SELECT count(*) - count("%[3]s") FROM read_parquet(%[2]s))`,
					c[1], f, c[0])
				if one(t, q) != "true" {
					t.Errorf("%s.%s: min/max/null-count statistics do not match the data", name, c[0])
				}
			}
		}
	})
}

func TestSortOrder(t *testing.T) {
	forEach(t, func(t *testing.T, ex *example) {
		// Each table's rows in file order must be the rows in the order
		// the contract gives: keys by byte order (encode() makes the
		// comparison one of bytes), then the listed columns. Ties keep
		// file order, so only a real inversion counts.
		orders := []struct{ view, order, unique string }{
			{"{fc}", "{KO}, list_position({entries}, method), step", "{K}, method, step"},
			{"{comp}", "{KO}, period", "{K}, period"},
			{"{sf}", "{KO}, position", "{K}, position"},
			// Run-level rows first, the series' rows, then the run-level
			// summary rows of the decomposition's warnings (tables.md).
			{"{prob}", "(message LIKE '%one row per series with problems: {detail: series}'), " + strings.ReplaceAll(ex.sql("{KO}"), ")", ") NULLS FIRST"), ""},
		}
		if ex.eval != nil {
			orders = append(orders,
				struct{ view, order, unique string }{"{acc}", "{KO}, list_position({entries}, method), fold", "{K}, method, fold"},
				struct{ view, order, unique string }{"{ch}", "{KO}", "{K}"})
		}
		for _, c := range orders {
			none(t, ex.sql(c.view)+" rows in contract order", ex.sql(`
				SELECT file_row_number, rn FROM (
					SELECT file_row_number, row_number() OVER (ORDER BY `+c.order+`, file_row_number) - 1 AS rn FROM `+c.view+`)
				WHERE file_row_number <> rn ORDER BY file_row_number`))
			if c.unique != "" {
				none(t, ex.sql(c.view)+" sort key unique", ex.sql("SELECT "+c.unique+", count(*) FROM "+c.view+" GROUP BY ALL HAVING count(*) > 1"))
			}
		}
		// Within a series, the forecast problems follow the spec's method order.
		none(t, "problems of a series in method order", ex.sql(`
			SELECT * FROM (
				SELECT {K}, method, file_row_number,
					lag(list_position({entries}, method)) OVER (PARTITION BY {K} ORDER BY file_row_number) AS prev,
					list_position({entries}, method) AS cur
				FROM {prob} WHERE method IS NOT NULL)
			WHERE prev > cur`))
	})
}

func TestInput(t *testing.T) {
	forEach(t, func(t *testing.T, ex *example) {
		if len(ex.man.Inputs) != 1 {
			t.Fatalf("manifest lists %d inputs, want 1", len(ex.man.Inputs))
		}
		in := ex.man.Inputs[0]
		b, err := os.ReadFile(filepath.Join(repoRoot, ex.input))
		if err != nil {
			t.Fatal(err)
		}
		sum := sha256.Sum256(b)
		if in.SHA256 != hex.EncodeToString(sum[:]) || in.Size != int64(len(b)) {
			t.Errorf("manifest input %s: %d bytes sha256 %s; file has %d bytes sha256 %x", in.Path, in.Size, in.SHA256, len(b), sum)
		}
		n := count(t, ex.sql("SELECT count(*) FROM {raw}"))
		if in.Rows != n || ex.man.RowsRead != n {
			t.Errorf("input has %d rows (DuckDB); manifest inputs[0].rows %d, rows_read %d", n, in.Rows, ex.man.RowsRead)
		}
		if miss := count(t, ex.sql("SELECT count(*) - count(value) FROM {raw}")); miss != ex.man.MissingValues {
			t.Errorf("input has %d missing values (DuckDB); manifest says %d", miss, ex.man.MissingValues)
		}
		if series := count(t, ex.sql("SELECT count(*) FROM (SELECT DISTINCT {K} FROM {raw})")); series != ex.man.Series {
			t.Errorf("input has %d series (DuckDB); manifest says %d", series, ex.man.Series)
		}
		if ex.combine == "reject" {
			none(t, "combine: reject, so one row per series and period",
				ex.sql("SELECT {K}, period, count(*) FROM {raw} GROUP BY ALL HAVING count(*) > 1"))
		}
		if ex.gaps == "reject" {
			none(t, "gaps: reject, so no period without a row", ex.sql("SELECT {K}, period FROM {shaped} WHERE y IS NULL"))
		}
		// The recomputation below assumes complete series.
		if miss := count(t, ex.sql("SELECT count(*) FROM {shaped} WHERE y IS NULL")); miss != 0 {
			t.Fatalf("%d missing periods; the SQL recomputation handles complete series only", miss)
		}
		// Totals per first key (depot, route) over the whole history
		// from the input, against the sum of observed in components for
		// the series that have components.
		k0 := ex.keys[0]
		got := rows(t, ex.sql(`
			WITH inp AS (SELECT `+k0+` AS k, sum(r.value) AS total FROM {raw} r
					WHERE EXISTS (SELECT 1 FROM {comp} c WHERE `+ex.on("c", "r")+`) GROUP BY ALL),
				out AS (SELECT `+k0+` AS k, sum(observed) AS total FROM {comp} GROUP BY ALL)
			SELECT k, CAST(inp.total AS VARCHAR), CAST(out.total AS VARCHAR) FROM inp FULL JOIN out USING (k) ORDER BY k`))
		if len(got) < 2 {
			t.Fatalf("only %d %s totals to compare", len(got), k0)
		}
		for _, r := range got {
			if r[1] != r[2] {
				t.Errorf("%s %s: input total %s, components observed total %s", k0, r[0], r[1], r[2])
			}
		}
	})
}

func TestForecasts(t *testing.T) {
	forEach(t, func(t *testing.T, ex *example) {
		none(t, "method is a label of the spec", ex.sql("SELECT DISTINCT method FROM {fc} WHERE list_position({entries}, method) IS NULL"))
		// A forecast for every series and method, except where problems
		// holds an error for that series and method; the combination for
		// every series that had backtest folds.
		comb := ""
		if ex.combination() != "" {
			comb = "UNION ALL SELECT {K}, {comb} FROM {ch} WHERE folds > 0"
		}
		none(t, "forecast (series, method) pairs", ex.sql(`
			WITH series AS (SELECT DISTINCT {K} FROM {raw}),
				expected AS (SELECT s.*, m.method FROM series s CROSS JOIN (SELECT unnest({labels}) AS method) m
					WHERE NOT EXISTS (SELECT 1 FROM {prob} p WHERE `+ex.on("p", "s")+` AND p.method = m.method AND p.severity = 'error')
					`+comb+`),
				got AS (SELECT DISTINCT {K}, method FROM {fc})
			SELECT 'missing', * FROM (SELECT * FROM expected EXCEPT SELECT * FROM got)
			UNION ALL
			SELECT 'unexpected', * FROM (SELECT * FROM got EXCEPT SELECT * FROM expected)`))
		for _, mm := range ex.man.Methods {
			n := count(t, ex.sql("SELECT count(*) FROM (SELECT DISTINCT {K} FROM {fc} WHERE method = "+sqlStr(mm.Label)+")"))
			if n != mm.Series || n == 0 {
				t.Errorf("method %s: %d series forecast, manifest series_forecast %d", mm.Label, n, mm.Series)
			}
		}
		none(t, "one model per series and method", ex.sql("SELECT {K}, method FROM {fc} GROUP BY ALL HAVING count(DISTINCT model) <> 1 OR count(model) <> count(*)"))
		none(t, "steps 1…horizon once each", ex.sql(`
			SELECT {K}, method, count(*), min(step), max(step), count(DISTINCT step) FROM {fc} GROUP BY ALL
			HAVING NOT (count(*) = {H} AND min(step) = 1 AND max(step) = {H} AND count(DISTINCT step) = {H})`))
		var consecutive, shape string
		if ex.freq == "week" {
			consecutive = "date_diff('day', prev, period) = 7"
			shape = "isodow(period) = 1"
		} else {
			consecutive = "date_diff('month', prev, period) = 3"
			shape = "day(period) = 1 AND month(period) IN (1, 4, 7, 10)"
		}
		none(t, "consecutive forecast periods", ex.sql(`
			SELECT * FROM (
				SELECT {K}, method, step, period, lag(period) OVER (PARTITION BY {K}, method ORDER BY step) AS prev FROM {fc})
			WHERE NOT `+shape+` OR (prev IS NOT NULL AND NOT `+consecutive+`)`))
		// Step h is h periods after the series' last period.
		none(t, "forecast periods follow the history", ex.sql(`
			WITH last AS (SELECT {K}, max(period) AS p FROM {shaped} GROUP BY {K})
			SELECT {fK}, f.method, f.step, f.period, l.p FROM {fc} f LEFT JOIN last l ON `+ex.on("f", "l")+`
			WHERE l.p IS NULL OR f.period <> {next}(l.p, f.step)`))
		if ex.end == "panel" {
			none(t, "shaping.end panel: every series' forecasts start at one period", ex.sql(`
				SELECT {K}, method, period FROM {fc} WHERE step = 1 AND period <> {next}((SELECT max(period) FROM {raw}), 1)`))
		}
		none(t, "forecast values present", ex.sql("SELECT {K}, method, step FROM {fc} WHERE value IS NULL"))

		// Every value of the methods with a closed form, recomputed from
		// the input by DuckDB; the fitted methods are checked for their
		// shape above and for their model here.
		for _, m := range ex.methods {
			if !m.exact() {
				ex.fittedModel(t, m)
				continue
			}
			var join, want string
			switch m.kind {
			case "naive":
				want = "b.last_y"
			case "mean":
				want = "b.mean_y"
			case "drift":
				want = "b.last_y + f.step * (b.last_y - b.first_y) / (b.n - 1)"
			case "seasonal_naive":
				join = "LEFT JOIN {shaped} s ON " + ex.on("s", "f") + " AND s.idx = b.n - {M} + (f.step - 1) % {M}"
				want = "s.y"
			case "classical":
				dec := "{dec}"
				if m.form == "additive" {
					dec = "{deca}"
				}
				// With seasonal: auto and no season by the test (the model
				// says so) the factors are 1 (or 0), so the adjusted series
				// is the series itself.
				noSeason := "starts_with(f.model, 'classical(no season by the seasonality test; ')"
				var p string
				switch m.trend {
				case "adjusted_line":
					p = "CASE WHEN " + noSeason + " THEN l.ay + l.by * (l.n + f.step) ELSE l.aa + l.ba * (l.n + f.step) END"
				case "trend_line":
					p = "l.at + l.bt * (l.n + f.step)"
				case "trend_step":
					p = "l.tl + (l.n + f.step - l.tlast) * (l.tl - l.tf) / (l.tlast - l.tfirst)"
				case "trend_flat":
					p = "l.tl"
				default:
					t.Fatalf("trend %q not handled", m.trend)
				}
				join = `LEFT JOIN (
						SELECT {K}, any_value(n) AS n, any_value(form) AS form,
							regr_slope(trend, idx + 1) AS bt, regr_intercept(trend, idx + 1) AS at,
							regr_slope(adjusted, idx + 1) AS ba, regr_intercept(adjusted, idx + 1) AS aa,
							regr_slope(y, idx + 1) AS by, regr_intercept(y, idx + 1) AS ay,
							arg_max(trend, idx) FILTER (WHERE trend IS NOT NULL) AS tl, max(idx + 1) FILTER (WHERE trend IS NOT NULL) AS tlast,
							arg_min(trend, idx) FILTER (WHERE trend IS NOT NULL) AS tf, min(idx + 1) FILTER (WHERE trend IS NOT NULL) AS tfirst
						FROM ` + dec + ` GROUP BY {K}) l ON ` + ex.on("l", "f") + `
					LEFT JOIN (SELECT DISTINCT {K}, j, seasonal FROM ` + dec + `) sf ON ` + ex.on("sf", "f") + ` AND sf.j = (l.n + f.step - 1) % {M}`
				want = "CASE WHEN " + noSeason + " THEN " + p + " WHEN l.form = 'multiplicative' THEN (" + p + ") * sf.seasonal ELSE (" + p + ") + sf.seasonal END"
				// The model says what was fitted, and a fallback is said
				// in the model and in problems.
				fallback := "FALSE"
				if m.form == "multiplicative" {
					fallback = "l.form = 'additive'"
				}
				none(t, m.label+": model and fallback warning", ex.sql(`
					SELECT {fK}, f.step, f.model, l.form FROM {fc} f
					LEFT JOIN (SELECT DISTINCT {K}, form FROM `+dec+`) l ON `+ex.on("l", "f")+`
					WHERE f.method = `+sqlStr(m.label)+` AND NOT (
						(starts_with(f.model, 'classical(' || l.form || ', trend=`+m.trend+`')
							OR starts_with(f.model, 'classical(no season by the seasonality test; ' || l.form || ', trend=`+m.trend+`'))
						AND contains(f.model, 'fell back from multiplicative') = (`+fallback+`)
						AND EXISTS (SELECT 1 FROM {prob} p WHERE `+ex.on("p", "f")+` AND p.method = f.method
							AND p.stage = 'forecast' AND p.severity = 'warning') = (`+fallback+`))`))
			default:
				t.Fatalf("method kind %q not handled", m.kind)
			}
			if m.kind != "classical" {
				none(t, m.label+": model", ex.sql("SELECT DISTINCT model FROM {fc} WHERE method = "+sqlStr(m.label)+" AND model <> "+sqlStr(m.kind)))
			}
			// With bounds or totals asked for, a series whose history
			// never goes below zero gets no negative forecast (tables.md):
			// negative values are raised to zero.
			if ex.eval != nil && (len(ex.eval.levels) > 0 || len(ex.eval.leads) > 0) {
				want = "CASE WHEN b.min_y >= 0 THEN greatest(" + want + ", 0) ELSE " + want + " END"
			}
			q := `
				WITH b AS (SELECT {K}, any_value(n) AS n, arg_max(y, idx) AS last_y, arg_min(y, idx) AS first_y, avg(y) AS mean_y,
							min(y) AS min_y
						FROM {shaped} GROUP BY {K})
				SELECT {fK}, f.step, f.value, ` + want + ` AS want
				FROM {fc} f LEFT JOIN b ON ` + ex.on("b", "f") + ` ` + join + `
				WHERE f.method = ` + sqlStr(m.label) + ` AND NOT near(f.value, ` + want + `)`
			none(t, m.label+": values recomputed by DuckDB", ex.sql(q))
		}
	})
}

// labelPos is the 1-based position of the method labelled label, 0 if none.
func labelPos(ms []method, label string) int {
	for i, m := range ms {
		if m.label == label {
			return i + 1
		}
	}
	return 0
}

// fittedModel checks the model column of a method the test does not
// recompute: it names the method with its settings in parentheses, and a
// seasonal method that needs strictly positive values (holt_winters with a
// multiplicative season) says where it fell back to additive, exactly for
// the series with a value ≤ 0 and with a warning in problems.
func (ex *example) fittedModel(t *testing.T, m method) {
	t.Helper()
	none(t, m.label+": model names the method", ex.sql(`
		SELECT DISTINCT {K}, model FROM {fc} WHERE method = `+sqlStr(m.label)+` AND NOT starts_with(model, `+sqlStr(m.kind+"(")+`)`))
	fallback := "FALSE"
	if m.kind == "holt_winters" && m.opts["seasonal"] == "multiplicative" {
		fallback = "s.min_y <= 0"
		none(t, m.label+": model states the season used", ex.sql(`
			SELECT DISTINCT {K}, model FROM {fc} WHERE method = `+sqlStr(m.label)+`
			AND NOT (starts_with(model, 'holt_winters(') AND (contains(model, 'season=multiplicative)')
				OR contains(model, 'season=additive; fell back from multiplicative)')))`))
	}
	none(t, m.label+": fallback from multiplicative exactly where a value is ≤ 0, with a warning", ex.sql(`
		SELECT {fK}, f.model, s.min_y FROM (SELECT DISTINCT {K}, model FROM {fc} WHERE method = `+sqlStr(m.label)+`) f
		JOIN (SELECT {K}, min(y) AS min_y FROM {shaped} GROUP BY {K}) s ON `+ex.on("f", "s")+`
		WHERE contains(f.model, 'fell back from multiplicative') <> (`+fallback+`)
			OR EXISTS (SELECT 1 FROM {prob} p WHERE `+ex.on("p", "f")+` AND p.method = `+sqlStr(m.label)+`
				AND p.stage = 'forecast' AND p.severity = 'warning') <> (`+fallback+`)`))
}

func (ex *example) keyList(alias string) string {
	return alias + "." + strings.Join(ex.keys, ", "+alias+".")
}

func TestComponents(t *testing.T) {
	forEach(t, func(t *testing.T, ex *example) {
		none(t, "decomposition and form", ex.sql(`
			SELECT {K}, decomposition, form, count(*) FROM {comp} GROUP BY ALL
			HAVING decomposition <> 'classical' OR form NOT IN ('additive', 'multiplicative')`))
		none(t, "one form per series", ex.sql("SELECT {K} FROM {comp} GROUP BY {K} HAVING count(DISTINCT form) <> 1"))
		// Components for exactly the series whose decomposition did not
		// fail, and a fallback to additive said as a warning.
		none(t, "series with components", ex.sql(`
			WITH series AS (SELECT DISTINCT {K} FROM {raw}),
				expected AS (SELECT * FROM series s WHERE NOT EXISTS (
					SELECT 1 FROM {prob} p WHERE `+ex.on("p", "s")+` AND p.stage = 'decompose' AND p.severity = 'error')),
				got AS (SELECT DISTINCT {K} FROM {comp})
			SELECT 'missing', * FROM (SELECT * FROM expected EXCEPT SELECT * FROM got)
			UNION ALL SELECT 'unexpected', * FROM (SELECT * FROM got EXCEPT SELECT * FROM expected)
			UNION ALL SELECT 'not in the recomputation', * FROM (SELECT * FROM got EXCEPT SELECT DISTINCT {K} FROM {dec})`))
		none(t, "form additive exactly where a value is ≤ 0, with a decompose warning", ex.sql(`
			SELECT c.*, s.min_y FROM (SELECT DISTINCT {K}, form FROM {comp}) c
			JOIN (SELECT {K}, min(y) AS min_y FROM {shaped} GROUP BY {K}) s ON `+ex.on("c", "s")+`
			WHERE (c.form = 'additive') <> (s.min_y <= 0)
				OR (c.form = 'additive') AND NOT EXISTS (SELECT 1 FROM {prob} p WHERE `+ex.on("p", "c")+`
					AND p.stage = 'decompose' AND p.severity = 'warning' AND p.method IS NULL)
					AND NOT EXISTS (SELECT 1 FROM {prob} p WHERE p.stage = 'decompose' AND p.severity = 'warning'
					AND p.code = 'nonpositive_for_multiplicative' AND p.message LIKE '%one row per series with problems: {detail: series}')`))
		// observed is the input, shaped: combined per period, every
		// period of the series present, gaps filled.
		none(t, "observed equals the shaped input", ex.sql(`
			SELECT coalesce(c.period, s.period) AS period, c.observed, s.y
			FROM {comp} c FULL JOIN (SELECT * FROM {shaped} s WHERE EXISTS (SELECT 1 FROM {comp} c WHERE `+ex.on("c", "s")+`)) s
				ON `+ex.on("c", "s")+` AND c.period = s.period
			WHERE c.observed IS DISTINCT FROM s.y`))
		// The identities of tables.md.
		checked := count(t, ex.sql(`SELECT count(*) FROM {comp} WHERE form = 'multiplicative'
			AND observed IS NOT NULL AND trend IS NOT NULL AND seasonal IS NOT NULL AND remainder IS NOT NULL`))
		mult := count(t, ex.sql("SELECT count(*) FROM {comp} WHERE form = 'multiplicative'"))
		if checked == 0 || mult == 0 {
			t.Errorf("no multiplicative rows to check (%d rows, %d complete)", mult, checked)
		}
		none(t, "multiplicative: observed = trend × seasonal × remainder", ex.sql(`
			SELECT {K}, period, observed, trend, seasonal, remainder FROM {comp}
			WHERE form = 'multiplicative' AND observed IS NOT NULL AND trend IS NOT NULL AND seasonal IS NOT NULL AND remainder IS NOT NULL
				AND abs(observed - trend * seasonal * remainder) > 1e-9 * abs(observed)`))
		none(t, "multiplicative: adjusted = observed ÷ seasonal", ex.sql(`
			SELECT {K}, period, observed, seasonal, adjusted FROM {comp}
			WHERE form = 'multiplicative' AND observed IS NOT NULL
				AND (seasonal IS NULL OR adjusted IS NULL OR abs(adjusted - observed / seasonal) > 1e-9 * abs(observed / seasonal))`))
		none(t, "additive: observed = trend + seasonal + remainder", ex.sql(`
			SELECT {K}, period, observed, trend, seasonal, remainder FROM {comp}
			WHERE form = 'additive' AND observed IS NOT NULL AND trend IS NOT NULL
				AND NOT near(trend + seasonal + remainder, observed)`))
		none(t, "additive: adjusted = observed − seasonal", ex.sql(`
			SELECT {K}, period, observed, seasonal, adjusted FROM {comp}
			WHERE form = 'additive' AND observed IS NOT NULL AND NOT near(adjusted, observed - seasonal)`))
		// trend is NULL exactly at the ends, where the centred moving
		// average is undefined (the series are complete).
		none(t, "trend NULL exactly at the ends", ex.sql(`
			SELECT * FROM (
				SELECT {K}, period, trend, remainder,
					row_number() OVER (PARTITION BY {K} ORDER BY period) - 1 AS i, count(*) OVER (PARTITION BY {K}) AS n FROM {comp})
			WHERE (trend IS NULL) <> (i < {M} // 2 OR i >= n - {M} // 2) OR (remainder IS NULL) <> (trend IS NULL)`))
		// Every column, recomputed by DuckDB from the input.
		none(t, "components recomputed by DuckDB", ex.sql(`
			SELECT c.period, c.form, d.form, c.trend, d.trend, c.seasonal, d.seasonal, c.remainder, d.remainder, c.adjusted, d.adjusted
			FROM {comp} c LEFT JOIN {dec} d ON `+ex.on("c", "d")+` AND c.period = d.period
			WHERE d.form IS DISTINCT FROM c.form OR NOT near(c.trend, d.trend) OR NOT near(c.seasonal, d.seasonal)
				OR NOT near(c.remainder, d.remainder) OR NOT near(c.adjusted, d.adjusted)`))
		// seasonal is the factor of the period's calendar position.
		none(t, "seasonal is the factor of the calendar position", ex.sql(`
			SELECT c.period, {pos}(c.period) AS position, c.seasonal, f.factor FROM {comp} c
			LEFT JOIN {sf} f ON `+ex.on("c", "f")+` AND f.position = {pos}(c.period)
			WHERE f.factor IS NULL OR c.seasonal <> f.factor OR c.form <> f.form OR c.decomposition <> f.decomposition`))
	})
}

func TestSeasonalFactors(t *testing.T) {
	forEach(t, func(t *testing.T, ex *example) {
		none(t, "positions 1…season length once each", ex.sql(`
			SELECT {K}, count(*), count(DISTINCT position), min(position), max(position) FROM {sf} GROUP BY {K}
			HAVING NOT (count(*) = {M} AND count(DISTINCT position) = {M} AND min(position) = 1 AND max(position) = {M})`))
		none(t, "factors for the series with components", ex.sql(`
			SELECT 'missing', * FROM (SELECT DISTINCT {K} FROM {comp} EXCEPT SELECT DISTINCT {K} FROM {sf})
			UNION ALL SELECT 'unexpected', * FROM (SELECT DISTINCT {K} FROM {sf} EXCEPT SELECT DISTINCT {K} FROM {comp})`))
		if n := count(t, ex.sql("SELECT count(DISTINCT ({K})) FROM {sf}")); n == 0 {
			t.Fatal("no seasonal factors")
		}
		none(t, "factors average to 1 (multiplicative) or 0 (additive)", ex.sql(`
			SELECT {K}, form, avg(factor) FROM {sf} GROUP BY {K}, form
			HAVING count(DISTINCT decomposition) <> 1 OR NOT (
				(form = 'multiplicative' AND abs(avg(factor) - 1) <= 1e-9) OR (form = 'additive' AND abs(avg(factor)) <= 1e-9))`))
		// count is the number of detrended values at the position: the
		// components rows there with both observed and trend.
		none(t, "count of detrended values", ex.sql(`
			WITH d AS (SELECT {K}, {pos}(period) AS position, count(*) AS n FROM {comp}
					WHERE observed IS NOT NULL AND trend IS NOT NULL GROUP BY ALL)
			SELECT f.position, f.count, d.n FROM {sf} f LEFT JOIN d ON `+ex.on("f", "d")+` AND f.position = d.position
			WHERE f.count IS DISTINCT FROM d.n`))
		none(t, "factors recomputed by DuckDB", ex.sql(`
			SELECT f.position, f.factor, d.seasonal, f.count, d.cnt FROM {sf} f
			LEFT JOIN (SELECT DISTINCT {K}, {pos}(period) AS position, seasonal, cnt, form FROM {dec}) d
				ON `+ex.on("f", "d")+` AND f.position = d.position
			WHERE NOT near(f.factor, d.seasonal) OR f.count IS DISTINCT FROM d.cnt OR f.form IS DISTINCT FROM d.form`))
	})
}

func TestProblems(t *testing.T) {
	forEach(t, func(t *testing.T, ex *example) {
		none(t, "problem fields", ex.sql(`
			SELECT * FROM {prob} WHERE severity NOT IN ('error', 'warning') OR stage IS NULL OR stage = ''
				OR message IS NULL OR message = '' OR (method IS NOT NULL AND list_position({entries}, method) IS NULL)`))
		got := rows(t, ex.sql("SELECT severity, count(*) FROM {prob} GROUP BY ALL ORDER BY ALL"))
		var errs, warns int64
		for _, r := range got {
			n, _ := strconv.ParseInt(r[1], 10, 64)
			switch r[0] {
			case "error":
				errs = n
			case "warning":
				warns = n
			}
		}
		if errs != ex.man.Problems.Errors || warns != ex.man.Problems.Warnings {
			t.Errorf("problems.parquet: %d errors, %d warnings; manifest says %d, %d", errs, warns, ex.man.Problems.Errors, ex.man.Problems.Warnings)
		}
		// Series too short for two seasons: a decompose error and an error
		// for every method that needs two seasons (classical, a seasonal
		// holt_winters, stl), and nothing else fails.
		none(t, "decompose errors exactly for series shorter than two seasons", ex.sql(`
			WITH short AS (SELECT {K} FROM {shaped} GROUP BY {K} HAVING count(y) < 2 * {M}),
				errs AS (SELECT DISTINCT {K} FROM {prob} WHERE stage = 'decompose' AND severity = 'error')
			SELECT 'missing', * FROM (SELECT * FROM short EXCEPT SELECT * FROM errs)
			UNION ALL SELECT 'unexpected', * FROM (SELECT * FROM errs EXCEPT SELECT * FROM short)`))
		var seasonal []string
		for _, m := range ex.methods {
			if m.twoSeasons {
				seasonal = append(seasonal, sqlStr(m.label))
			}
		}
		none(t, "forecast errors exactly for the two-season methods of short series", ex.sql(`
			WITH short AS (SELECT {K} FROM {shaped} GROUP BY {K} HAVING count(y) < 2 * {M}),
				want AS (SELECT s.*, m.method FROM short s CROSS JOIN (SELECT unnest([`+strings.Join(seasonal, ", ")+`]::VARCHAR[]) AS method) m),
				errs AS (SELECT {K}, method FROM {prob} WHERE stage = 'forecast' AND severity = 'error')
			SELECT 'missing', * FROM (SELECT * FROM want EXCEPT SELECT * FROM errs)
			UNION ALL SELECT 'unexpected', * FROM (SELECT * FROM errs EXCEPT ALL SELECT * FROM want)`))
		if ex.eval != nil {
			// A backtest warning, tied to no method, exactly for the series
			// that got fewer folds than the spec asks for.
			none(t, "backtest warnings exactly for series with fewer folds", ex.sql(fmt.Sprintf(`
				WITH fewer AS (SELECT {K} FROM {ch} WHERE folds < %d),
					warns AS (SELECT {K} FROM {prob} WHERE stage = 'backtest' AND severity = 'warning' AND method IS NULL)
				SELECT 'missing', * FROM (SELECT * FROM fewer EXCEPT SELECT * FROM warns)
				UNION ALL SELECT 'unexpected', * FROM (SELECT * FROM warns EXCEPT ALL SELECT * FROM fewer)`, ex.canon.Backtest.Folds)))
		}
	})
}

// TestChecksCanFail makes sure the rule queries see a broken table: a
// copy of forecasts with two rows swapped and a value changed must fail
// the order and value checks; a copy of choices with one series' chosen
// entry swapped for its runner-up must fail the selection check at that
// series; a copy of accuracy with one naive MASE changed must fail the
// metric recomputation at that row.
func TestChecksCanFail(t *testing.T) {
	ready(t)
	ex := examples[0]
	broken := filepath.Join(workDir, "broken.parquet")
	_, err := db.Exec(ex.sql(fmt.Sprintf(`COPY (
			SELECT * EXCLUDE (file_row_number, value),
				CASE WHEN file_row_number = 5 THEN value + 1 ELSE value END AS value
			FROM {fc}
			ORDER BY CASE file_row_number WHEN 0 THEN 1 WHEN 1 THEN 0 ELSE file_row_number END)
		TO %s (FORMAT parquet)`, sqlStr(broken))))
	if err != nil {
		t.Fatal(err)
	}
	inversions := count(t, ex.sql(fmt.Sprintf(`SELECT count(*) FROM (
			SELECT file_row_number, row_number() OVER (ORDER BY {KO}, list_position({entries}, method), step, file_row_number) - 1 AS rn
			FROM read_parquet(%s, file_row_number = true)) WHERE file_row_number <> rn`, sqlStr(broken))))
	if inversions != 2 {
		t.Errorf("order check sees %d misplaced rows in the broken copy, want 2", inversions)
	}
	changed := count(t, ex.sql(fmt.Sprintf(`SELECT count(*) FROM read_parquet(%s) b JOIN {fc} f
			ON `+ex.on("b", "f")+` AND b.method = f.method AND b.step = f.step WHERE NOT near(b.value, f.value)`, sqlStr(broken))))
	if changed != 1 {
		t.Errorf("near() sees %d changed values in the broken copy, want 1", changed)
	}
	if ex.eval == nil {
		t.Fatalf("%s has no backtest; the choices and accuracy corruptions need one", ex.name)
	}
	// The first scored series (in file order) chooses its runner-up.
	ch := brokenCopy(t, ex.name+"_broken_ch", ex.sql(`
		SELECT * EXCLUDE (file_row_number, chosen),
			CASE WHEN file_row_number = (SELECT min(file_row_number) FROM {ch} WHERE runner_up IS NOT NULL) THEN runner_up ELSE chosen END AS chosen
		FROM {ch} ORDER BY file_row_number`))
	if n := len(rows(t, ex.choiceRule(ch))); n != 1 {
		t.Errorf("the selection check sees %d broken choices in the copy, want 1", n)
	}
	if n := len(rows(t, ex.choiceRule("{ch}"))); n != 0 {
		t.Errorf("the selection check sees %d broken choices in the original", n)
	}
	// One naive fold's MASE moves by 1e-6 (relative).
	acc := brokenCopy(t, ex.name+"_broken_acc", ex.sql(`
		SELECT * EXCLUDE (file_row_number, mase),
			CASE WHEN file_row_number = (SELECT min(file_row_number) FROM {acc} WHERE method = 'naive' AND fold = 2) THEN mase * (1 + 1e-6) ELSE mase END AS mase
		FROM {acc} ORDER BY file_row_number`))
	if n := len(rows(t, ex.accuracyRule(acc))); n != 1 {
		t.Errorf("the accuracy recomputation sees %d broken rows in the copy, want 1", n)
	}
}
