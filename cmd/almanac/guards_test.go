package main

// Tests through the built binary for the guards of issue 12: time guards,
// verify, locks, shards, signals mid-read, stale spill folders and the
// review commands' output paths. Data are invented.

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
	"golang.org/x/sys/unix"
)

// dailyCSV writes invented daily sales of stores from the day first for
// days days: a weekly pattern, a slow trend and a yearly swing.
func dailyCSV(first time.Time, days int, stores []string) string {
	var b strings.Builder
	b.WriteString("day,store,qty\n")
	for si, st := range stores {
		for d := 0; d < days; d++ {
			t := first.AddDate(0, 0, d)
			wd := float64((int(t.Weekday()) + 6) % 7) // Monday 0
			v := 100 + 15*float64(si) + 0.05*float64(d) + 12*math.Sin(2*math.Pi*wd/7) + 20*math.Sin(2*math.Pi*float64(d)/365.25)
			fmt.Fprintf(&b, "%s,%s,%.2f\n", t.Format("2006-01-02"), st, v)
		}
	}
	return b.String()
}

const weeklySpec = `version: 1
name: weekly
sources: [data.csv]
columns: {time: day, value: qty, keys: [store]}
calendar: {frequency: week}
%smethods: [naive, seasonal_naive, {method: holt_winters, seasonal: additive}]
horizon: 8
output: out
`

// forecastValues reads a run's forecasts as "key method step" → value.
func forecastValues(t *testing.T, path string) map[string]float64 {
	t.Helper()
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	fr, _ := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	tbl, err := fr.ReadTable(t.Context())
	if err != nil {
		t.Fatal(err)
	}
	defer tbl.Release()
	col := func(name string) arrow.Array {
		return tbl.Column(tbl.Schema().FieldIndices(name)[0]).Data().Chunk(0)
	}
	store, method, step, value := col("store").(*array.String), col("method").(*array.String), col("step").(*array.Int32), col("value").(*array.Float64)
	out := map[string]float64{}
	for i := 0; i < store.Len(); i++ {
		out[fmt.Sprintf("%s %s %d", store.Value(i), method.Value(i), step.Value(i))] = value.Value(i)
	}
	return out
}

func runIn(t *testing.T, dir, data, extra string, args ...string) (string, string, int) {
	t.Helper()
	os.MkdirAll(dir, 0o755)
	os.WriteFile(filepath.Join(dir, "data.csv"), []byte(data), 0o644)
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(fmt.Sprintf(weeklySpec, extra)), 0o644)
	return almanac(t, dir, append([]string{"run", "spec.yaml", "-q"}, args...)...)
}

// The acceptance test of the partial last period: a daily export that ends
// on a Tuesday, on a weekly calendar, forecasts within 5% of the same data
// cut at the last full week (here they are equal: the partial week is left
// out). Keeping the partial week instead drags the naive forecast down by
// about five sevenths.
func TestPartialLastWeekMatchesTheFullWeekCut(t *testing.T) {
	first := time.Date(2022, 1, 3, 0, 0, 0, 0, time.UTC) // a Monday
	stores := []string{"North", "South"}
	full := 2*364 + 7*10                       // whole weeks
	midweek := dailyCSV(first, full+2, stores) // … and Monday, Tuesday
	cut := dailyCSV(first, full, stores)
	root := t.TempDir()
	if _, stderr, code := runIn(t, filepath.Join(root, "mid"), midweek, ""); code != 0 {
		t.Fatal(stderr)
	}
	if _, stderr, code := runIn(t, filepath.Join(root, "cut"), cut, ""); code != 0 {
		t.Fatal(stderr)
	}
	if _, stderr, code := runIn(t, filepath.Join(root, "keep"), midweek, "shaping: {partial_period: keep}\n"); code != 0 {
		t.Fatal(stderr)
	}
	// plan says so before anything runs.
	if out, stderr, code := almanac(t, filepath.Join(root, "mid"), "plan", "spec.yaml"); code != 0 || !strings.Contains(out, "partial_period: the last period 2024-W11 (2024-03-11 … 2024-03-17) is incomplete: the data end on 2024-03-12") {
		t.Errorf("plan: %d\n%s%s", code, out, stderr)
	}
	a := forecastValues(t, filepath.Join(root, "mid", "out", "forecasts.parquet"))
	b := forecastValues(t, filepath.Join(root, "cut", "out", "forecasts.parquet"))
	k := forecastValues(t, filepath.Join(root, "keep", "out", "forecasts.parquet"))
	if len(a) != 2*3*8 || len(a) != len(b) {
		t.Fatalf("%d and %d forecast rows", len(a), len(b))
	}
	worst := 0.0
	for key, v := range b {
		worst = max(worst, math.Abs(a[key]-v)/math.Abs(v))
	}
	if worst > 0.05 {
		t.Errorf("mid-week export differs from the full-week cut by up to %.1f%%", 100*worst)
	}
	t.Logf("largest relative difference from the full-week cut: %.2g", worst)
	// What the guard prevents: the partial week taken as a whole week.
	if r := k["North naive 1"] / b["North naive 1"]; r > 0.5 {
		t.Errorf("with partial_period: keep the naive forecast is %.2f of the cut's; expected about 2/7", r)
	}
}

