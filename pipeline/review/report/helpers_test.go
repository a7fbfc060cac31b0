package report

import (
	"context"
	"encoding/json"
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"sync"
	"testing"

	"almanac/pipeline"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// scratch holds the runs the tests share; TestMain removes it.
var scratch string

func TestMain(m *testing.M) {
	d, err := os.MkdirTemp("", "almanac-report-test-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	scratch = d
	code := m.Run()
	os.RemoveAll(d)
	os.Exit(code)
}

var (
	gardenOnce sync.Once
	gardenDir  string
	gardenErr  error
)

// gardenRun runs the shipped garden-supply example (weekly, two keys,
// backtest, combination, intervals) once, from a copy, and returns its run
// folder.
func gardenRun(t *testing.T) string {
	t.Helper()
	gardenOnce.Do(func() {
		src := filepath.Join("..", "..", "..", "examples", "garden-supply")
		dst := filepath.Join(scratch, "garden")
		if gardenErr = copyTree(filepath.Join(src, "data"), filepath.Join(dst, "data")); gardenErr != nil {
			return
		}
		if gardenErr = copyFile(filepath.Join(src, "spec.yaml"), filepath.Join(dst, "spec.yaml")); gardenErr != nil {
			return
		}
		gardenDir, gardenErr = runSpec(filepath.Join(dst, "spec.yaml"), filepath.Join(dst, "run"))
	})
	if gardenErr != nil {
		t.Fatal(gardenErr)
	}
	return gardenDir
}

func runSpec(specPath, out string) (string, error) {
	s, err := spec.Load(specPath)
	if err != nil {
		return "", err
	}
	sum, err := pipeline.Run(context.Background(), s, pipeline.Options{Out: out, Workers: 2})
	if err != nil {
		return "", err
	}
	return sum.Dir, nil
}

func copyFile(src, dst string) error {
	if err := os.MkdirAll(filepath.Dir(dst), 0o755); err != nil {
		return err
	}
	in, err := os.Open(src)
	if err != nil {
		return err
	}
	defer in.Close()
	out, err := os.Create(dst)
	if err != nil {
		return err
	}
	if _, err := io.Copy(out, in); err != nil {
		out.Close()
		return err
	}
	return out.Close()
}

func copyTree(src, dst string) error {
	return filepath.Walk(src, func(p string, info os.FileInfo, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(src, p)
		if info.IsDir() {
			return os.MkdirAll(filepath.Join(dst, rel), 0o755)
		}
		return copyFile(p, filepath.Join(dst, rel))
	})
}

// writeReport writes the report of dir and returns the page.
func writeReport(t *testing.T, dir string, opt Options) string {
	t.Helper()
	if err := Write(dir, opt); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, FileName))
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

var (
	reH2      = regexp.MustCompile(`<h2>([^<]*)</h2>`)
	reSVG     = regexp.MustCompile(`(?s)<svg\b.*?</svg>`)
	reArticle = regexp.MustCompile(`<article class="series" id="(series-\d+)" data-key="([^"]*)">`)
)

// headings are the page's h2 texts in order.
func headings(page string) []string {
	var out []string
	for _, m := range reH2.FindAllStringSubmatch(page, -1) {
		out = append(out, unescape(m[1]))
	}
	return out
}

func unescape(s string) string {
	r := strings.NewReplacer("&amp;", "&", "&lt;", "<", "&gt;", ">", "&#34;", `"`, "&#39;", "'", "&quot;", `"`)
	return r.Replace(s)
}

// articleKeys are the keys of the charted series, in page order.
func articleKeys(page string) []string {
	var out []string
	for _, m := range reArticle.FindAllStringSubmatch(page, -1) {
		out = append(out, unescape(m[2]))
	}
	return out
}

// svgDoc is an SVG fragment parsed with encoding/xml.
type svgDoc struct {
	XMLName xml.Name `xml:"svg"`
	Class   string   `xml:"class,attr"`
	ID      string   `xml:"id,attr"`
	Role    string   `xml:"role,attr"`
	Labels  string   `xml:"aria-labelledby,attr"`
	ViewBox string   `xml:"viewBox,attr"`
	Title   struct {
		ID   string `xml:"id,attr"`
		Text string `xml:",chardata"`
	} `xml:"title"`
	Desc struct {
		ID   string `xml:"id,attr"`
		Text string `xml:",chardata"`
	} `xml:"desc"`
	Paths []struct {
		D           string `xml:"d,attr"`
		Stroke      string `xml:"stroke,attr"`
		Fill        string `xml:"fill,attr"`
		FillOpacity string `xml:"fill-opacity,attr"`
		Dash        string `xml:"stroke-dasharray,attr"`
	} `xml:"path"`
	Rects []struct {
		Title string `xml:"title"`
	} `xml:"rect"`
	Texts []string `xml:"text"`
}

// parseSVGs parses every inline SVG of the page strictly as XML.
func parseSVGs(t *testing.T, page string) []svgDoc {
	t.Helper()
	var out []svgDoc
	for _, frag := range reSVG.FindAllString(page, -1) {
		var d svgDoc
		dec := xml.NewDecoder(strings.NewReader(frag))
		dec.Strict = true
		if err := dec.Decode(&d); err != nil {
			t.Fatalf("SVG is not well-formed XML: %v\n%.300s", err, frag)
		}
		out = append(out, d)
	}
	return out
}

func svgsOfClass(ds []svgDoc, class string) []svgDoc {
	var out []svgDoc
	for _, d := range ds {
		for _, c := range strings.Fields(d.Class) {
			if c == class {
				out = append(out, d)
			}
		}
	}
	return out
}

// rawManifest decodes manifest.json generically, independently of the
// runfolder types the report uses.
func rawManifest(t *testing.T, dir string) map[string]any {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(dir, "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	return m
}

// worstKeys computes, from choices.parquet, the n series with the highest
// finite score (ties by key).
func worstKeys(t *testing.T, dir string, n int) []string {
	t.Helper()
	r, err := runfolder.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	tb, err := r.Table("choices")
	if err != nil {
		t.Fatal(err)
	}
	type ks struct {
		k string
		s float64
	}
	var all []ks
	for i := 0; i < tb.Rows; i++ {
		s := tb.Float("score", i)
		if !math.IsNaN(s) {
			all = append(all, ks{tb.Key(r.Keys(), i), s})
		}
	}
	sort.Slice(all, func(i, j int) bool {
		if all[i].s != all[j].s {
			return all[i].s > all[j].s
		}
		return all[i].k < all[j].k
	})
	var out []string
	for i := 0; i < n && i < len(all); i++ {
		out = append(out, all[i].k)
	}
	return out
}

// factorKeys are the series with rows in seasonal_factors.parquet.
func factorKeys(t *testing.T, dir string) map[string]bool {
	t.Helper()
	r, err := runfolder.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]bool{}
	if !r.HasTable("seasonal_factors") {
		return out
	}
	tb, err := r.Table("seasonal_factors")
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < tb.Rows; i++ {
		out[tb.Key(r.Keys(), i)] = true
	}
	return out
}

// expectedSVGs is how many SVGs the page of the run should hold for the
// listed series: the leaderboard and histogram charts (with a backtest),
// one chart per series, and one factor chart per series with factors.
func expectedSVGs(t *testing.T, dir string, listed []string, withBacktest bool) int {
	n := len(listed)
	fk := factorKeys(t, dir)
	for _, k := range listed {
		if fk[k] {
			n++
		}
	}
	if withBacktest {
		n += 2
	}
	return n
}

func xmlUnmarshal(frag string, v any) error {
	dec := xml.NewDecoder(strings.NewReader(frag))
	dec.Strict = true
	return dec.Decode(v)
}
