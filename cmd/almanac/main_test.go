package main

import (
	"bytes"
	"flag"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

var binary string

func TestMain(m *testing.M) {
	flag.Parse()
	dir, err := os.MkdirTemp("", "almanac-cli")
	if err != nil {
		panic(err)
	}
	binary = filepath.Join(dir, "almanac")
	out, err := exec.Command("go", "build", "-o", binary, ".").CombinedOutput()
	if err != nil {
		os.Stderr.Write(out)
		panic(err)
	}
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

// almanac runs the built binary in dir and returns stdout, stderr and the
// exit code.
func almanac(t *testing.T, dir string, args ...string) (string, string, int) {
	t.Helper()
	cmd := exec.Command(binary, args...)
	cmd.Dir = dir
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	err := cmd.Run()
	code := 0
	if ee, ok := err.(*exec.ExitError); ok {
		code = ee.ExitCode()
	} else if err != nil {
		t.Fatal(err)
	}
	return stdout.String(), stderr.String(), code
}

func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./cmd/almanac -update to create it)", err)
	}
	if got != string(want) {
		t.Errorf("output differs from %s:\n--- got\n%s\n--- want\n%s", path, got, want)
	}
}

// check on every testdata spec: good ones exit 0, bad ones exit 2 with every
// error listed, each compared with its golden file.
func TestCheckGoldens(t *testing.T) {
	specs, _ := filepath.Glob("testdata/*.yaml")
	if len(specs) < 3 {
		t.Fatalf("found %d specs", len(specs))
	}
	for _, p := range specs {
		name := filepath.Base(p)
		t.Run(name, func(t *testing.T) {
			stdout, stderr, code := almanac(t, "testdata", "check", name)
			want := 0
			if strings.HasSuffix(name, ".bad.yaml") {
				want = 2
			}
			if code != want {
				t.Errorf("exit %d, want %d\n%s%s", code, want, stdout, stderr)
			}
			golden(t, strings.TrimSuffix(name, ".yaml")+".check.golden", stdout+stderr)
		})
	}
}

func TestRunPlanAndExitCodes(t *testing.T) {
	dir := t.TempDir()
	for _, f := range []string{"ok.good.yaml", "sales.csv", "badvalue.run.yaml", "badvalue.csv"} {
		b, err := os.ReadFile(filepath.Join("testdata", f))
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(dir, f), b, 0o644)
	}
	stdout, stderr, code := almanac(t, dir, "plan", "ok.good.yaml")
	if code != 0 {
		t.Fatalf("plan exit %d: %s", code, stderr)
	}
	for _, want := range []string{"1. read      1 file(s), 72 rows", "3. split     2 series, 36 to 36 periods each, 2021-01 … 2023-12",
		"5. forecast  3 step(s) ahead with 3 method(s)", "classical", "trend=trend_flat"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("plan output lacks %q:\n%s", want, stdout)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "out")); !os.IsNotExist(err) {
		t.Error("plan wrote something")
	}

	stdout, stderr, code = almanac(t, dir, "run", "ok.good.yaml", "--workers", "2")
	if code != 0 {
		t.Fatalf("run exit %d: %s", code, stderr)
	}
	if !strings.Contains(stdout, "cli-ok: 2 series, 3 method(s), 18 forecast rows") ||
		!strings.Contains(stdout, "tables:   "+filepath.Join(dir, "out", "cli-ok")) {
		t.Errorf("run summary:\n%s", stdout)
	}
	if !strings.Contains(stderr, "pass 1: series 2/2 (100%)") {
		t.Errorf("no progress lines on a non-terminal stderr:\n%s", stderr)
	}
	for _, f := range []string{"forecasts.parquet", "components.parquet", "seasonal_factors.parquet", "problems.parquet", "manifest.json", ".almanac-run"} {
		if _, err := os.Stat(filepath.Join(dir, "out", "cli-ok", f)); err != nil {
			t.Error(err)
		}
	}

	// Bad data: exit 1, file:line named, nothing written.
	_, stderr, code = almanac(t, dir, "run", "badvalue.run.yaml", "-q")
	if code != 1 || !strings.Contains(stderr, `badvalue.csv:3: column "qty": "many" is not a number`) {
		t.Errorf("bad value: exit %d\n%s", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "out", "cli-badvalue")); !os.IsNotExist(err) {
		t.Error("failed run left a folder")
	}
	// Usage errors: exit 2.
	if _, _, code := almanac(t, dir, "run"); code != 2 {
		t.Errorf("run without a spec: exit %d", code)
	}
	if _, _, code := almanac(t, dir, "run", "ok.good.yaml", "--workers", "0"); code != 2 {
		t.Errorf("--workers 0: exit %d", code)
	}
	if _, _, code := almanac(t, dir, "frobnicate"); code != 2 {
		t.Errorf("unknown command: exit %d", code)
	}
	if _, stderr, code := almanac(t, dir, "check", "missing.yaml"); code != 2 || !strings.Contains(stderr, "missing.yaml") {
		t.Errorf("check missing file: exit %d %s", code, stderr)
	}
}

// The shipped examples run through the real binary.
func TestExamplesRun(t *testing.T) {
	if runtime.GOOS != "linux" {
		t.Skip("the atomic swap uses Linux renameat2")
	}
	specs, _ := filepath.Glob("../../examples/*/spec.yaml")
	if len(specs) < 2 {
		t.Fatalf("found %d example specs, want at least 2", len(specs))
	}
	for _, p := range specs {
		abs, _ := filepath.Abs(p)
		out := t.TempDir()
		stdout, stderr, code := almanac(t, ".", "run", abs, "--out", filepath.Join(out, "run"), "-q")
		if code != 0 {
			t.Errorf("%s: exit %d\n%s", p, code, stderr)
			continue
		}
		if !strings.Contains(stdout, "series") {
			t.Errorf("%s: summary %q", p, stdout)
		}
	}
}

func TestParseBytes(t *testing.T) {
	for in, want := range map[string]int64{"3GiB": 3 << 30, "800MiB": 800 << 20, "1.5GiB": 3 << 29, "512MB": 512e6, "0": 0, "4096": 4096} {
		got, err := parseBytes(in)
		if err != nil || got != want {
			t.Errorf("parseBytes(%q) = %d, %v; want %d", in, got, err, want)
		}
	}
	for _, bad := range []string{"", "lots", "-1GiB", "3 furlongs"} {
		if _, err := parseBytes(bad); err == nil {
			t.Errorf("parseBytes(%q) accepted", bad)
		}
	}
}

// plan prints every stage a run executes, from the compiled plan: on the
// garden-supply example (backtest, selection, combination, routing,
// intervals, report) it is compared with its golden file.
func TestPlanGolden(t *testing.T) {
	dir := t.TempDir()
	spec, err := filepath.Abs(filepath.Join("..", "..", "examples", "garden-supply", "spec.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	stdout, stderr, code := almanac(t, dir, "plan", spec, "--out", "planned")
	if code != 0 {
		t.Fatalf("plan exit %d: %s", code, stderr)
	}
	out := strings.ReplaceAll(stdout, filepath.Join(dir, "planned"), "<out>")
	golden(t, "garden-supply.plan.golden", out)
	for _, stage := range []string{"backtest", "select", "forecast", "intervals", "write", "report"} {
		if !strings.Contains(out, ". "+stage+" ") {
			t.Errorf("plan lacks the %s stage:\n%s", stage, out)
		}
	}
}
