package pipeline

import (
	"almanac/pipeline/runfolder"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

func TestVerify(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	s := loadFixture(t, dir, backtestSpec)
	if _, err := Run(context.Background(), s, Options{}); err != nil {
		t.Fatal(err)
	}
	run := filepath.Join(dir, "out", "run")
	verify := func() (int, string) {
		var b bytes.Buffer
		code, err := Verify(context.Background(), run, &b, VerifyOptions{Workers: 2})
		if err != nil {
			t.Fatal(err)
		}
		return code, b.String()
	}
	// Untouched: identical, every table named.
	code, out := verify()
	if code != VerifyIdentical || !strings.Contains(out, "result   IDENTICAL: 6 table(s)") || !strings.Contains(out, "accuracy.parquet: identical") {
		t.Fatalf("untouched run: code %d\n%s", code, out)
	}
	// The spec file changing afterwards does not matter: the manifest's
	// canonical spec is what is rerun.
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte("garbage"), 0o644)
	if code, out := verify(); code != VerifyIdentical {
		t.Fatalf("after editing the spec file: code %d\n%s", code, out)
	}
	// A changed table is detected.
	fc := filepath.Join(run, "choices.parquet")
	orig, _ := os.ReadFile(fc)
	bad := append([]byte(nil), orig...)
	bad[len(bad)/2] ^= 0x01
	os.WriteFile(fc, bad, 0o644)
	code, out = verify()
	if code != VerifyDiffers || !strings.Contains(out, "choices.parquet: DIFFERS from the rerun and from its manifest hash (altered after the run)") || !strings.Contains(out, "result   DIFFERS: 1 file(s)") {
		t.Fatalf("altered table: code %d\n%s", code, out)
	}
	os.WriteFile(fc, orig, 0o644)
	// An extra file, a table dropped from the manifest, a redirected entry,
	// a path outside the folder.
	os.WriteFile(filepath.Join(run, "notes.txt"), []byte("x"), 0o644)
	if code, out := verify(); code != VerifyDiffers || !strings.Contains(out, "extra    notes.txt: in the run folder but not in its manifest") {
		t.Fatalf("extra file: code %d\n%s", code, out)
	}
	os.Remove(filepath.Join(run, "notes.txt"))
	manPath := filepath.Join(run, "manifest.json")
	manOrig, _ := os.ReadFile(manPath)
	editManifest := func(edit func(m *Manifest)) {
		var m Manifest
		json.Unmarshal(manOrig, &m)
		edit(&m)
		b, _ := json.Marshal(m)
		os.WriteFile(manPath, b, 0o644)
	}
	editManifest(func(m *Manifest) { m.Tables = m.Tables[1:] })
	if code, out := verify(); code != VerifyDiffers || !strings.Contains(out, "forecasts.parquet: MISSING from the manifest (the rerun writes it)") || !strings.Contains(out, "extra    forecasts.parquet") {
		t.Fatalf("dropped entry: code %d\n%s", code, out)
	}
	editManifest(func(m *Manifest) { m.Tables[0].File = "components.parquet2" })
	if code, out := verify(); code != VerifyDiffers || !strings.Contains(out, "forecasts.parquet: the manifest points it at components.parquet2 (REDIRECTED)") {
		t.Fatalf("redirected entry: code %d\n%s", code, out)
	}
	for _, p := range []string{"../../x.parquet", "/etc/passwd", "sub/x.parquet"} {
		editManifest(func(m *Manifest) { m.Tables[0].File = p })
		var b bytes.Buffer
		code, err := Verify(context.Background(), run, &b, VerifyOptions{Workers: 2})
		var ue *UnusableError
		if code != VerifyUnusable || !errors.As(err, &ue) || !strings.Contains(err.Error(), "outside the run folder") {
			t.Fatalf("table path %s: code %d, %v", p, code, err)
		}
	}
	os.WriteFile(manPath, manOrig, 0o644)
	// A copy of the whole project verifies against its own inputs.
	moved := filepath.Join(t.TempDir(), "copy")
	if err := os.CopyFS(moved, os.DirFS(dir)); err != nil {
		t.Fatal(err)
	}
	var mb bytes.Buffer
	if code, err := Verify(context.Background(), filepath.Join(moved, "out", "run"), &mb, VerifyOptions{Workers: 2}); code != VerifyIdentical || err != nil {
		t.Fatalf("moved project: %d %v\n%s", code, err, mb.String())
	}
	os.WriteFile(filepath.Join(moved, "data", "sales.csv"), []byte("month,store,item,qty\n"), 0o644)
	mb.Reset()
	if code, _ := Verify(context.Background(), filepath.Join(moved, "out", "run"), &mb, VerifyOptions{Workers: 2}); code != VerifyInputsChanged || !strings.Contains(mb.String(), "resolved against "+moved) {
		t.Fatalf("the moved run was verified against the original inputs: %d\n%s", code, mb.String())
	}
	// ... unless pointed at another input root.
	mb.Reset()
	if code, _ := Verify(context.Background(), filepath.Join(moved, "out", "run"), &mb, VerifyOptions{Workers: 2, InputRoot: dir}); code != VerifyIdentical {
		t.Fatalf("--input-root: %d\n%s", code, mb.String())
	}
	// One changed input byte is detected before any rerun.
	in := filepath.Join(dir, "data", "sales.csv")
	data, _ := os.ReadFile(in)
	i := bytes.IndexByte(data, '\n') + 12
	data[i] = map[bool]byte{true: '7', false: '3'}[data[i] != '7']
	os.WriteFile(in, data, 0o644)
	code, out = verify()
	if code != VerifyInputsChanged || !regexp.MustCompile(`input    data/sales.csv: CHANGED`).MatchString(out) {
		t.Fatalf("changed input: code %d\n%s", code, out)
	}
	os.Remove(in)
	if code, out := verify(); code != VerifyInputsChanged || !strings.Contains(out, "MISSING") {
		t.Fatalf("missing input: code %d\n%s", code, out)
	}
}

