package report

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"almanac/pipeline/runfolder"
)

var (
	reLeaderboard = regexp.MustCompile(`(?s)<table class="leaderboard">.*?</table>`)
	reLBRow       = regexp.MustCompile(`(?s)<tr(?: class="best")? data-entry="([^"]*)">(.*?)</tr>`)
	reNumCell     = regexp.MustCompile(`<td class="num" data-value="([^"]*)">([^<]*)</td>`)
	reWorstRow    = regexp.MustCompile(`<tr data-key="([^"]*)"><td class="num">\d+</td>`)
	reChangedTbl  = regexp.MustCompile(`(?s)<table class="changed">.*?</table>`)
	reWorstTbl    = regexp.MustCompile(`(?s)<table class="worst">.*?</table>`)
)

func TestGardenReport(t *testing.T) {
	dir := gardenRun(t)
	worst := worstKeys(t, dir, DefaultPicks)
	if len(worst) != DefaultPicks {
		t.Fatalf("the garden run should score at least %d series, got %v", DefaultPicks, worst)
	}
	// Ask for one series that is not among the worst, one that is (it is
	// listed once, with both reasons), and one that does not exist.
	r, err := runfolder.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	ch, err := r.Table("choices")
	if err != nil {
		t.Fatal(err)
	}
	var other string
	for i := 0; i < ch.Rows; i++ {
		if k := ch.Key(r.Keys(), i); !slices.Contains(worst, k) {
			other = k
			break
		}
	}
	opt := Options{Series: []string{other, worst[2], "nowhere / NO-SUCH-SKU"}}
	page := writeReport(t, dir, opt)

	if got, want := headings(page), []string{HeadSummary, HeadLeaderboard, HeadScores, HeadWorst, HeadSeries}; !slices.Equal(got, want) {
		t.Errorf("headings = %q, want %q", got, want)
	}
	if !strings.Contains(page, "<title>Forecast report: garden-supply-weekly</title>") || !strings.Contains(page, "<h1>Forecast report: garden-supply-weekly</h1>") {
		t.Error("page title should name the spec")
	}

	man := rawManifest(t, dir)
	specM := man["spec"].(map[string]any)
	for _, want := range []string{specM["sha256"].(string), specM["name"].(string), "data/order_lines.csv", "123,128"} {
		if !strings.Contains(page, want) {
			t.Errorf("run summary lacks %q", want)
		}
	}
	if id, ok := man["run_id"].(string); ok && id != "" && !strings.Contains(page, id) {
		t.Errorf("run summary lacks the run id %s", id)
	}
	probs := man["problems"].(map[string]any)
	for sev, n := range map[string]float64{"error": probs["errors"].(float64), "warning": probs["warnings"].(float64)} {
		want := fmt.Sprintf(`<span data-severity="%s">%d %ss</span>`, sev, int(n), sev)
		if !strings.Contains(page, want) {
			t.Errorf("problem count: want %s", want)
		}
	}

	checkLeaderboard(t, page, man)

	// The worst list is the six highest scores of choices.parquet.
	wt := reWorstTbl.FindString(page)
	var gotWorst []string
	for _, m := range reWorstRow.FindAllStringSubmatch(wt, -1) {
		gotWorst = append(gotWorst, unescape(m[1]))
	}
	if !slices.Equal(gotWorst, worst) {
		t.Errorf("worst table = %q, want %q", gotWorst, worst)
	}

	// One chart per listed series, in order: asked for, then the worst.
	listed := []string{other, worst[2]}
	for _, k := range worst {
		if !slices.Contains(listed, k) {
			listed = append(listed, k)
		}
	}
	if got := articleKeys(page); !slices.Equal(got, listed) {
		t.Errorf("charted series = %q, want %q", got, listed)
	}
	if !strings.Contains(page, "Listed: asked for; worst score #3.") {
		t.Error("a series both asked for and among the worst should say both")
	}
	if !strings.Contains(page, `class="warn missing-series"`) || !strings.Contains(page, "nowhere / NO-SUCH-SKU") {
		t.Error("a requested key that is not in the run should be named on the page")
	}

	svgs := parseSVGs(t, page)
	if got, want := len(svgs), expectedSVGs(t, dir, listed, true); got != want {
		t.Errorf("%d SVGs, want %d", got, want)
	}
	if got := len(svgsOfClass(svgs, "series-chart")); got != len(listed) {
		t.Errorf("%d series charts, want %d", got, len(listed))
	}
	if len(svgsOfClass(svgs, "leaderboard-chart")) != 1 || len(svgsOfClass(svgs, "histogram-chart")) != 1 {
		t.Error("want one leaderboard chart and one histogram")
	}
	for _, d := range svgs {
		if d.Role != "img" || d.Labels != d.ID+"-t "+d.ID+"-d" || d.Title.ID != d.ID+"-t" || d.Desc.ID != d.ID+"-d" {
			t.Errorf("SVG %s: role %q, aria-labelledby %q, title id %q, desc id %q", d.ID, d.Role, d.Labels, d.Title.ID, d.Desc.ID)
		}
		if strings.TrimSpace(d.Title.Text) == "" || len(strings.TrimSpace(d.Desc.Text)) < 20 {
			t.Errorf("SVG %s needs a title and a real description: %q / %q", d.ID, d.Title.Text, d.Desc.Text)
		}
	}

	// The histogram counts every scored series.
	hist := svgsOfClass(svgs, "histogram-chart")[0]
	if !strings.HasPrefix(hist.Desc.Text, fmt.Sprintf("%d series scored.", countScored(t, dir))) {
		t.Errorf("histogram description %q", hist.Desc.Text)
	}

	// A worst series' chart draws every observed value, the chosen
	// forecast, and both interval bands; its table lists the chosen rows.
	k := worst[0]
	var chart svgDoc
	for _, d := range svgsOfClass(svgs, "series-chart") {
		if strings.HasPrefix(d.Title.Text, k+":") {
			chart = d
		}
	}
	if chart.ID == "" {
		t.Fatalf("no chart titled %s", k)
	}
	obs, fc := seriesRows(t, dir, k)
	var observedPath, forecastPath string
	bands := 0
	for _, p := range chart.Paths {
		switch {
		case p.Stroke == colObserved:
			observedPath = p.D
		case p.Stroke == colForecast && p.Dash == "":
			forecastPath = p.D
		case p.Fill == colBand || p.Stroke == colForecast && p.Dash != "":
			bands++ // the filled narrowest band, and the dotted edges of each wider one
		}
	}
	if got := strings.Count(observedPath, "M") + strings.Count(observedPath, "L"); got != obs {
		t.Errorf("%s: observed line has %d points, components has %d observed values", k, got, obs)
	}
	if got := strings.Count(forecastPath, "M") + strings.Count(forecastPath, "L"); got != len(fc) {
		t.Errorf("%s: forecast line has %d points, want %d", k, got, len(fc))
	}
	if bands != 2 {
		t.Errorf("%s: %d interval bands, want 2 (80 and 95)", k, bands)
	}
	art := articleOf(page, k)
	for _, row := range fc {
		if !strings.Contains(art, row) {
			t.Errorf("%s: forecast table lacks row %s", k, row)
		}
	}

	// Self-contained: nothing to fetch, nothing to run.
	checkSelfContained(t, page)
}

