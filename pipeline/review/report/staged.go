package report

import (
	"os"
	"path/filepath"

	"almanac/pipeline/runfolder"
)

// ForRun is the report step of a run whose spec asks for a report: it
// writes report.html into the staging folder before the run commits
// (pipeline.Options.Finish). series are the spec's charted keys; picks is
// the spec's count of automatic picks, already defaulted, so 0 means none.
// The run folder still at the target, if it holds a finished run, is the
// previous run whose forecasts the report compares with.
func ForRun(series []string, picks int) func(staging, target string) error {
	if picks == 0 {
		picks = -1
	}
	return func(staging, target string) error {
		prev := ""
		if _, err := os.Stat(filepath.Join(target, runfolder.ManifestFile)); err == nil {
			prev = target
		}
		return Write(staging, Options{Series: series, Picks: picks, Previous: prev})
	}
}
