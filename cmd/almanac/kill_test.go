package main

import (
	"bufio"
	"bytes"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"golang.org/x/sys/unix"
)

// killPanel writes a panel big enough that a run takes a moment.
func killPanel(t *testing.T, dir string) {
	t.Helper()
	var b strings.Builder
	b.WriteString("month,store,item,qty\n")
	for k := 0; k < 1500; k++ {
		for i := 0; i < 48; i++ {
			v := 200 + float64(k%37) + 3*float64(i) + 40*math.Sin(2*math.Pi*float64(i%12)/12+float64(k))
			fmt.Fprintf(&b, "%04d-%02d,S%04d,I%d,%.2f\n", 2020+i/12, i%12+1, k%300, k/300, v)
		}
	}
	os.WriteFile(filepath.Join(dir, "sales.csv"), []byte(b.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(`version: 1
name: kill
sources: [sales.csv]
columns: {time: month, value: qty, keys: [store, item]}
calendar: {frequency: month}
methods: [naive, seasonal_naive, drift, {method: classical}, {method: classical, form: additive, trend: trend_step, label: add}]
horizon: 12
output: out/kill
`), 0o644)
}

func tableBytes(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	for _, n := range []string{"forecasts", "components", "seasonal_factors", "problems"} {
		b, err := os.ReadFile(filepath.Join(dir, n+".parquet"))
		if err != nil {
			t.Fatal(err)
		}
		out[n] = b
	}
	return out
}

// visible lists what a reader of out/ would see (hidden staging excluded).
func visible(t *testing.T, dir string) []string {
	entries, _ := os.ReadDir(dir)
	var names []string
	for _, e := range entries {
		if !strings.HasPrefix(e.Name(), ".") {
			names = append(names, e.Name())
		}
	}
	return names
}

// stallBinary builds testdata/stallrun, a run that blocks at a named point
// (see its doc comment), once per test binary.
var stallBinary = sync.OnceValues(func() (string, error) {
	path := filepath.Join(filepath.Dir(binary), "stallrun")
	out, err := exec.Command("go", "build", "-o", path, "./testdata/stallrun").CombinedOutput()
	if err != nil {
		return "", fmt.Errorf("building stallrun: %v\n%s", err, out)
	}
	return path, nil
})

// startStalled starts a run of spec.yaml in dir and waits until it reports
// the stall point.
func startStalled(t *testing.T, dir, point string) *exec.Cmd {
	t.Helper()
	bin, err := stallBinary()
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(bin, "spec.yaml", point)
	cmd.Dir = dir
	stderr, _ := cmd.StderrPipe()
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	got := make(chan string, 1)
	go func() {
		sc := bufio.NewScanner(stderr)
		for sc.Scan() {
			if strings.Contains(sc.Text(), "stalled at") {
				got <- sc.Text()
				return
			}
		}
		got <- ""
	}()
	select {
	case line := <-got:
		if !strings.Contains(line, "stalled at "+point) {
			cmd.Process.Kill()
			t.Fatalf("process did not stall at %s (said %q)", point, line)
		}
	case <-time.After(60 * time.Second):
		cmd.Process.Kill()
		t.Fatalf("no stall at %s within a minute", point)
	}
	return cmd
}

// TestSIGKILLLeavesNoPartialRun kills a real almanac run with SIGKILL at
// several points of its work: no partial run folder becomes visible, an
// earlier run survives intact, and the rerun is byte-identical to an
// uninterrupted run.
func TestSIGKILLLeavesNoPartialRun(t *testing.T) {
	ref := t.TempDir()
	killPanel(t, ref)
	if _, stderr, code := almanac(t, ref, "run", "spec.yaml", "-q"); code != 0 {
		t.Fatalf("reference run: %s", stderr)
	}
	want := tableBytes(t, filepath.Join(ref, "out", "kill"))

	for _, point := range []string{"read", "forecast", "tables", "commit"} {
		t.Run(point, func(t *testing.T) {
			dir := t.TempDir()
			killPanel(t, dir)
			// First run killed: nothing appears.
			cmd := startStalled(t, dir, point)
			cmd.Process.Signal(syscall.SIGKILL)
			cmd.Wait()
			if v := visible(t, filepath.Join(dir, "out")); len(v) != 0 {
				t.Fatalf("after SIGKILL at %s, out/ shows %v", point, v)
			}
			// A complete run, then a killed rerun: the old run survives whole.
			if _, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q"); code != 0 {
				t.Fatalf("rerun: %s", stderr)
			}
			before := tableBytes(t, filepath.Join(dir, "out", "kill"))
			cmd = startStalled(t, dir, point)
			cmd.Process.Signal(syscall.SIGKILL)
			cmd.Wait()
			after := tableBytes(t, filepath.Join(dir, "out", "kill"))
			for n := range before {
				if !bytes.Equal(before[n], after[n]) {
					t.Errorf("killed rerun changed %s of the previous run", n)
				}
			}
			// The next run cleans up and writes the same bytes as an
			// uninterrupted run.
			if _, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q"); code != 0 {
				t.Fatalf("run after kill: %s", stderr)
			}
			got := tableBytes(t, filepath.Join(dir, "out", "kill"))
			for n := range want {
				if !bytes.Equal(want[n], got[n]) {
					t.Errorf("%s after a killed run differs from the uninterrupted run", n)
				}
			}
			hidden, _ := filepath.Glob(filepath.Join(dir, "out", ".almanac-tmp-*"))
			if len(hidden) != 0 {
				t.Errorf("staging folders left after a clean run: %v", hidden)
			}
		})
	}
}