// checkLeaderboard compares the leaderboard table cell by cell with
// manifest.json: the exact value in data-value and the number shown.
func checkLeaderboard(t *testing.T, page string, man map[string]any) {
	t.Helper()
	lb := man["leaderboard"].(map[string]any)
	entries := lb["entries"].([]any)
	chosen := lb["series_per_chosen_method"].(map[string]any)
	rows := reLBRow.FindAllStringSubmatch(reLeaderboard.FindString(page), -1)
	if len(rows) != len(entries) {
		t.Fatalf("leaderboard table has %d rows, manifest %d entries", len(rows), len(entries))
	}
	total := 0
	for i, row := range rows {
		e := entries[i].(map[string]any)
		name := e["method"].(string)
		if unescape(row[1]) != name {
			t.Errorf("row %d is %q, manifest has %q", i, row[1], name)
		}
		cells := reNumCell.FindAllStringSubmatch(row[2], -1)
		if len(cells) != 5 {
			t.Fatalf("row %s: %d numeric cells", name, len(cells))
		}
		n := 0.0
		if c, ok := chosen[name]; ok {
			n = c.(float64)
		}
		total += int(n)
		want := []struct {
			v     float64
			shown string
		}{
			{e["series_scored"].(float64), strconv.Itoa(int(e["series_scored"].(float64)))},
			{e["mean_mase"].(float64), fmt.Sprintf("%.3f", e["mean_mase"].(float64))},
			{e["median_mase"].(float64), fmt.Sprintf("%.3f", e["median_mase"].(float64))},
			{e["win_share"].(float64), fmt.Sprintf("%.1f %%", 100*e["win_share"].(float64))},
			{n, strconv.Itoa(int(n))},
		}
		for j, w := range want {
			got, err := strconv.ParseFloat(cells[j][1], 64)
			if err != nil || got != w.v {
				t.Errorf("%s column %d: data-value %s, manifest %v", name, j, cells[j][1], w.v)
			}
			if cells[j][2] != w.shown {
				t.Errorf("%s column %d shows %q, want %q", name, j, cells[j][2], w.shown)
			}
		}
	}
	// Every series is either won by an entry or on the fallback.
	if fb := int(lb["series_on_fallback"].(float64)); total+fb != int(man["series"].(float64)) {
		t.Errorf("series chosen %d + fallback %d != series %v", total, fb, man["series"])
	}
	if lb["series_on_fallback"].(float64) > 0 && !strings.Contains(page, "took the fallback, <strong>"+lb["fallback"].(string)+"</strong>") {
		t.Error("the fallback count should be stated")
	}
}

