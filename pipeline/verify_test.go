package pipeline

import (
	"almanac/pipeline/runfolder"
	"bytes"
	"context"
	"encoding/json"
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
		code, err := Verify(context.Background(), run, &b, 2)
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
	if code != VerifyDiffers || !strings.Contains(out, "choices.parquet: does not match the manifest") || !strings.Contains(out, "choices.parquet: DIFFERS from the rerun") {
		t.Fatalf("altered table: code %d\n%s", code, out)
	}
	os.WriteFile(fc, orig, 0o644)
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