// A second run on the same output fails at once with a clear message
// while the first holds the target's lock; the first run's folder is
// untouched, and the lock goes with the first run.
func TestSecondRunOnTheSameTargetFailsFast(t *testing.T) {
	dir := t.TempDir()
	killPanel(t, dir)
	cmd := startStalled(t, dir, "forecast")
	defer func() { cmd.Process.Kill(); cmd.Wait() }()
	start := time.Now()
	_, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q")
	if code != 1 || !strings.Contains(stderr, "another almanac run is writing") || !strings.Contains(stderr, "out/.almanac-lock-kill") {
		t.Fatalf("second run: exit %d\n%s", code, stderr)
	}
	if took := time.Since(start); took > 5*time.Second {
		t.Errorf("the second run took %v to fail", took)
	}
	// Another target beside it is not blocked.
	if _, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q", "--out", "out/kill-eu"); code != 0 {
		t.Fatalf("a sibling target was blocked: %s", stderr)
	}
	cmd.Process.Kill()
	cmd.Wait()
	if _, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q"); code != 0 {
		t.Fatalf("after the first run died: %s", stderr)
	}
}

// A staging folder of "weekly-eu" is never taken for one of "weekly".
func TestStagingOfASiblingIsLeftAlone(t *testing.T) {
	dir := t.TempDir()
	killPanel(t, dir)
	sibling := filepath.Join(dir, "out", ".almanac-tmp-kill-eu-0123456789ab")
	os.MkdirAll(sibling, 0o755)
	os.WriteFile(filepath.Join(sibling, ".almanac-run.staging"), nil, 0o644)
	stale := filepath.Join(dir, "out", ".almanac-tmp-kill-a1b2c3d4e5f6")
	os.MkdirAll(stale, 0o755)
	os.WriteFile(filepath.Join(stale, ".almanac-run.staging"), nil, 0o644)
	if _, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q"); code != 0 {
		t.Fatal(stderr)
	}
	if _, err := os.Stat(sibling); err != nil {
		t.Errorf("the sibling's staging was removed: %v", err)
	}
	if _, err := os.Stat(stale); err == nil {
		t.Errorf("the target's own stale staging was left")
	}
}

func monthlyData(stores int) string {
	var b strings.Builder
	b.WriteString("month,store,qty\n")
	for k := 0; k < stores; k++ {
		for i := 0; i < 36; i++ {
			fmt.Fprintf(&b, "%04d-%02d,S%d,%.1f\n", 2021+i/12, i%12+1, k, 100+float64(k*5)+float64(i)+10*math.Sin(float64(i)*math.Pi/6))
		}
	}
	return b.String()
}

const monthlySpec = `version: 1
name: m
sources: [data.csv]
columns: {time: month, value: qty, keys: [store]}
calendar: {frequency: month}
methods: [naive, seasonal_naive]
horizon: 3
output: out
`

func monthlyProject(t *testing.T, stores int) string {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "data.csv"), []byte(monthlyData(stores)), 0o644)
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(monthlySpec), 0o644)
	return dir
}