// The run id is content-addressed and stamped everywhere; the lineage event
// carries what an OpenLineage run event requires (written from memory of the
// published OpenLineage 2-0-2 specification: eventType, eventTime, run.runId
// as a UUID, job.namespace and job.name, inputs, outputs, producer and
// schemaURL).
func TestRunIDAndLineage(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	s := loadFixture(t, dir, fixtureSpec)
	sum, err := Run(context.Background(), s, Options{})
	if err != nil {
		t.Fatal(err)
	}
	run := sum.Dir
	m := sum.Manifest
	if len(m.RunID) != 64 || m.RunID != runfolder.RunID(s, m.Inputs) {
		t.Fatalf("run id %q", m.RunID)
	}
	for _, tb := range []string{runfolder.TableForecasts, runfolder.TableComponents, runfolder.TableSeasonalFactors, runfolder.TableProblems} {
		if got := readTable(t, filepath.Join(run, tb+".parquet")).meta["almanac.run_id"]; got != m.RunID {
			t.Errorf("%s: run id %q", tb, got)
		}
	}
	// Another input byte, another run id.
	in := filepath.Join(dir, "data", "sales.csv")
	data, _ := os.ReadFile(in)
	os.WriteFile(in, append(data, []byte("2023-12-20,S1,A,1\n")...), 0o644)
	sum2, err := Run(context.Background(), s, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if sum2.Manifest.RunID == m.RunID {
		t.Error("a changed input kept the run id")
	}

	b, err := os.ReadFile(filepath.Join(run, runfolder.LineageFile))
	if err != nil {
		t.Fatal(err)
	}
	var ev map[string]any
	if err := json.Unmarshal(b, &ev); err != nil {
		t.Fatal(err)
	}
	str := func(v any) string { s, _ := v.(string); return s }
	if str(ev["eventType"]) != "COMPLETE" {
		t.Errorf("eventType %v", ev["eventType"])
	}
	if !regexp.MustCompile(`^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d+)?Z$`).MatchString(str(ev["eventTime"])) {
		t.Errorf("eventTime %v is not an ISO 8601 UTC time", ev["eventTime"])
	}
	runObj, _ := ev["run"].(map[string]any)
	if !regexp.MustCompile(`^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$`).MatchString(str(runObj["runId"])) {
		t.Errorf("run.runId %v is not a UUID", runObj["runId"])
	}
	job, _ := ev["job"].(map[string]any)
	if str(job["namespace"]) == "" || str(job["name"]) != "fixture" {
		t.Errorf("job %v", job)
	}
	for _, k := range []string{"producer", "schemaURL"} {
		if !strings.HasPrefix(str(ev[k]), "https://") {
			t.Errorf("%s %v is not a URI", k, ev[k])
		}
	}
	ins, _ := ev["inputs"].([]any)
	outs, _ := ev["outputs"].([]any)
	if len(ins) != 1 || len(outs) != 4 {
		t.Fatalf("%d inputs, %d outputs", len(ins), len(outs))
	}
	for _, d := range append(ins, outs...) {
		dm := d.(map[string]any)
		if str(dm["namespace"]) != "file" || !filepath.IsAbs(str(dm["name"])) {
			t.Errorf("dataset %v", dm)
		}
	}
	if str(outs[0].(map[string]any)["name"]) != filepath.Join(run, "forecasts.parquet") {
		t.Errorf("first output %v", outs[0])
	}
}
