package runfolder

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"

	"almanac/spec"
)

// RunID is the content address of a run: the SHA-256 of the canonical spec,
// every input file's path and SHA-256, and the almanac version. Two runs
// with the same id read the same bytes through the same spec with the same
// program, so they write the same tables.
func RunID(s *spec.Spec, inputs []Input) string {
	h := sha256.New()
	fmt.Fprintf(h, "almanac run v1\nversion %s\nspec %s\n", Version, s.Hash())
	for _, in := range inputs {
		fmt.Fprintf(h, "input %s %s\n", in.Path, in.SHA256)
	}
	return hex.EncodeToString(h.Sum(nil))
}

// runUUID renders a run id as an RFC 9562 UUID (version 8, the form for
// custom, here hash-derived, identifiers), as OpenLineage wants run ids.
func runUUID(runID string) string {
	b, err := hex.DecodeString(runID)
	if err != nil || len(b) < 16 {
		sum := sha256.Sum256([]byte(runID))
		b = sum[:]
	}
	u := make([]byte, 16)
	copy(u, b[:16])
	u[6] = u[6]&0x0f | 0x80 // version 8
	u[8] = u[8]&0x3f | 0x80 // variant 10
	return fmt.Sprintf("%x-%x-%x-%x-%x", u[0:4], u[4:6], u[6:8], u[8:10], u[10:16])
}

// LineageFile is the OpenLineage run event written beside the tables.
const LineageFile = "openlineage.json"

// lineageProducer identifies almanac as the producer of lineage events.
const lineageProducer = "https://almanac.invalid/almanac/" + Version

// lineageSchemaURL is the OpenLineage run-event schema the event follows
// (OpenLineage 2-0-2, written from memory of the published specification).
const lineageSchemaURL = "https://openlineage.io/spec/2-0-2/OpenLineage.json#/$defs/RunEvent"

type lineageEvent struct {
	EventType string           `json:"eventType"`
	EventTime string           `json:"eventTime"`
	Run       lineageRun       `json:"run"`
	Job       lineageJob       `json:"job"`
	Inputs    []lineageDataset `json:"inputs"`
	Outputs   []lineageDataset `json:"outputs"`
	Producer  string           `json:"producer"`
	SchemaURL string           `json:"schemaURL"`
}

type lineageRun struct {
	RunID  string         `json:"runId"`
	Facets map[string]any `json:"facets"`
}

type lineageJob struct {
	Namespace string         `json:"namespace"`
	Name      string         `json:"name"`
	Facets    map[string]any `json:"facets"`
}

type lineageDataset struct {
	Namespace string         `json:"namespace"`
	Name      string         `json:"name"`
	Facets    map[string]any `json:"facets,omitempty"`
}

// WriteLineage writes the run's OpenLineage COMPLETE event. Datasets are
// files: namespace "file", name the absolute path (the final run folder
// for outputs).
func WriteLineage(path string, m *Manifest, target string) error {
	facet := func(name string, fields map[string]any) map[string]any {
		out := map[string]any{"_producer": lineageProducer,
			"_schemaURL": "https://almanac.invalid/schemas/lineage/" + name + ".json"}
		for k, v := range fields {
			out[k] = v
		}
		return out
	}
	ev := lineageEvent{
		EventType: "COMPLETE",
		EventTime: m.FinishedAt,
		Run: lineageRun{RunID: runUUID(m.RunID), Facets: map[string]any{
			"almanac_run": facet("AlmanacRunFacet", map[string]any{
				"runId": m.RunID, "specSha256": m.Spec.SHA256, "almanacVersion": m.Almanac, "series": m.Series,
			}),
		}},
		Job:       lineageJob{Namespace: "almanac", Name: m.Spec.Name, Facets: map[string]any{}},
		Producer:  lineageProducer,
		SchemaURL: lineageSchemaURL,
	}
	for _, in := range m.Inputs {
		ev.Inputs = append(ev.Inputs, lineageDataset{Namespace: "file", Name: in.Abs, Facets: map[string]any{
			"almanac_input": facet("AlmanacInputFacet", map[string]any{"sha256": in.SHA256, "size": in.Size, "rows": in.Rows}),
		}})
	}
	for _, t := range m.Tables {
		ev.Outputs = append(ev.Outputs, lineageDataset{Namespace: "file", Name: filepath.Join(target, t.File), Facets: map[string]any{
			"almanac_table": facet("AlmanacTableFacet", map[string]any{"sha256": t.SHA256, "rows": t.Rows}),
		}})
	}
	b, err := json.MarshalIndent(ev, "", "  ")
	if err != nil {
		return err
	}
	if err := os.WriteFile(path, append(b, '\n'), 0o644); err != nil {
		return err
	}
	return fsyncPath(path)
}
