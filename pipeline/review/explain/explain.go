// Package explain shows one series of a finished run in the terminal: its
// history, decomposition, backtest scores, the choice made and why, the
// fitted models and the forecast with its intervals, read back from the
// run folder's tables; optionally it also draws a PNG chart.
//
// Number formats (the tests hold the output to them):
//
//   - values (observed, trend, additive seasonal components, forecasts,
//     bounds, summary statistics): a whole number as such ("180"),
//     anything else with two decimals ("179.39");
//   - multiplicative seasonal factors, backtest scores, ADI and CV²: three
//     decimals;
//   - fitted parameters (Options.Params): six significant digits (%.6g);
//   - NULL: "·".
package explain

import (
	"fmt"
	"io"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// Options select what Explain shows.
type Options struct {
	// Methods restricts the backtest, model and forecast sections to these
	// method labels (as in the forecasts table's method column, the
	// combination's label included). Empty: every method in the backtest
	// and model sections, and the forecast of the chosen entry only (every
	// method's forecast when the run has no backtest).
	Methods []string
	// AllForecasts shows every method's forecast (within Methods, when
	// given), not only the chosen entry's.
	AllForecasts bool
	// Seasons is how many of the last seasons the history table lists;
	// 0 means 2.
	Seasons int
	// TrendValues is how many of the last defined trend values to list;
	// 0 means 6.
	TrendValues int
	// SparkWidth is the most characters the history sparkline may take;
	// 0 means 60.
	SparkWidth int
	// Params holds fitted parameters, method label → parameter name →
	// value. The tables do not carry them; a caller that refits the series
	// may fill this, and Explain prints them beside each method's model.
	Params map[string]map[string]float64
	// Refit, when set and Params is nil, refits the run's methods on the
	// series for their fitted parameters (the CLI passes pipeline.Refit).
	// When it fails the explanation is written without them and the reason
	// goes to Warn (if set).
	Refit func(runDir string, key []string) (map[string]map[string]float64, error)
	Warn  io.Writer
	// PNG, when set, is the path of a chart written as well: history,
	// trend, the forecasts shown and their interval bands.
	PNG string
	// PNGWidth and PNGHeight are the chart's size in pixels; 0 means
	// 960 × 480.
	PNGWidth, PNGHeight int
}

// NotFoundError is returned when the run has no series with the key.
type NotFoundError struct {
	Run         string
	KeyColumns  []string
	Key         []string
	Series      int        // series in the run
	Suggestions [][]string // near matches, closest first; may be empty
}

func (e *NotFoundError) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "no series %s in %s (%d series)", keyText(e.KeyColumns, e.Key), e.Run, e.Series)
	if len(e.Suggestions) > 0 {
		b.WriteString("; did you mean:")
		for _, s := range e.Suggestions {
			b.WriteString("\n  ")
			b.WriteString(keyText(e.KeyColumns, s))
		}
	}
	return b.String()
}

// keyText renders a key as column=value pairs, quoting values that hold
// spaces or are empty.
func keyText(cols, key []string) string {
	if len(cols) == 0 && len(key) == 0 {
		return "the run's only series (no key columns)"
	}
	parts := make([]string, len(key))
	for i := range key {
		v := key[i]
		if v == "" || strings.ContainsAny(v, " \t\"=") {
			v = strconv.Quote(v)
		}
		if i < len(cols) {
			parts[i] = cols[i] + "=" + v
		} else {
			parts[i] = v
		}
	}
	return strings.Join(parts, " ")
}

// Explain writes the explanation of the series with the given key (the
// key columns' values in spec order) of the run folder runDir to w.
func Explain(runDir string, key []string, w io.Writer, opt Options) error {
	if opt.Params == nil && opt.Refit != nil {
		params, err := opt.Refit(runDir, key)
		if err != nil && opt.Warn != nil {
			fmt.Fprintf(opt.Warn, "almanac explain: fitted parameters not shown: %v\n", err)
		}
		opt.Params = params
	}
	run, err := runfolder.Open(runDir)
	if err != nil {
		return err
	}
	sd, err := load(run, key, opt)
	if err != nil {
		return err
	}
	if err := render(w, sd, opt); err != nil {
		return err
	}
	if opt.PNG != "" {
		if err := writeChart(opt.PNG, sd, opt); err != nil {
			return fmt.Errorf("chart %s: %v", opt.PNG, err)
		}
		fmt.Fprintf(w, "\nchart written to %s\n", opt.PNG)
	}
	return nil
}