// startRun starts almanac run with progress lines and waits for the first
// one (the run is forecasting).
func startRun(t *testing.T, dir string, args ...string) (*exec.Cmd, *bytes.Buffer) {
	t.Helper()
	cmd := exec.Command(binary, append([]string{"run", "spec.yaml", "--workers", "1"}, args...)...)
	cmd.Dir = dir
	pr, _ := cmd.StderrPipe()
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	var rest bytes.Buffer
	got := make(chan bool, 1)
	go func() {
		sc := bufio.NewScanner(pr)
		seen := false
		for sc.Scan() {
			rest.WriteString(sc.Text() + "\n")
			if !seen && strings.HasPrefix(sc.Text(), "pass 1:") {
				seen = true
				got <- true
			}
		}
		if !seen {
			got <- false
		}
	}()
	select {
	case ok := <-got:
		if !ok {
			cmd.Wait()
			t.Fatalf("the run ended before forecasting:\n%s", rest.String())
		}
	case <-time.After(60 * time.Second):
		cmd.Process.Kill()
		t.Fatal("no progress within a minute")
	}
	return cmd, &rest
}

// TestSIGTERMStopsTheRun: a SIGTERM during forecasting stops the run within
// a second with exit 130; no run folder appears and no staging is left.
func TestSIGTERMStopsTheRun(t *testing.T) {
	dir := t.TempDir()
	killPanel(t, dir)
	for _, sig := range []syscall.Signal{syscall.SIGTERM, syscall.SIGINT} {
		cmd, stderr := startRun(t, dir)
		sent := time.Now()
		cmd.Process.Signal(sig)
		err := cmd.Wait()
		took := time.Since(sent)
		code := cmd.ProcessState.ExitCode()
		if code != exitInterrupted {
			t.Fatalf("%v: exit %d (%v), want %d\n%s", sig, code, err, exitInterrupted, stderr)
		}
		if took > time.Second {
			t.Errorf("%v: the run took %v to stop, want under 1 s", sig, took)
		}
		if !strings.Contains(stderr.String(), "stopping (send it again to exit at once)") || !strings.Contains(stderr.String(), "almanac: interrupted; the target was left as it was") {
			t.Errorf("%v: stderr:\n%s", sig, stderr)
		}
		entries, _ := os.ReadDir(filepath.Join(dir, "out"))
		if len(entries) != 0 {
			t.Errorf("%v: out/ holds %v after an interrupted first run", sig, entries)
		}
	}
}

// TestSecondSignalExitsAtOnce: a real run that cannot stop — its input is
// a pipe whose writer never writes, so the read blocks in the kernel and
// never looks at the cancelled context — exits at once on a second signal,
// exit 130, and the previous run folder is untouched.
func TestSecondSignalExitsAtOnce(t *testing.T) {
	dir := t.TempDir()
	killPanel(t, dir)
	if _, stderr, code := almanac(t, dir, "run", "spec.yaml", "-q"); code != 0 {
		t.Fatalf("first run: %s", stderr)
	}
	before := tableBytes(t, filepath.Join(dir, "out", "kill"))
	fifo := filepath.Join(dir, "blocked.csv")
	if err := unix.Mkfifo(fifo, 0o644); err != nil {
		t.Skip("no FIFO:", err)
	}
	spec, _ := os.ReadFile(filepath.Join(dir, "spec.yaml"))
	os.WriteFile(filepath.Join(dir, "blocked.yaml"), bytes.Replace(spec, []byte("sources: [sales.csv]"), []byte("sources: [blocked.csv]"), 1), 0o644)
	// Hold the pipe open for writing and write nothing: the reader waits.
	go func() {
		if w, err := os.OpenFile(fifo, os.O_WRONLY, 0); err == nil {
			time.Sleep(30 * time.Second)
			w.Close()
		}
	}()
	cmd := exec.Command(binary, "run", "blocked.yaml", "-q")
	cmd.Dir = dir
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	exited := make(chan struct{})
	go func() { cmd.Wait(); close(exited) }()
	time.AfterFunc(20*time.Second, func() { cmd.Process.Kill() })
	time.Sleep(700 * time.Millisecond)
	cmd.Process.Signal(syscall.SIGTERM)
	select {
	case <-exited:
		t.Fatalf("a blocked run exited on the first signal (exit %d)\n%s", cmd.ProcessState.ExitCode(), stderr.String())
	case <-time.After(300 * time.Millisecond):
	}
	sent := time.Now()
	cmd.Process.Signal(syscall.SIGTERM)
	<-exited
	if code := cmd.ProcessState.ExitCode(); code != exitInterrupted {
		t.Fatalf("exit %d after the second signal, want %d\n%s", code, exitInterrupted, stderr.String())
	}
	if took := time.Since(sent); took > time.Second {
		t.Errorf("exit took %v after the second signal", took)
	}
	after := tableBytes(t, filepath.Join(dir, "out", "kill"))
	for n := range before {
		if !bytes.Equal(before[n], after[n]) {
			t.Errorf("the interrupted rerun changed %s", n)
		}
	}
	if v := visible(t, filepath.Join(dir, "out")); len(v) != 1 || v[0] != "kill" {
		t.Errorf("out/ shows %v", v)
	}
	if left, _ := filepath.Glob(filepath.Join(dir, "out", ".almanac-tmp-*")); len(left) != 0 {
		t.Errorf("the abandoned run left its staging: %v", left)
	}
}