func TestShardGuards(t *testing.T) {
	dir := monthlyProject(t, 6)
	shard := func(i, n int, extra ...string) (string, int) {
		_, stderr, code := almanac(t, dir, append([]string{"run", "spec.yaml", "-q", "--out", "ds", "--shard-count", fmt.Sprint(n), "--shard-index", fmt.Sprint(i)}, extra...)...)
		return stderr, code
	}
	for i := 0; i < 3; i++ {
		if stderr, code := shard(i, 3); code != 0 {
			t.Fatal(stderr)
		}
	}
	if _, stderr, code := almanac(t, dir, "combine", "ds"); code != 0 {
		t.Fatal(stderr)
	}
	// A rerun of one shard takes the combined manifest away.
	if stderr, code := shard(1, 3); code != 0 {
		t.Fatal(stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "ds", "manifest.json")); err == nil {
		t.Error("the combined manifest survived a shard rerun")
	}
	// Another shard count is refused, then cleaned on request.
	stderr, code := shard(0, 2)
	if code != 1 || !strings.Contains(stderr, "of a run with another shard count (this run has 2 shards); rerun with --clean-shards") || !strings.Contains(stderr, "forecasts/shard=0002") {
		t.Fatalf("3→2 shards: exit %d\n%s", code, stderr)
	}
	for i := 0; i < 2; i++ {
		if stderr, code := shard(i, 2, "--clean-shards"); code != 0 {
			t.Fatal(stderr)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "ds", "forecasts", "shard=0002")); err == nil {
		t.Error("--clean-shards left shard=0002")
	}
	if _, stderr, code := almanac(t, dir, "combine", "ds"); code != 0 {
		t.Fatalf("combine after re-sharding: %s", stderr)
	}
	// The shard count is bounded; a corrupt count in a manifest is refused.
	if stderr, code := shard(0, 1000000); code != 2 || !strings.Contains(stderr, "--shard-count 1000000 is outside 1…10000") {
		t.Errorf("huge shard count: exit %d\n%s", code, stderr)
	}
	mp := filepath.Join(dir, "ds", "_shards", "shard=0000.json")
	b, _ := os.ReadFile(mp)
	os.WriteFile(mp, bytes.Replace(b, []byte(`"count": 2`), []byte(`"count": 4000000000000`), 1), 0o644)
	if _, stderr, code := almanac(t, dir, "combine", "ds"); code != 1 || !strings.Contains(stderr, "shard count 4000000000000 is outside 1…10000") {
		t.Errorf("corrupt shard count: exit %d\n%s", code, stderr)
	}
	// Shard parts never go into a plain run folder.
	if _, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q", "--out", "plain"); code != 0 {
		t.Fatal(stderr)
	}
	_, stderr, code = almanac(t, dir, "run", "spec.yaml", "-q", "--out", "plain", "--shard-count", "2", "--shard-index", "0")
	if code != 1 || !strings.Contains(stderr, "is the folder of a run that was not sharded") {
		t.Errorf("shard into a plain run folder: exit %d\n%s", code, stderr)
	}
}

// One series over four shards: three shards hold none, write empty parts,
// and the dataset combines.
func TestEmptyShardWritesEmptyParts(t *testing.T) {
	dir := monthlyProject(t, 1)
	for i := 0; i < 4; i++ {
		if _, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q", "--out", "ds", "--shard-count", "4", "--shard-index", fmt.Sprint(i)); code != 0 {
			t.Fatalf("shard %d: %s", i, stderr)
		}
	}
	parts, _ := filepath.Glob(filepath.Join(dir, "ds", "forecasts", "shard=*", "part.parquet"))
	if len(parts) != 4 {
		t.Fatalf("%d forecast parts", len(parts))
	}
	out, stderr, code := almanac(t, dir, "combine", "ds")
	if code != 0 || !strings.Contains(out, "combined 4 shard(s): 1 series") {
		t.Fatalf("combine: %s%s", out, stderr)
	}
}