// histRow is one period of the components table.
type histRow struct {
	period                                       time.Time
	observed, trend, seasonal, remainder, adjust float64
}

type factorRow struct {
	position int
	factor   float64
	count    int
}

type foldInfo struct {
	fold                  int
	origin                time.Time
	trainPeriods, testPer int
}

type accCell struct {
	status string
	mase   float64
	metric float64 // the selection metric when it is not mase
}

type choiceRow struct {
	chosen, metric, runnerUp, demandClass, reason string
	hasChosen, hasRunnerUp, hasClass              bool
	score, runnerUpScore, adi, cv2                float64
	folds                                         int
}

type fcRow struct {
	period       time.Time
	step         int
	value        float64
	source       string
	lower, upper []float64 // per level, in levels order
}

type methodFC struct {
	label, model string
	chosen       bool
	rows         []fcRow
}

type problemRow struct {
	stage, severity, method, message string
}

// seriesData is everything the tables say about one series.
type seriesData struct {
	runDir   string
	runName  string
	runID    string
	keyCols  []string
	key      []string
	freq     string
	season   int
	horizon  int
	eval     *runfolder.EvalSpec
	labels   []string // every entry label of the run: methods in spec order, then the combination
	hist     []histRow
	decomp   string
	form     string
	factors  []factorRow
	folds    []foldInfo
	accOrder []string
	acc      map[string]map[int]accCell
	metric   string // selection metric ("" without a backtest)
	choice   *choiceRow
	levels   []int
	fcs      []methodFC
	problems []problemRow
	// the totals table's rows of the series, and its levels
	totals      []totalRow
	totalLevels []int
}

func (sd *seriesData) hasBacktest() bool { return sd.eval.Backtest != nil }

