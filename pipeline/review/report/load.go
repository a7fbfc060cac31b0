package report

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"almanac/pipeline/runfolder"
)

// extras is the part of manifest.json the report shows that the runfolder
// Manifest type does not decode.
type extras struct {
	RowsRead      int64 `json:"rows_read"`
	MissingValues int64 `json:"missing_values"`
	Problems      *struct {
		Errors   int `json:"errors"`
		Warnings int `json:"warnings"`
	} `json:"problems"`
	StartedAt   string  `json:"started_at"`
	FinishedAt  string  `json:"finished_at"`
	Seconds     float64 `json:"seconds"`
	Leaderboard *struct {
		OnFallback int    `json:"series_on_fallback"`
		Fallback   string `json:"fallback"`
	} `json:"leaderboard"`
}

// specExtras is the part of the canonical spec the report shows that
// runfolder.CanonicalSpec does not decode.
type specExtras struct {
	Backtest *struct {
		Folds  int    `json:"folds"`
		Window string `json:"window"`
	} `json:"backtest"`
	Selection *struct {
		Metric   string `json:"metric"`
		Fallback string `json:"fallback"`
	} `json:"selection"`
	Intervals *struct {
		Source string `json:"source"`
	} `json:"intervals"`
	Decomposition *struct {
		Method string `json:"method"`
		Form   string `json:"form"`
	} `json:"decomposition"`
}

// choice is one row of choices.parquet.
type choice struct {
	key           string
	chosen        string // "" when NULL
	metric        string
	score         float64 // NaN on a fallback
	runnerUp      string
	runnerUpScore float64
	folds         int
	demandClass   string
	reason        string
}

// problemRow is one row of problems.parquet.
type problemRow struct {
	key      string
	hasKey   bool
	stage    string
	severity string
	method   string
	message  string
}

// fcPoint is one step of a forecast.
type fcPoint struct {
	period time.Time
	value  float64
	lower  []float64 // per level, NaN where absent
	upper  []float64
}

// factor is one seasonal factor.
type factor struct {
	position int
	value    float64
	count    int
}

// pick is a series listed in the report, and why.
type pick struct {
	key     string
	reasons []string
}

// seriesData is everything one listed series' chart needs.
type seriesData struct {
	key      string
	reasons  []string
	found    bool
	choice   *choice
	periods  []time.Time
	observed []float64
	trend    []float64
	decomp   string
	form     string
	method   string // the entry whose forecast is drawn
	model    string
	source   string // interval_source of the drawn rows ("" when none)
	forecast []fcPoint
	previous []fcPoint // the previous run's chosen forecast, when compared
	prevWhat string    // the previous run's entry label
	factors  []factor
	problems []problemRow
	totals   []totalRow // the totals table's rows, when the run has one

	// factorSeason is the season_length of the factors shown (the
	// series' first, shortest cycle) when the run has several; 0 otherwise.
	factorSeason int
}

// change is how much one series' chosen forecast moved since the
// previous run.
type change struct {
	key        string
	rel        float64 // mean |new − old| ÷ mean |old| over common periods
	periods    int
	prevMethod string
	nowMethod  string
}

// model is everything the page shows.
type model struct {
	opt         Options
	run         *runfolder.Run
	spec        *runfolder.CanonicalSpec
	specX       specExtras
	extra       extras
	keys        []string
	levels      []int // interval levels with lower_/upper_ columns in forecasts
	totalLevels []int // levels of the totals table's quantile_ columns
	problems    []problemRow
	choices     []choice // in table order; nil without a backtest
	metric      string
	series      []*seriesData
	missing     []string // requested series not in the run
	worst       []choice
	changes     []change // most changed first; nil without a previous run
	prevDir     string
	prevOnly    int // series only in the previous run
	newOnly     int // series only in this run
	prevErr     string
	noPickBy    string // why the automatic picks fell back to the first series
	methodNote  string // Options.Method named no method of the run
}

// errStop ends a Scan early.
var errStop = errors.New("stop")

