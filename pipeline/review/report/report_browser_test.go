package report

import (
	"bytes"
	"context"
	"fmt"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"time"
)

// chromiumPath is the browser the test drives: /usr/bin/chromium (the CI
// script installs Debian's chromium package), or chromium on PATH.
func chromiumPath() string {
	if _, err := os.Stat("/usr/bin/chromium"); err == nil {
		return "/usr/bin/chromium"
	}
	if p, err := exec.LookPath("chromium"); err == nil {
		return p
	}
	return ""
}

// runChromium runs headless Chromium on the page with extra arguments and
// returns its stdout and stderr.
func runChromium(t *testing.T, bin, page string, extra ...string) (string, string) {
	t.Helper()
	args := []string{
		"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir=" + t.TempDir(), "--enable-logging=stderr", "--v=0",
		"--hide-scrollbars", "--window-size=1280,2400", "--virtual-time-budget=5000",
	}
	args = append(args, extra...)
	args = append(args, "file://"+page)
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin, args...)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium %s: %v\n%s", strings.Join(extra, " "), err, lastLines(stderr.String(), 20))
	}
	return stdout.String(), stderr.String()
}

func lastLines(s string, n int) string {
	lines := strings.Split(strings.TrimRight(s, "\n"), "\n")
	if len(lines) > n {
		lines = lines[len(lines)-n:]
	}
	return strings.Join(lines, "\n")
}

// consoleErrors are the logged lines that report a script error or any
// console message. Chromium logs console.error at INFO level
// ("INFO:CONSOLE"), and the report has no script, so any console line at
// all (a blocked resource, a parse complaint) counts.
func consoleErrors(stderr string) []string {
	var out []string
	for _, l := range strings.Split(stderr, "\n") {
		if strings.Contains(l, "Uncaught") || strings.Contains(l, ":CONSOLE") {
			out = append(out, l)
		}
	}
	return out
}

var reDomH2 = regexp.MustCompile(`<h2>([^<]*)</h2>`)

func TestReportInChromium(t *testing.T) {
	bin := chromiumPath()
	if bin == "" {
		t.Skip("chromium is not installed (apt-get install -y chromium); skipping the headless browser check of report.html")
	}
	// The console check must see errors when there are some.
	bad := filepath.Join(t.TempDir(), "bad.html")
	if err := os.WriteFile(bad, []byte(`<!DOCTYPE html><html><body><p>x</p><script>throw new Error("planted")</script></body></html>`), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, stderr := runChromium(t, bin, bad, "--dump-dom"); len(consoleErrors(stderr)) == 0 {
		t.Fatalf("a page that throws logged no console error; the check below would see nothing either:\n%s", lastLines(stderr, 10))
	}

	dir := gardenRun(t)
	if err := Write(dir, Options{}); err != nil {
		t.Fatal(err)
	}
	page, err := filepath.Abs(filepath.Join(dir, FileName))
	if err != nil {
		t.Fatal(err)
	}
	listed := worstKeys(t, dir, DefaultPicks)

	// The DOM as the browser built it.
	dom, stderr := runChromium(t, bin, page, "--dump-dom")
	if errs := consoleErrors(stderr); len(errs) > 0 {
		t.Errorf("console errors while loading the page:\n%s", strings.Join(errs, "\n"))
	}
	var heads []string
	for _, m := range reDomH2.FindAllStringSubmatch(dom, -1) {
		heads = append(heads, m[1])
	}
	if want := []string{HeadSummary, HeadLeaderboard, HeadScores, HeadWorst, HeadSeries}; !slices.Equal(heads, want) {
		t.Errorf("headings in the DOM = %q, want %q", heads, want)
	}
	if got, want := strings.Count(dom, "<svg"), expectedSVGs(t, dir, listed, true); got != want {
		t.Errorf("DOM holds %d <svg> elements, want %d", got, want)
	}
	for _, k := range listed {
		if !strings.Contains(dom, `data-key="`+esc(k)+`"`) {
			t.Errorf("DOM lacks the chart of %s", k)
		}
	}

	// What it looks like.
	shot := filepath.Join(t.TempDir(), "report.png")
	_, stderr = runChromium(t, bin, page, "--screenshot="+shot)
	if errs := consoleErrors(stderr); len(errs) > 0 {
		t.Errorf("console errors while drawing the page:\n%s", strings.Join(errs, "\n"))
	}
	f, err := os.Open(shot)
	if err != nil {
		t.Fatalf("no screenshot: %v", err)
	}
	img, err := png.Decode(f)
	f.Close()
	if err != nil {
		t.Fatalf("screenshot is not a PNG: %v", err)
	}
	b := img.Bounds()
	if b.Dx() != 1280 || b.Dy() != 2400 {
		t.Errorf("screenshot is %dx%d, want 1280x2400", b.Dx(), b.Dy())
	}
	colours := map[[3]uint32]int{}
	bg := img.At(2, 2)
	br, bgg, bb, _ := bg.RGBA()
	differ := 0
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			r, g, bl, _ := img.At(x, y).RGBA()
			colours[[3]uint32{r >> 8, g >> 8, bl >> 8}]++
			if r != br || g != bgg || bl != bb {
				differ++
			}
		}
	}
	total := (b.Dx() / 2) * (b.Dy() / 2)
	if len(colours) < 20 {
		t.Errorf("screenshot has only %d colours: the page did not render", len(colours))
	}
	if differ < total/50 {
		t.Errorf("only %d of %d sampled pixels differ from the background", differ, total)
	}
	// The bar colour of the charts must be on screen: the SVGs drew.
	var bar [3]uint32
	if _, err := fmt.Sscanf(colBar, "#%02x%02x%02x", &bar[0], &bar[1], &bar[2]); err != nil {
		t.Fatal(err)
	}
	if colours[bar] == 0 {
		t.Error("no chart bar colour in the screenshot")
	}
	if keep := os.Getenv("ALMANAC_REPORT_SCREENSHOT"); keep != "" {
		data, err := os.ReadFile(shot)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(keep, data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
}