func checkSelfContained(t *testing.T, page string) {
	t.Helper()
	for _, bad := range []string{"<script", "<link", "<img", "<iframe", "src=", "url(", "@import", "@font-face"} {
		if strings.Contains(strings.ToLower(page), bad) {
			t.Errorf("page holds %q: it must be self-contained and script-free", bad)
		}
	}
	rest := strings.ReplaceAll(page, `xmlns="http://www.w3.org/2000/svg"`, "")
	if strings.Contains(rest, "http://") || strings.Contains(rest, "https://") {
		t.Error("page refers to a URL")
	}
}

func countScored(t *testing.T, dir string) int {
	r, _ := runfolder.Open(dir)
	tb, err := r.Table("choices")
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for i := 0; i < tb.Rows; i++ {
		if !math.IsNaN(tb.Float("score", i)) {
			n++
		}
	}
	return n
}

// seriesRows counts a series' non-null observed values and renders its
// chosen forecast rows as the report's table rows should show them.
func seriesRows(t *testing.T, dir, key string) (int, []string) {
	t.Helper()
	r, _ := runfolder.Open(dir)
	comp, err := r.Table("components")
	if err != nil {
		t.Fatal(err)
	}
	obs := 0
	for i := 0; i < comp.Rows; i++ {
		if comp.Key(r.Keys(), i) == key && !math.IsNaN(comp.Float("observed", i)) {
			obs++
		}
	}
	fc, err := r.Table("forecasts")
	if err != nil {
		t.Fatal(err)
	}
	var rows []string
	for i := 0; i < fc.Rows; i++ {
		if fc.Key(r.Keys(), i) != key || !fc.Bool("chosen", i) {
			continue
		}
		p, _ := fc.Date("period", i)
		row := fmt.Sprintf(`<tr><td>%s</td><td class="num">%s</td>`, p.Format("2006-01-02"), fmtAuto(fc.Float("value", i)))
		for _, l := range []string{"80", "95"} {
			row += fmt.Sprintf(`<td class="num">%s</td><td class="num">%s</td>`, fmtAuto(fc.Float("lower_"+l, i)), fmtAuto(fc.Float("upper_"+l, i)))
		}
		rows = append(rows, row+"</tr>")
	}
	if len(rows) == 0 {
		t.Fatalf("%s has no chosen forecast rows", key)
	}
	return obs, rows
}

// articleOf is the HTML of the charted series with the key.
func articleOf(page, key string) string {
	start := strings.Index(page, fmt.Sprintf(`data-key="%s">`, esc(key))+"\n<h3>")
	if start < 0 {
		return ""
	}
	end := strings.Index(page[start:], "</article>")
	return page[start : start+end]
}