func load(run *runfolder.Run, key []string, opt Options) (*seriesData, error) {
	cs, err := run.Spec()
	if err != nil {
		return nil, err
	}
	ev, err := run.Evaluation()
	if err != nil {
		return nil, err
	}
	sd := &seriesData{
		runDir: run.Dir, runName: cs.Name, runID: run.Manifest.RunID,
		keyCols: cs.Columns.Keys, freq: cs.Calendar.Frequency, season: cs.Calendar.SeasonLength,
		horizon: cs.Horizon, eval: ev, acc: map[string]map[int]accCell{},
	}
	for _, m := range run.Manifest.Methods {
		sd.labels = append(sd.labels, m.Label)
	}
	if ev.Selection != nil && ev.Selection.Combine != nil && ev.Selection.Combine.Label != "" {
		sd.labels = append(sd.labels, ev.Selection.Combine.Label)
	}
	if len(key) != len(sd.keyCols) {
		if len(sd.keyCols) == 0 {
			return nil, fmt.Errorf("run %s has no key columns (one series); give no key, found %d value(s)", run.Dir, len(key))
		}
		return nil, fmt.Errorf("a key is %d value(s), one per key column in spec order (%s); found %d", len(sd.keyCols), strings.Join(sd.keyCols, ", "), len(key))
	}
	sd.key = key

	tables := map[string]*runfolder.Table{}
	for _, name := range []string{runfolder.TableForecasts, runfolder.TableComponents, runfolder.TableSeasonalFactors, runfolder.TableAccuracy, runfolder.TableChoices, runfolder.TableProblems, runfolder.TableTotals} {
		if !run.HasTable(name) {
			continue
		}
		t, err := run.Table(name)
		if err != nil {
			return nil, err
		}
		tables[name] = t
	}
	if tables[runfolder.TableForecasts] == nil {
		return nil, fmt.Errorf("%s has no forecasts table", run.Dir)
	}
	if err := checkMethods(sd, opt); err != nil {
		return nil, err
	}

	found := false
	for _, name := range []string{runfolder.TableForecasts, runfolder.TableComponents, runfolder.TableChoices, runfolder.TableSeasonalFactors, runfolder.TableAccuracy} {
		if t := tables[name]; t != nil {
			if lo, hi := t.KeyRange(sd.keyCols, key); hi > lo {
				found = true
				break
			}
		}
	}
	if !found && tables[runfolder.TableProblems] != nil && len(tables[runfolder.TableProblems].MatchRows(sd.keyCols, key)) > 0 {
		found = true
	}
	if !found {
		return nil, notFound(run.Dir, sd.keyCols, key, tables)
	}

	if t := tables[runfolder.TableComponents]; t != nil {
		loadComponents(sd, t)
	}
	if t := tables[runfolder.TableSeasonalFactors]; t != nil {
		loadFactors(sd, t)
	}
	if t := tables[runfolder.TableChoices]; t != nil {
		loadChoice(sd, t)
	}
	if ev.Selection != nil {
		sd.metric = ev.Selection.Metric
	}
	if t := tables[runfolder.TableAccuracy]; t != nil {
		loadAccuracy(sd, t)
	}
	if err := loadForecasts(sd, tables[runfolder.TableForecasts]); err != nil {
		return nil, err
	}
	if t := tables[runfolder.TableProblems]; t != nil {
		loadProblems(sd, t)
	}
	if t := tables[runfolder.TableTotals]; t != nil {
		if err := loadTotals(sd, t); err != nil {
			return nil, err
		}
	}
	for _, t := range tables {
		if err := t.Err(); err != nil {
			return nil, err
		}
	}
	for label := range opt.Params {
		if !contains(sd.labels, label) && sd.fc(label) == nil {
			return nil, fmt.Errorf("parameters given for method %q, which the run does not have (methods: %s)", label, strings.Join(sd.labels, ", "))
		}
	}
	return sd, nil
}

// loadComponents reads the series' rows of the components table.
func loadComponents(sd *seriesData, t *runfolder.Table) {
	key := sd.key
	lo, hi := t.KeyRange(sd.keyCols, key)
	for i := lo; i < hi; i++ {
		p, _ := t.Date(runfolder.ColPeriod, i)
		sd.hist = append(sd.hist, histRow{p, t.Float(runfolder.ColObserved, i), t.Float(runfolder.ColTrend, i), t.Float(runfolder.ColSeasonal, i), t.Float(runfolder.ColRemainder, i), t.Float(runfolder.ColAdjusted, i)})
		if i == lo {
			sd.decomp, _ = t.Str(runfolder.ColDecomposition, i)
			sd.form, _ = t.Str(runfolder.ColForm, i)
		}
	}
}

// loadFactors reads the series' rows of the seasonal_factors table.
func loadFactors(sd *seriesData, t *runfolder.Table) {
	key := sd.key
	lo, hi := t.KeyRange(sd.keyCols, key)
	// With several season lengths the table holds each cycle's factors,
	// season_length ascending; the explanation lists the shortest cycle's.
	several := slices.Contains(t.Columns(), runfolder.ColSeasonLength)
	first := 0
	if several && hi > lo {
		first, _ = t.Int(runfolder.ColSeasonLength, lo)
	}
	for i := lo; i < hi; i++ {
		if several {
			if sl, _ := t.Int(runfolder.ColSeasonLength, i); sl != first {
				continue
			}
		}
		pos, _ := t.Int(runfolder.ColPosition, i)
		cnt, _ := t.Int(runfolder.ColCount, i)
		sd.factors = append(sd.factors, factorRow{pos, t.Float(runfolder.ColFactor, i), cnt})
		if sd.decomp == "" {
			sd.decomp, _ = t.Str(runfolder.ColDecomposition, i)
			sd.form, _ = t.Str(runfolder.ColForm, i)
		}
	}
}