func TestVerifyExitCodes(t *testing.T) {
	dir := monthlyProject(t, 3)
	spec := strings.Replace(monthlySpec, "output: out", "output: runs/m\nreport: {series: [S0]}", 1)
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(spec), 0o644)
	if _, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q"); code != 0 {
		t.Fatal(stderr)
	}
	run := filepath.Join(dir, "runs", "m")
	verify := func(args ...string) (string, int) {
		out, stderr, code := almanac(t, dir, append([]string{"verify", run}, args...)...)
		return out + stderr, code
	}
	if out, code := verify(); code != 0 || !strings.Contains(out, "report   report.html: as recorded") {
		t.Fatalf("untouched: %d\n%s", code, out)
	}
	// report.html altered: differs.
	rp := filepath.Join(run, "report.html")
	orig, _ := os.ReadFile(rp)
	os.WriteFile(rp, append(orig, ' '), 0o644)
	if out, code := verify(); code != 1 || !strings.Contains(out, "report.html: does not match its manifest hash") {
		t.Errorf("altered report: %d\n%s", code, out)
	}
	os.WriteFile(rp, orig, 0o644)
	// An altered table is counted once.
	fp := filepath.Join(run, "forecasts.parquet")
	fo, _ := os.ReadFile(fp)
	bad := append([]byte(nil), fo...)
	bad[len(bad)/2] ^= 1
	os.WriteFile(fp, bad, 0o644)
	if out, code := verify(); code != 1 || !strings.Contains(out, "result   DIFFERS: 1 file(s)") {
		t.Errorf("altered table: %d\n%s", code, out)
	}
	os.WriteFile(fp, fo, 0o644)
	// A manifest path outside the folder: unusable (4), nothing read there.
	mp := filepath.Join(run, "manifest.json")
	mo, _ := os.ReadFile(mp)
	os.WriteFile(mp, bytes.Replace(mo, []byte(`"file": "forecasts.parquet"`), []byte(`"file": "../../x.parquet"`), 1), 0o644)
	if out, code := verify(); code != 4 || !strings.Contains(out, `outside the run folder`) {
		t.Errorf("manifest path outside: %d\n%s", code, out)
	}
	os.WriteFile(mp, []byte("{"), 0o644)
	if out, code := verify(); code != 4 || !strings.Contains(out, "the manifest cannot be read") {
		t.Errorf("broken manifest: %d\n%s", code, out)
	}
	os.WriteFile(mp, mo, 0o644)
	// A moved project verifies against its own copy; its changed input is
	// "inputs changed" (3); --input-root points back at the original.
	moved := filepath.Join(t.TempDir(), "moved")
	os.CopyFS(moved, os.DirFS(dir))
	mrun := filepath.Join(moved, "runs", "m")
	os.WriteFile(filepath.Join(moved, "data.csv"), []byte(monthlyData(2)), 0o644)
	if out, stderr, code := almanac(t, moved, "verify", mrun); code != 3 || !strings.Contains(out, "input    data.csv: CHANGED") {
		t.Errorf("moved project with a changed input: %d\n%s%s", code, out, stderr)
	}
	if out, stderr, code := almanac(t, moved, "verify", mrun, "--input-root", dir); code != 0 {
		t.Errorf("--input-root: %d\n%s%s", code, out, stderr)
	}
	if _, _, code := almanac(t, dir, "verify"); code != 2 {
		t.Errorf("usage: exit %d", code)
	}
	// The review commands never write into a run folder.
	if _, stderr, code := almanac(t, dir, "diff", run, run, "--parquet", filepath.Join(run, "forecasts.parquet")); code != 2 || !strings.Contains(stderr, "is inside the run folder") {
		t.Errorf("diff --parquet into the run: %d\n%s", code, stderr)
	}
	if _, stderr, code := almanac(t, dir, "explain", run, "S0", "--png", filepath.Join(run, "choices.png")); code != 2 || !strings.Contains(stderr, "is inside the run folder") {
		t.Errorf("explain --png into the run: %d\n%s", code, stderr)
	}
	if now, _ := os.ReadFile(fp); !bytes.Equal(now, fo) {
		t.Error("a review command changed forecasts.parquet")
	}
	if out, code := verify(); code != 0 {
		t.Errorf("after the review commands: %d\n%s", code, out)
	}
}

