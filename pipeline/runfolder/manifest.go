package runfolder

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
)

// ManifestFile is the run folder's manifest.
const ManifestFile = "manifest.json"

// Input is one file a run read.
type Input struct {
	Path   string `json:"path"` // as resolved from the spec's source, relative to the spec's folder when below it
	Format string `json:"format"`
	Size   int64  `json:"size"`
	SHA256 string `json:"sha256"`
	Rows   int64  `json:"rows"`
	Abs    string `json:"-"` // absolute path, known to the writer only
}

// ProblemCounts counts problems rows by severity.
type ProblemCounts struct {
	Errors   int `json:"errors"`
	Warnings int `json:"warnings"`
}

// Manifest is manifest.json: what ran, on which inputs, and how long it took.
// Unlike the tables it holds wall-clock times, so it differs between reruns.
type Manifest struct {
	Almanac       string           `json:"almanac_version"`
	RunID         string           `json:"run_id"`
	GoVersion     string           `json:"go_version"`
	Spec          ManifestSpec     `json:"spec"`
	Inputs        []Input          `json:"inputs"`
	RowsRead      int64            `json:"rows_read"`
	MissingValues int64            `json:"missing_values"`
	Series        int              `json:"series"`
	Methods       []ManifestMethod `json:"methods"`
	Tables        []TableInfo      `json:"tables"`
	// Report is report.html's size and SHA-256 when the spec asks for it
	// (it depends on the previous run, so verify checks it against this,
	// not against a rerun).
	Report      *TableInfo    `json:"report,omitempty"`
	Problems    ProblemCounts `json:"problems"`
	Leaderboard *Leaderboard  `json:"leaderboard,omitempty"`
	Shard       *ShardInfo    `json:"shard,omitempty"`
	Workers     int           `json:"workers"`
	Stages      []StageTiming `json:"stages"`
	StartedAt   string        `json:"started_at"`
	FinishedAt  string        `json:"finished_at"`
	Seconds     float64       `json:"seconds"`
}

// ManifestSpec identifies the spec of a run.
type ManifestSpec struct {
	Name string `json:"name"`
	File string `json:"file"`
	Dir  string `json:"dir"` // absolute folder of the spec: input paths are relative to it
	// DirFromRun is the spec's folder relative to the run folder, so that
	// a project copied or moved elsewhere verifies against its own inputs.
	DirFromRun string          `json:"dir_from_run,omitempty"`
	SHA256     string          `json:"sha256"`
	Canonical  json.RawMessage `json:"canonical"`
}

// ManifestMethod is one method of the run and how many series it forecast.
type ManifestMethod struct {
	Label   string         `json:"label"`
	Method  string         `json:"method"`
	Options map[string]any `json:"options"`
	Series  int            `json:"series_forecast"`
}

// TableInfo describes one table file of the run folder.
type TableInfo struct {
	Name   string `json:"name"`
	File   string `json:"file"`
	Rows   int64  `json:"rows"`
	Bytes  int64  `json:"bytes"`
	SHA256 string `json:"sha256"`
}

// StageTiming is the wall time of one stage.
type StageTiming struct {
	Stage   string  `json:"stage"`
	Seconds float64 `json:"seconds"`
}

// WriteManifest writes m to path and fsyncs it.
func WriteManifest(path string, m *Manifest) error {
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return err
	}
	b = append(b, '\n')
	if err := os.WriteFile(path, b, 0o644); err != nil {
		return err
	}
	return fsyncPath(path)
}

// ReadManifest reads a run folder's manifest.json.
func ReadManifest(dir string) (*Manifest, error) {
	b, err := os.ReadFile(filepath.Join(dir, ManifestFile))
	if err != nil {
		return nil, err
	}
	var m Manifest
	if err := json.Unmarshal(b, &m); err != nil {
		return nil, fmt.Errorf("%s: %v", filepath.Join(dir, ManifestFile), err)
	}
	return &m, nil
}

// Leaderboard is the run's summary across series: per entry, the mean and
// median of each series' mean backtest MASE, and the share of series it won.
type Leaderboard struct {
	Metric   string           `json:"selection_metric"`
	Entries  []LeaderboardRow `json:"entries"`
	Chosen   map[string]int   `json:"series_per_chosen_method"`
	NoScore  int              `json:"series_on_fallback"`
	Fallback string           `json:"fallback"`
}

// LeaderboardRow is one method's line of the leaderboard.
type LeaderboardRow struct {
	Method     string    `json:"method"`
	Series     int       `json:"series_scored"`
	MeanMASE   JSONFloat `json:"mean_mase"`
	MedianMASE JSONFloat `json:"median_mase"`
	WinShare   float64   `json:"win_share"`
}

// JSONFloat is a float64 that encodes NaN as null (encoding/json refuses NaN).
type JSONFloat float64

func (f JSONFloat) MarshalJSON() ([]byte, error) {
	if math.IsNaN(float64(f)) || math.IsInf(float64(f), 0) {
		return []byte("null"), nil
	}
	return json.Marshal(float64(f))
}

func (f *JSONFloat) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		*f = JSONFloat(math.NaN())
		return nil
	}
	var v float64
	if err := json.Unmarshal(b, &v); err != nil {
		return err
	}
	*f = JSONFloat(v)
	return nil
}

// ReportFile is the HTML report's name in a run folder.
const ReportFile = "report.html"

// DirFromRun is the spec's folder relative to the run folder target ("" when
// there is no relative path).
func DirFromRun(target, specDir string) string {
	abs, err := filepath.Abs(target)
	if err != nil {
		return ""
	}
	r, err := filepath.Rel(abs, specDir)
	if err != nil {
		return ""
	}
	return filepath.ToSlash(r)
}