// loadChoice reads the series' row of the choices table.
func loadChoice(sd *seriesData, t *runfolder.Table) {
	key := sd.key
	lo, hi := t.KeyRange(sd.keyCols, key)
	if hi > lo {
		c := &choiceRow{}
		c.chosen, c.hasChosen = t.Str(runfolder.ColChosen, lo)
		c.metric, _ = t.Str(runfolder.ColMetric, lo)
		c.score = t.Float(runfolder.ColScore, lo)
		c.runnerUp, c.hasRunnerUp = t.Str(runfolder.ColRunnerUp, lo)
		c.runnerUpScore = t.Float(runfolder.ColRunnerUpScore, lo)
		c.folds, _ = t.Int(runfolder.ColFolds, lo)
		c.demandClass, c.hasClass = t.Str(runfolder.ColDemandClass, lo)
		c.adi, c.cv2 = t.Float(runfolder.ColADI, lo), t.Float(runfolder.ColCV2, lo)
		c.reason, _ = t.Str(runfolder.ColReason, lo)
		sd.choice = c
	}
}

// loadAccuracy reads the series' rows of the accuracy table.
func loadAccuracy(sd *seriesData, t *runfolder.Table) {
	key := sd.key
	lo, hi := t.KeyRange(sd.keyCols, key)
	seen := map[int]bool{}
	for i := lo; i < hi; i++ {
		m, _ := t.Str(runfolder.ColMethod, i)
		f, _ := t.Int(runfolder.ColFold, i)
		if _, ok := sd.acc[m]; !ok {
			sd.acc[m] = map[int]accCell{}
			sd.accOrder = append(sd.accOrder, m)
		}
		c := accCell{mase: t.Float(runfolder.ColMASE, i), metric: math.NaN()}
		c.status, _ = t.Str(runfolder.ColStatus, i)
		if sd.metric != "" && sd.metric != runfolder.ColMASE && t.Has(sd.metric) {
			c.metric = t.Float(sd.metric, i)
		}
		sd.acc[m][f] = c
		if !seen[f] {
			seen[f] = true
			o, _ := t.Date(runfolder.ColOrigin, i)
			tp, _ := t.Int(runfolder.ColTrainPeriods, i)
			te, _ := t.Int(runfolder.ColTestPeriods, i)
			sd.folds = append(sd.folds, foldInfo{f, o, tp, te})
		}
	}
	sort.Slice(sd.folds, func(a, b int) bool { return sd.folds[a].fold < sd.folds[b].fold })
}

// loadProblems reads the series' rows of the problems table.
func loadProblems(sd *seriesData, t *runfolder.Table) {
	key := sd.key
	for _, i := range t.MatchRows(sd.keyCols, key) {
		var p problemRow
		p.stage, _ = t.Str(runfolder.ColStage, i)
		p.severity, _ = t.Str(runfolder.ColSeverity, i)
		p.method, _ = t.Str(runfolder.ColMethod, i)
		p.message, _ = t.Str(runfolder.ColMessage, i)
		sd.problems = append(sd.problems, p)
	}
}

func loadForecasts(sd *seriesData, t *runfolder.Table) error {
	cols := t.Columns()
	for _, c := range cols {
		if l, ok := strings.CutPrefix(c, "lower_"); ok {
			lvl, err := strconv.Atoi(l)
			if err != nil || !t.Has("upper_"+l) {
				return fmt.Errorf("%s: unexpected column %s", t.Path, c)
			}
			sd.levels = append(sd.levels, lvl)
		}
	}
	hasChosen, hasSource := t.Has(runfolder.ColChosen), t.Has(runfolder.ColIntervalSource)
	lo, hi := t.KeyRange(sd.keyCols, sd.key)
	for i := lo; i < hi; i++ {
		label, _ := t.Str(runfolder.ColMethod, i)
		if len(sd.fcs) == 0 || sd.fcs[len(sd.fcs)-1].label != label {
			model, _ := t.Str(runfolder.ColModel, i)
			sd.fcs = append(sd.fcs, methodFC{label: label, model: model})
		}
		m := &sd.fcs[len(sd.fcs)-1]
		if hasChosen && t.Bool(runfolder.ColChosen, i) {
			m.chosen = true
		}
		var r fcRow
		r.period, _ = t.Date(runfolder.ColPeriod, i)
		r.step, _ = t.Int(runfolder.ColStep, i)
		r.value = t.Float(runfolder.ColValue, i)
		if hasSource {
			r.source, _ = t.Str(runfolder.ColIntervalSource, i)
		}
		for _, lvl := range sd.levels {
			r.lower = append(r.lower, t.Float(runfolder.ColLower(lvl), i))
			r.upper = append(r.upper, t.Float(runfolder.ColUpper(lvl), i))
		}
		m.rows = append(m.rows, r)
	}
	return nil
}