func load(runDir string, opt Options) (*model, error) {
	r, err := runfolder.OpenStaged(runDir)
	if err != nil {
		return nil, err
	}
	sp, err := r.Spec()
	if err != nil {
		return nil, err
	}
	m := &model{opt: opt, run: r, spec: sp, keys: sp.Columns.Keys}
	if err := json.Unmarshal(r.Raw, &m.extra); err != nil {
		return nil, fmt.Errorf("%s: manifest.json: %v", runDir, err)
	}
	if len(r.Manifest.Spec.Canonical) > 0 {
		if err := json.Unmarshal(r.Manifest.Spec.Canonical, &m.specX); err != nil {
			return nil, fmt.Errorf("%s: canonical spec: %v", runDir, err)
		}
	}
	if err := m.readSummary(); err != nil {
		return nil, err
	}

	n := opt.Picks
	if n == 0 {
		n = DefaultPicks
	}
	if n < 0 {
		n = 0
	}
	var picks []pick
	add := func(key, why string) {
		for i := range picks {
			if picks[i].key == key {
				picks[i].reasons = append(picks[i].reasons, why)
				return
			}
		}
		picks = append(picks, pick{key: key, reasons: []string{why}})
	}
	opt = m.opt
	for _, k := range opt.Series {
		add(k, "asked for")
	}
	m.worst = worstChoices(m.choices, n)
	for i, c := range m.worst {
		add(c.key, fmt.Sprintf("worst score #%d", i+1))
	}

	var prev map[string]*drawn
	if opt.Previous != "" {
		m.prevDir = opt.Previous
		prev, err = m.comparePrevious(opt.Previous)
		if err != nil {
			// A previous run that cannot be read is noted on the page: the
			// report of this run is still worth writing.
			m.prevErr = err.Error()
			prev, m.changes = nil, nil
		}
		for i, c := range m.changes {
			if i >= n {
				break
			}
			add(c.key, fmt.Sprintf("changed most #%d", i+1))
		}
	}
	if len(picks) == 0 && n > 0 && r.HasTable(runfolder.TableForecasts) {
		// Nothing to rank by (no backtest, no previous run): list the first
		// series in key order so that the page still shows some.
		first, err := firstKeys(r, m.keys, n)
		if err != nil {
			return nil, err
		}
		for _, k := range first {
			add(k, "among the first series")
		}
		if len(first) > 0 {
			m.noPickBy = "This run has no backtest to rank series by, so the charts show the first series in key order."
		}
	}

	m.series = make([]*seriesData, len(picks))
	for i, p := range picks {
		m.series[i] = &seriesData{key: p.key, reasons: p.reasons}
	}
	if err := m.fillSeries(prev); err != nil {
		return nil, err
	}
	var kept []*seriesData
	for _, s := range m.series {
		if s.found {
			kept = append(kept, s)
		} else {
			m.missing = append(m.missing, s.key)
		}
	}
	m.series = kept
	return m, nil
}

// readSummary reads what the page's summary needs: the problems, the
// choices and metric, and the interval levels of the forecasts table.
func (m *model) readSummary() error {
	r := m.run
	var err error
	if m.opt.Method != "" && !r.HasTable(runfolder.TableChoices) {
		known := false
		for _, me := range r.Manifest.Methods {
			known = known || me.Label == m.opt.Method
		}
		if !known {
			m.methodNote = fmt.Sprintf("The method %q asked for is not one of this run's methods; the charts show the spec's first method instead.", m.opt.Method)
			m.opt.Method = ""
		}
	}
	if r.HasTable(runfolder.TableProblems) {
		if m.problems, err = readProblems(r, m.keys); err != nil {
			return err
		}
	}
	if r.HasTable(runfolder.TableChoices) {
		if m.choices, err = readChoices(r, m.keys); err != nil {
			return err
		}
		if len(m.choices) > 0 {
			m.metric = m.choices[0].metric
		}
	}
	if m.metric == "" && m.specX.Selection != nil {
		m.metric = m.specX.Selection.Metric
	}
	if r.HasTable(runfolder.TableForecasts) {
		cols, err := r.Columns(runfolder.TableForecasts)
		if err != nil {
			return err
		}
		m.levels = intervalLevels(cols)
	}
	return nil
}