// SIGTERM while almanac reads a file (here a pipe that keeps delivering
// rows) stops it within a second, exit 130, nothing written.
func TestSIGTERMMidRead(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "data.csv")
	if err := unix.Mkfifo(fifo, 0o644); err != nil {
		t.Skip("no FIFO:", err)
	}
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(monthlySpec), 0o644)
	cmd := exec.Command(binary, "run", "spec.yaml", "-q")
	cmd.Dir = dir
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	stop := make(chan struct{})
	go func() {
		w, err := os.OpenFile(fifo, os.O_WRONLY, 0)
		if err != nil {
			return
		}
		defer w.Close()
		bw := bufio.NewWriter(w)
		bw.WriteString("month,store,qty\n")
		for i := 0; ; i++ {
			select {
			case <-stop:
				return
			default:
			}
			fmt.Fprintf(bw, "2023-%02d,S%d,1\n", i%12+1, i)
			if i%500 == 0 {
				bw.Flush()
				time.Sleep(time.Millisecond)
			}
		}
	}()
	defer close(stop)
	// Without the readers' checks the run would read on for ever.
	time.AfterFunc(10*time.Second, func() { cmd.Process.Kill() })
	time.Sleep(700 * time.Millisecond)
	sent := time.Now()
	cmd.Process.Signal(syscall.SIGTERM)
	cmd.Wait()
	if took := time.Since(sent); took > time.Second {
		t.Errorf("stopped %v after SIGTERM mid-read", took)
	}
	if code := cmd.ProcessState.ExitCode(); code != exitInterrupted {
		t.Errorf("exit %d, want %d\n%s", code, exitInterrupted, stderr.String())
	}
	if entries, _ := os.ReadDir(filepath.Join(dir, "out")); len(entries) != 0 {
		t.Errorf("out/ holds %v", entries)
	}
}

// A dead run's spill folder is removed at the next start; a live one (its
// lock held) is not.
func TestStaleSpillFoldersRemoved(t *testing.T) {
	dir := monthlyProject(t, 2)
	tmp := t.TempDir()
	dead := filepath.Join(tmp, "almanac-spill-123")
	os.MkdirAll(dead, 0o755)
	os.WriteFile(filepath.Join(dead, "lock"), nil, 0o644)
	os.WriteFile(filepath.Join(dead, "rows"), make([]byte, 4096), 0o644)
	live := filepath.Join(tmp, "almanac-spill-456")
	os.MkdirAll(live, 0o755)
	lf, _ := os.Create(filepath.Join(live, "lock"))
	defer lf.Close()
	if err := unix.Flock(int(lf.Fd()), unix.LOCK_EX); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(binary, "run", "spec.yaml", "-q", "--batch-rows", "10")
	cmd.Dir = dir
	cmd.Env = append(os.Environ(), "TMPDIR="+tmp)
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	if _, err := os.Stat(dead); err == nil {
		t.Error("the dead run's spill folder is still there")
	}
	if _, err := os.Stat(live); err != nil {
		t.Error("a live run's spill folder was removed")
	}
	left, _ := filepath.Glob(filepath.Join(tmp, "almanac-spill-*"))
	if len(left) != 1 {
		t.Errorf("spill folders left: %v", left)
	}
}

// --as-of is recorded in the manifest (the canonical spec's shaping.until),
// so verify reproduces the run with the same cut-off.
func TestAsOfIsRecordedAndVerified(t *testing.T) {
	dir := monthlyProject(t, 2)
	out, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q", "--as-of", "2022-06-30")
	if code != 0 {
		t.Fatal(stderr)
	}
	if !strings.Contains(out, "error(s), 1 warning(s)") {
		t.Errorf("summary: %s", out)
	}
	b, err := os.ReadFile(filepath.Join(dir, "out", "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m struct {
		RowsRead int64 `json:"rows_read"`
		Spec     struct {
			Canonical json.RawMessage `json:"canonical"`
		} `json:"spec"`
	}
	json.Unmarshal(b, &m)
	var compact bytes.Buffer
	json.Compact(&compact, m.Spec.Canonical)
	if !strings.Contains(compact.String(), `"until":"2022-06-30"`) || m.RowsRead != 2*18 {
		t.Errorf("manifest: %d rows read, canonical %s", m.RowsRead, m.Spec.Canonical)
	}
	if out, stderr, code := almanac(t, dir, "verify", "out"); code != 0 {
		t.Errorf("verify: %d\n%s%s", code, out, stderr)
	}
}