func (sd *seriesData) fc(label string) *methodFC {
	for i := range sd.fcs {
		if sd.fcs[i].label == label {
			return &sd.fcs[i]
		}
	}
	return nil
}

func checkMethods(sd *seriesData, opt Options) error {
	for _, m := range opt.Methods {
		if !contains(sd.labels, m) {
			return fmt.Errorf("unknown method %q; the run's methods: %s", m, strings.Join(sd.labels, ", "))
		}
	}
	return nil
}

func contains(xs []string, x string) bool {
	for _, y := range xs {
		if y == x {
			return true
		}
	}
	return false
}

// shown reports whether a method label passes the Methods filter.
func shown(opt Options, label string) bool {
	return len(opt.Methods) == 0 || contains(opt.Methods, label)
}

// forecastsShown picks the forecasts the forecast section and the chart
// show.
func (sd *seriesData) forecastsShown(opt Options) []*methodFC {
	var out []*methodFC
	all := opt.AllForecasts || len(opt.Methods) > 0 || !sd.hasBacktest()
	if !all {
		for i := range sd.fcs {
			if sd.fcs[i].chosen {
				out = append(out, &sd.fcs[i])
			}
		}
		if len(out) > 0 {
			return out
		}
	}
	for i := range sd.fcs {
		if shown(opt, sd.fcs[i].label) {
			out = append(out, &sd.fcs[i])
		}
	}
	return out
}

// notFound builds the error for an unknown key, with the closest keys of
// the run as suggestions.
func notFound(dir string, cols, key []string, tables map[string]*runfolder.Table) error {
	seen := map[string]bool{}
	var all [][]string
	for _, name := range []string{runfolder.TableForecasts, runfolder.TableComponents, runfolder.TableChoices, runfolder.TableProblems} {
		t := tables[name]
		if t == nil {
			continue
		}
		for _, k := range t.SeriesKeys(cols) {
			j := strings.Join(k, "\x00")
			if !seen[j] {
				seen[j] = true
				all = append(all, k)
			}
		}
	}
	return &NotFoundError{Run: dir, KeyColumns: cols, Key: key, Series: len(all), Suggestions: nearest(key, all, 5)}
}

// nearest returns up to n keys close to key: by the summed edit distance
// of the lower-cased parts, keeping those within a third of the key's
// length (at least 2), and those that differ in one key column only.
func nearest(key []string, all [][]string, n int) [][]string {
	type cand struct {
		k    []string
		dist int
	}
	total := 0
	for _, p := range key {
		total += len([]rune(p))
	}
	limit := max(2, total/3)
	var cs []cand
	for _, k := range all {
		d, same := 0, 0
		for i := range key {
			d += spec.EditDistance(strings.ToLower(key[i]), strings.ToLower(k[i]))
			if key[i] == k[i] {
				same++
			}
		}
		if d <= limit || (len(key) > 1 && same == len(key)-1 && d <= max(limit, len([]rune(strings.Join(key, ""))))) {
			cs = append(cs, cand{k, d})
		}
	}
	sort.SliceStable(cs, func(a, b int) bool { return cs[a].dist < cs[b].dist })
	var out [][]string
	for i := 0; i < len(cs) && i < n; i++ {
		out = append(out, cs[i].k)
	}
	return out
}