// intervalLevels lists L for each lower_L column that has its upper_L.
func intervalLevels(cols []string) []int {
	has := map[string]bool{}
	for _, c := range cols {
		has[c] = true
	}
	var out []int
	for _, c := range cols {
		if l, ok := strings.CutPrefix(c, "lower_"); ok && has["upper_"+l] {
			if v, err := strconv.Atoi(l); err == nil {
				out = append(out, v)
			}
		}
	}
	return out
}

func readProblems(r *runfolder.Run, keys []string) ([]problemRow, error) {
	var out []problemRow
	err := r.Scan(runfolder.TableProblems, runfolder.ScanFilter{}, func(t *runfolder.Table) error {
		for i := 0; i < t.Rows; i++ {
			p := problemRow{key: strings.Clone(t.Key(keys, i)), hasKey: true}
			if len(keys) > 0 {
				_, p.hasKey = t.Str(keys[0], i)
			}
			p.stage = strClone(t, runfolder.ColStage, i)
			p.severity = strClone(t, runfolder.ColSeverity, i)
			p.method = strClone(t, runfolder.ColMethod, i)
			p.message = strClone(t, runfolder.ColMessage, i)
			out = append(out, p)
		}
		return nil
	})
	return out, err
}

func strClone(t *runfolder.Table, col string, i int) string {
	if !t.Has(col) {
		return ""
	}
	s, _ := t.Str(col, i)
	return strings.Clone(s)
}

func readChoices(r *runfolder.Run, keys []string) ([]choice, error) {
	var out []choice
	err := r.Scan(runfolder.TableChoices, runfolder.ScanFilter{}, func(t *runfolder.Table) error {
		for i := 0; i < t.Rows; i++ {
			c := choice{key: strings.Clone(t.Key(keys, i))}
			c.chosen = strClone(t, runfolder.ColChosen, i)
			c.metric = strClone(t, runfolder.ColMetric, i)
			c.score = t.Float(runfolder.ColScore, i)
			c.runnerUp = strClone(t, runfolder.ColRunnerUp, i)
			c.runnerUpScore = t.Float(runfolder.ColRunnerUpScore, i)
			c.folds, _ = t.Int(runfolder.ColFolds, i)
			c.demandClass = strClone(t, runfolder.ColDemandClass, i)
			c.reason = strClone(t, runfolder.ColReason, i)
			out = append(out, c)
		}
		return nil
	})
	return out, err
}

// worstChoices are the n series with the highest (worst) chosen score,
// ties broken by key; series without a score are left out.
func worstChoices(cs []choice, n int) []choice {
	var scored []choice
	for _, c := range cs {
		if !math.IsNaN(c.score) && !math.IsInf(c.score, 0) {
			scored = append(scored, c)
		}
	}
	sort.SliceStable(scored, func(i, j int) bool {
		if scored[i].score != scored[j].score {
			return scored[i].score > scored[j].score
		}
		return scored[i].key < scored[j].key
	})
	if len(scored) > n {
		scored = scored[:n]
	}
	return scored
}

// firstKeys are the first n distinct series keys of the forecasts table.
func firstKeys(r *runfolder.Run, keys []string, n int) ([]string, error) {
	var out []string
	cols := append([]string{}, keys...)
	cols = append(cols, runfolder.ColStep)
	err := r.Scan(runfolder.TableForecasts, runfolder.ScanFilter{Columns: cols}, func(t *runfolder.Table) error {
		for i := 0; i < t.Rows; i++ {
			k := t.Key(keys, i)
			if len(out) > 0 && out[len(out)-1] == k {
				continue
			}
			if len(out) == n {
				return errStop
			}
			out = append(out, strings.Clone(k))
		}
		return nil
	})
	if errors.Is(err, errStop) {
		err = nil
	}
	return out, err
}