// The weekly factor chart labels positions with the pipeline's numbering:
// each period's seasonal factor in components is the factor at the
// position weekPosition gives it.
func TestWeekPositionMatchesComponents(t *testing.T) {
	dir := gardenRun(t)
	r, _ := runfolder.Open(dir)
	sf, err := r.Table("seasonal_factors")
	if err != nil {
		t.Fatal(err)
	}
	factors := map[string]float64{}
	for i := 0; i < sf.Rows; i++ {
		pos, _ := sf.Int("position", i)
		factors[fmt.Sprintf("%s#%d", sf.Key(r.Keys(), i), pos)] = sf.Float("factor", i)
	}
	comp, err := r.Table("components")
	if err != nil {
		t.Fatal(err)
	}
	checked := 0
	for i := 0; i < comp.Rows; i++ {
		p, ok := comp.Date("period", i)
		if !ok {
			continue
		}
		want, ok := factors[fmt.Sprintf("%s#%d", comp.Key(r.Keys(), i), weekPosition(p, 52))]
		got := comp.Float("seasonal", i)
		if !ok || math.IsNaN(got) {
			continue
		}
		if math.Abs(got-want) > 1e-9*math.Max(1, math.Abs(want)) {
			t.Fatalf("row %d (%s, %s): seasonal %v, factor at position %d is %v", i, comp.Key(r.Keys(), i), p.Format("2006-01-02"), got, weekPosition(p, 52), want)
		}
		checked++
	}
	if checked < 1000 {
		t.Fatalf("only %d rows checked", checked)
	}
}

