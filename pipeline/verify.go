package pipeline

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"almanac/pipeline/ingest"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// Verify outcomes, as exit codes.
const (
	VerifyIdentical     = 0 // every table reproduced byte for byte
	VerifyDiffers       = 1 // a table differs from its rerun (or from its manifest hash)
	VerifyInputsChanged = 2 // an input changed, went missing, or a new one matched
)

// Verify proves a stored run: it re-hashes the inputs the manifest names,
// reruns the manifest's canonical spec (not the spec file, which may have
// changed since) into a temporary folder, and compares every table byte for
// byte. It writes a report to w and returns one of the Verify codes; err is
// for failures to verify at all (an unreadable run folder).
func Verify(ctx context.Context, runDir string, w io.Writer, workers int) (int, error) {
	if _, err := os.Stat(filepath.Join(runDir, runfolder.MarkerFile)); err != nil {
		return 0, fmt.Errorf("%s is not an almanac run folder (no %s)", runDir, runfolder.MarkerFile)
	}
	m, err := runfolder.ReadManifest(runDir)
	if err != nil {
		return 0, err
	}
	fmt.Fprintf(w, "run      %s\nrun id   %s\nspec     %s (sha256 %s)\n", runDir, m.RunID, m.Spec.Name, runfolder.ShortHash(m.Spec.SHA256))
	if m.Almanac != Version {
		fmt.Fprintf(w, "note     the run was made by almanac %s; this is %s — identical output is expected only from the same version\n", m.Almanac, Version)
	}
	// 1. Inputs.
	changed, err := checkInputs(w, m)
	if err != nil {
		return 0, err
	}
	s, err := spec.FromCanonical(m.Spec.Canonical, filepath.Join(runDir, runfolder.ManifestFile))
	if err != nil {
		return 0, fmt.Errorf("the manifest's canonical spec does not decode: %v", err)
	}
	s.File, s.Dir = m.Spec.File, m.Spec.Dir
	if s.Hash() != m.Spec.SHA256 {
		return 0, fmt.Errorf("the manifest's canonical spec hashes to %s, not the recorded %s", runfolder.ShortHash(s.Hash()), runfolder.ShortHash(m.Spec.SHA256))
	}
	files, err := ingest.ResolveSources(s)
	if err != nil {
		fmt.Fprintf(w, "inputs   %v\n", err)
		changed++
	} else if len(files) != len(m.Inputs) {
		fmt.Fprintf(w, "inputs   the spec's sources now match %d file(s); the run read %d\n", len(files), len(m.Inputs))
		changed++
	} else {
		for i := range files {
			if files[i].Path != m.Inputs[i].Path {
				fmt.Fprintf(w, "inputs   the sources now match %s where the run read %s\n", files[i].Path, m.Inputs[i].Path)
				changed++
			}
		}
	}
	if changed > 0 {
		fmt.Fprintf(w, "result   INPUTS CHANGED: %d input problem(s); the run cannot be reproduced from these files\n", changed)
		return VerifyInputsChanged, nil
	}

	// 2. Stored tables against their manifest hashes.
	differs := 0
	for _, t := range m.Tables {
		sum, err := runfolder.HashFile(filepath.Join(runDir, t.File))
		if err != nil || sum != t.SHA256 {
			fmt.Fprintf(w, "table    %s: does not match the manifest (stored file altered or missing)\n", t.File)
			differs++
		}
	}

	// 3. Rerun and compare byte for byte.
	tmp, err := os.MkdirTemp("", "almanac-verify-")
	if err != nil {
		return 0, err
	}
	defer os.RemoveAll(tmp)
	rerun := filepath.Join(tmp, "run")
	if _, err := Run(ctx, s, Options{Out: rerun, Workers: workers}); err != nil {
		return 0, fmt.Errorf("rerun failed: %v", err)
	}
	differs += compareTables(w, m, runDir, rerun)
	if differs > 0 {
		fmt.Fprintf(w, "result   DIFFERS: %d table(s) do not reproduce\n", differs)
		return VerifyDiffers, nil
	}
	fmt.Fprintf(w, "result   IDENTICAL: %d table(s) reproduced byte for byte\n", len(m.Tables))
	return VerifyIdentical, nil
}

// checkInputs compares the recorded inputs with the files now on disk and
// counts those missing or changed.
func checkInputs(w io.Writer, m *runfolder.Manifest) (int, error) {
	changed := 0
	for _, in := range m.Inputs {
		path := in.Path
		if !filepath.IsAbs(path) {
			path = filepath.Join(m.Spec.Dir, path)
		}
		st, err := os.Stat(path)
		if err != nil {
			fmt.Fprintf(w, "input    %s: MISSING (%v)\n", in.Path, err)
			changed++
			continue
		}
		sum, err := runfolder.HashFile(path)
		if err != nil {
			return 0, err
		}
		if sum != in.SHA256 || st.Size() != in.Size {
			fmt.Fprintf(w, "input    %s: CHANGED (sha256 %s, was %s; %d bytes, was %d)\n", in.Path, runfolder.ShortHash(sum), runfolder.ShortHash(in.SHA256), st.Size(), in.Size)
			changed++
			continue
		}
		fmt.Fprintf(w, "input    %s: unchanged\n", in.Path)
	}
	return changed, nil
}

// compareTables compares every table of the run with its rerun and counts
// those that differ or are missing.
func compareTables(w io.Writer, m *runfolder.Manifest, runDir, rerun string) int {
	differs := 0
	for _, t := range m.Tables {
		a, errA := os.ReadFile(filepath.Join(runDir, t.File))
		b, errB := os.ReadFile(filepath.Join(rerun, t.File))
		switch {
		case errA != nil:
			fmt.Fprintf(w, "table    %s: MISSING from the run folder\n", t.File)
			differs++
		case errB != nil:
			fmt.Fprintf(w, "table    %s: the rerun did not write it\n", t.File)
			differs++
		case !bytes.Equal(a, b):
			fmt.Fprintf(w, "table    %s: DIFFERS from the rerun (%d vs %d bytes)\n", t.File, len(a), len(b))
			differs++
		default:
			fmt.Fprintf(w, "table    %s: identical (%d rows, sha256 %s)\n", t.File, t.Rows, runfolder.ShortHash(t.SHA256))
		}
	}
	return differs
}