// writePanel writes an invented monthly panel and its spec, and runs it.
// keys nil writes a single series without key columns. scaleB multiplies
// series B's last twelve months (to make a second, changed run).
func writePanel(t *testing.T, name string, keys []string, extraSpec string, scaleB float64) string {
	t.Helper()
	dir := filepath.Join(scratch, name)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	if keys == nil {
		b.WriteString("month,qty\n")
	} else {
		b.WriteString("month,store,qty\n")
	}
	stores := keys
	if stores == nil {
		stores = []string{""}
	}
	const months = 72
	for i := 0; i < months; i++ {
		y, m := 2019+i/12, i%12+1
		for si, s := range stores {
			level := 100 * float64(si+1)
			v := level + 1.5*float64(i) + 0.3*level*math.Sin(2*math.Pi*float64(m-3)/12) + 5*math.Cos(float64(7*i+si))
			if s == "B" && i >= months-12 {
				v *= scaleB
			}
			if keys == nil {
				fmt.Fprintf(&b, "%04d-%02d,%.2f\n", y, m, v)
			} else {
				fmt.Fprintf(&b, "%04d-%02d,%s,%.2f\n", y, m, s, v)
			}
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "sales.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	keyLine := ""
	if keys != nil {
		keyLine = ", keys: [store]"
	}
	specText := fmt.Sprintf(`version: 1
name: %s
sources: [sales.csv]
columns: {time: month, value: qty%s}
calendar: {frequency: month}
methods: [naive, seasonal_naive, drift, {method: classical, trend: trend_line}]
horizon: 6
output: run
%s`, name, keyLine, extraSpec)
	if err := os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(specText), 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := runSpec(filepath.Join(dir, "spec.yaml"), filepath.Join(dir, "run"))
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// A run without keys, backtest or intervals: no leaderboard, no scores;
// the one series is charted because nothing ranks series.
func TestNoBacktestNoKeys(t *testing.T) {
	dir := writePanel(t, "single", nil, "", 1)
	page := writeReport(t, dir, Options{Title: "One <series> & more"})
	if got, want := headings(page), []string{HeadSummary, HeadSeries}; !slices.Equal(got, want) {
		t.Errorf("headings = %q, want %q", got, want)
	}
	if !strings.Contains(page, "<h1>One &lt;series&gt; &amp; more</h1>") {
		t.Error("the title should be escaped")
	}
	if got := articleKeys(page); !slices.Equal(got, []string{""}) {
		t.Errorf("charted %q, want the one series", got)
	}
	if !strings.Contains(page, "no backtest to rank series by") || !strings.Contains(page, "(the only series)") {
		t.Error("the page should say why it charts the series, and name the keyless series")
	}
	if !strings.Contains(page, "none (no scores, no choices)") || !strings.Contains(page, "No problems were recorded") {
		t.Error("summary should state there is no backtest and no problem")
	}
	svgs := parseSVGs(t, page)
	if len(svgs) != 2 || len(svgsOfClass(svgs, "series-chart")) != 1 || len(svgsOfClass(svgs, "factor-chart")) != 1 {
		t.Fatalf("want a series chart and a factor chart, got %d SVGs", len(svgs))
	}
	fchart := svgsOfClass(svgs, "factor-chart")[0]
	if len(fchart.Rects) != 12 || !slices.Contains(fchart.Texts, "Jan") || !slices.Contains(fchart.Texts, "Dec") {
		t.Errorf("monthly factor chart: %d bars, labels %q", len(fchart.Rects), fchart.Texts)
	}
	for _, p := range svgsOfClass(svgs, "series-chart")[0].Paths {
		if p.FillOpacity != "" {
			t.Error("no intervals in this run, yet a band is drawn")
		}
	}
	if !strings.Contains(page, "<dt>Forecast drawn</dt><dd>naive <span") {
		t.Error("without a backtest the first method should be drawn")
	}
	checkSelfContained(t, page)

	// Another method on request: seasonal_naive repeats the last year.
	page = writeReport(t, dir, Options{Method: "seasonal_naive", Picks: -1, Series: []string{""}})
	art := articleOf(page, "")
	if !strings.Contains(art, "<dt>Forecast drawn</dt><dd>seasonal_naive <span") {
		t.Fatal("the method asked for should be drawn")
	}
	last := lastObserved(t, dir, 12)
	for h := 0; h < 6; h++ {
		if want := fmt.Sprintf(`<td class="num">%s</td>`, fmtAuto(last[h])); !strings.Contains(art, want) {
			t.Errorf("seasonal naive step %d: table lacks %s", h+1, want)
		}
	}
	// An unknown method is named, and the first drawn instead.
	page = writeReport(t, dir, Options{Method: "bogus"})
	if !strings.Contains(page, `The method &#34;bogus&#34; asked for is not one of this run&#39;s methods`) || !strings.Contains(page, "<dd>naive <span") {
		t.Error("an unknown method should be reported and replaced by the first")
	}
	// No picks, nothing asked for: no series section at all.
	page = writeReport(t, dir, Options{Picks: -1})
	if got := headings(page); !slices.Equal(got, []string{HeadSummary}) {
		t.Errorf("headings = %q, want the summary only", got)
	}
	if strings.Contains(page, "<svg") {
		t.Error("no SVG expected")
	}
	// Only a key that is not there.
	page = writeReport(t, dir, Options{Picks: -1, Series: []string{"x"}})
	if !strings.Contains(page, "Asked for but not in this run: <code>x</code>") || strings.Contains(page, "<svg") {
		t.Error("an unknown key should be listed and nothing charted")
	}
}

// lastObserved are the first n of the last 12 observed values (the
// seasonal naive forecast of the next n months).
func lastObserved(t *testing.T, dir string, n int) []float64 {
	r, _ := runfolder.Open(dir)
	comp, err := r.Table("components")
	if err != nil {
		t.Fatal(err)
	}
	var v []float64
	for i := 0; i < comp.Rows; i++ {
		v = append(v, comp.Float("observed", i))
	}
	return v[len(v)-12 : len(v)-12+n]
}

// Two runs of a keyed panel with a backtest and intervals; in the second,
// store B's last year is doubled, so B's forecast changes most.
func TestPreviousRun(t *testing.T) {
	extra := "backtest: {folds: 2}\nintervals: {levels: [90], source: empirical}\n"
	first := writePanel(t, "panel1", []string{"A", "B", "C"}, extra, 1)
	second := writePanel(t, "panel2", []string{"A", "B", "C"}, extra, 2)
	page := writeReport(t, second, Options{Previous: first, Picks: 2})
	if got, want := headings(page), []string{HeadSummary, HeadLeaderboard, HeadScores, HeadWorst, HeadChanged, HeadSeries}; !slices.Equal(got, want) {
		t.Errorf("headings = %q, want %q", got, want)
	}
	tbl := reChangedTbl.FindString(page)
	rows := reWorstRow.FindAllStringSubmatch(tbl, -1)
	if len(rows) != 2 || rows[0][1] != "B" {
		t.Fatalf("changed table rows %v, want B first of 2", rows)
	}
	// B is charted with the previous forecast dotted beside the new one.
	svgs := parseSVGs(t, page)
	var sawPrev bool
	for _, d := range svgsOfClass(svgs, "series-chart") {
		if !strings.HasPrefix(d.Title.Text, "B:") {
			continue
		}
		for _, p := range d.Paths {
			if p.Stroke == colPrevious && p.Dash == "2 3" {
				sawPrev = true
			}
			if p.Fill == colForecast {
				t.Error("a band filled in the forecast's colour: the narrowest band is filled with the band colour")
			}
		}
		if !strings.Contains(d.Desc.Text, "previous run's forecast") || !strings.Contains(d.Desc.Text, "Filled: the 90% interval.") {
			t.Errorf("B's description: %q", d.Desc.Text)
		}
	}
	if !sawPrev {
		t.Error("B's chart lacks the previous run's forecast")
	}
	if !strings.Contains(articleOf(page, "B"), "changed most #1") {
		t.Error("B should be listed as changed most")
	}

	// Against itself nothing changed.
	page = writeReport(t, second, Options{Previous: second, Picks: 3})
	for _, m := range reNumCell.FindAllStringSubmatch(reChangedTbl.FindString(page), -1) {
		if m[1] != "0" || m[2] != "0.0 %" {
			t.Errorf("a run compared with itself shows change %s (%s)", m[1], m[2])
		}
	}
	// A previous run that is not there is noted, not fatal.
	page = writeReport(t, second, Options{Previous: filepath.Join(scratch, "no-such-run")})
	if !strings.Contains(page, `<p class="warn">No comparison:`) {
		t.Error("a missing previous run should be noted on the page")
	}
}

// The run calls Write on its staging folder, before the commit.
func TestStagedFolder(t *testing.T) {
	src := writePanel(t, "staged", nil, "", 1)
	dir := filepath.Join(scratch, "staged-copy")
	if err := copyTree(src, dir); err != nil {
		t.Fatal(err)
	}
	if err := os.Rename(filepath.Join(dir, runfolder.MarkerFile), filepath.Join(dir, runfolder.StagingMarker)); err != nil {
		t.Fatal(err)
	}
	if err := Write(dir, Options{}); err != nil {
		t.Fatalf("staged folder: %v", err)
	}
	if _, err := os.Stat(filepath.Join(dir, "."+FileName+".tmp")); err == nil {
		t.Error("temporary file left behind")
	}
	os.Remove(filepath.Join(dir, runfolder.StagingMarker))
	if err := Write(dir, Options{}); err == nil || !strings.Contains(err.Error(), "not an almanac run folder") {
		t.Errorf("a folder without a marker: err = %v", err)
	}
}

func TestFormatting(t *testing.T) {
	for _, c := range []struct {
		v    float64
		d    int
		want string
	}{
		{1234567.891, 2, "1,234,567.89"}, {-1234, 0, "−1,234"}, {-0.0001, 2, "0.00"}, {999.5, 0, "1,000"},
		{0.25, 3, "0.250"}, {math.NaN(), 2, "—"}, {math.Inf(1), 0, "∞"}, {12, 0, "12"},
	} {
		if got := fmtNum(c.v, c.d); got != c.want {
			t.Errorf("fmtNum(%v, %d) = %q, want %q", c.v, c.d, got, c.want)
		}
	}
	if got, step := niceTicks(0, 87, 5); !slices.Equal(got, []float64{0, 20, 40, 60, 80, 100}) || step != 20 {
		t.Errorf("niceTicks(0, 87) = %v step %v", got, step)
	}
	if got, _ := niceTicks(-0.3, 0.45, 4); got[0] > -0.3 || got[len(got)-1] < 0.45 || !slices.Contains(got, 0) {
		t.Errorf("niceTicks(-0.3, 0.45) = %v should cover the range and hold 0", got)
	}
	if got, step := countTicks(10, 5); !slices.Equal(got, []float64{0, 2, 4, 6, 8, 10}) || step != 2 {
		t.Errorf("countTicks(10, 5) = %v step %v", got, step)
	}
	if got, _ := countTicks(3, 5); !slices.Equal(got, []float64{0, 1, 2, 3}) {
		t.Errorf("countTicks(3, 5) = %v", got)
	}
	if decimalsFor(0.25) != 2 || decimalsFor(5) != 0 || decimalsFor(0.1) != 1 {
		t.Error("decimalsFor")
	}
	day := func(s string) time.Time { t, _ := time.Parse("2006-01-02", s); return t }
	var labels []string
	for _, tk := range dateTicks(day("2023-01-02"), day("2026-03-23"), 9) {
		labels = append(labels, tk.label)
		if tk.at.Day() != 1 || (tk.at.Month() != time.January && tk.at.Month() != time.July) {
			t.Errorf("tick %v is not on a half-year boundary", tk.at)
		}
	}
	if !slices.Equal(labels, []string{"Jul 2023", "Jan 2024", "Jul 2024", "Jan 2025", "Jul 2025", "Jan 2026"}) {
		t.Errorf("weekly 2023–2026 ticks: %q", labels)
	}
	if tk := dateTicks(day("2000-01-01"), day("2025-12-01"), 9); len(tk) == 0 || len(tk) > 9 || tk[0].label != "2000" {
		t.Errorf("25 years: %v", tk)
	}
	if tk := dateTicks(day("2024-03-01"), day("2024-03-20"), 9); len(tk) == 0 || tk[0].at.Weekday() != time.Monday {
		t.Errorf("three weeks of days should tick on Mondays: %v", tk)
	}
}

// A few series far worse than the rest go into an overflow bar, so that
// the others keep a readable spread.
func TestHistogramOverflow(t *testing.T) {
	var scores []float64
	for i := 0; i < 40; i++ {
		scores = append(scores, 0.5+float64(i)/80)
	}
	scores = append(scores, 40)
	out := histogramChart("h", "mase", scores)
	var d svgDoc
	if err := xmlUnmarshal(out, &d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(d.Desc.Text, "1 series at") || !slices.Contains(d.Texts, "more") {
		t.Errorf("no overflow bar: %q", d.Desc.Text)
	}
	if !strings.HasPrefix(d.Desc.Text, "41 series scored.") {
		t.Errorf("desc %q", d.Desc.Text)
	}
}

// Scan reads only the columns asked for, and skips the row groups whose
// key statistics rule the wanted keys out.
func TestScanFilter(t *testing.T) {
	dir := gardenRun(t)
	r, err := runfolder.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	whole, err := r.Table("components")
	if err != nil {
		t.Fatal(err)
	}
	want := 0
	for i := 0; i < whole.Rows; i++ {
		if d, _ := whole.Str("depot", i); d == "brindle" {
			want++
		}
	}
	count := func(values map[string]bool) (rows, matched int) {
		err := r.Scan("components", runfolder.ScanFilter{Columns: []string{"depot", "observed"}, KeyColumn: "depot", KeyValues: values}, func(b *runfolder.Table) error {
			if b.Has("trend") || !b.Has("observed") {
				t.Error("batch should hold exactly the columns asked for")
			}
			rows += b.Rows
			for i := 0; i < b.Rows; i++ {
				if d, _ := b.Str("depot", i); d == "brindle" {
					matched++
				}
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		return rows, matched
	}
	if rows, matched := count(map[string]bool{"brindle": true}); matched != want || rows < want || want == 0 {
		t.Errorf("brindle: %d rows read, %d matched, want %d", rows, matched, want)
	}
	// "zzz" sorts after every depot: no row group can hold it.
	if rows, _ := count(map[string]bool{"zzz": true}); rows != 0 {
		t.Errorf("a key outside every row group's range still read %d rows", rows)
	}
	if rows, _ := count(nil); rows != whole.Rows {
		t.Errorf("no filter: %d rows, want %d", rows, whole.Rows)
	}
	if err := r.Scan("components", runfolder.ScanFilter{Columns: []string{"no_such"}}, func(*runfolder.Table) error { return nil }); err == nil {
		t.Error("an unknown column should be an error")
	}
	cols, err := r.Columns("forecasts")
	if err != nil || !slices.Contains(cols, "lower_95") || intervalLevels(cols)[0] != 80 {
		t.Errorf("forecast columns %v (%v), levels %v", cols, err, intervalLevels(cols))
	}
}
