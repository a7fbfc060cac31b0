package pipeline

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"almanac/pipeline/ingest"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// Verify outcomes, as exit codes (almanac verify exits with them; 2 is
// left to usage errors, as for every command).
const (
	VerifyIdentical     = 0 // every table reproduced byte for byte
	VerifyDiffers       = 1 // a file differs from its rerun or its manifest, or the folder holds files the manifest does not list
	VerifyInputsChanged = 3 // an input changed, went missing, or a new one matched
	VerifyUnusable      = 4 // not a run folder, or a manifest that cannot be trusted (unreadable, paths outside the folder)
)

// VerifyOptions tunes Verify.
type VerifyOptions struct {
	Workers int
	// InputRoot, when set, is the folder the run's relative input paths
	// (and the spec's sources) are resolved against, instead of the spec's
	// folder as recorded (or as found beside a moved run folder).
	InputRoot string
}

// UnusableError says why a run folder cannot be verified at all.
type UnusableError struct{ Msg string }

func (e *UnusableError) Error() string { return e.Msg }

func unusable(format string, args ...any) error {
	return &UnusableError{Msg: fmt.Sprintf(format, args...)}
}

// localFile reports whether name is a plain file name inside the folder:
// no separator, no "..", not absolute.
func localFile(name string) bool {
	return name != "" && filepath.IsLocal(name) && !strings.ContainsAny(name, `/\`)
}

// Verify proves a stored run: it checks that every path the manifest names
// stays in the folder, re-hashes the inputs, reruns the manifest's
// canonical spec (not the spec file, which may have changed since) into a
// temporary folder, compares every table byte for byte (each counted once),
// checks report.html against its recorded hash, and reports files the
// manifest does not list. It writes a report to w and returns one of the
// Verify codes; err (an *UnusableError or an I/O error) is for failures to
// verify at all, with VerifyUnusable.
func Verify(ctx context.Context, runDir string, w io.Writer, opt VerifyOptions) (int, error) {
	m, err := trustedManifest(runDir)
	if err != nil {
		return VerifyUnusable, err
	}
	fmt.Fprintf(w, "run      %s\nrun id   %s\nspec     %s (sha256 %s)\n", runDir, m.RunID, m.Spec.Name, runfolder.ShortHash(m.Spec.SHA256))
	if m.Almanac != Version {
		fmt.Fprintf(w, "note     the run was made by almanac %s; this is %s — identical output is expected only from the same version\n", m.Almanac, Version)
	}
	specDir, err := inputRoot(runDir, m, opt.InputRoot)
	if err != nil {
		return VerifyUnusable, err
	}
	if specDir != m.Spec.Dir {
		fmt.Fprintf(w, "inputs   resolved against %s (the run recorded %s)\n", specDir, m.Spec.Dir)
	}
	// 1. Inputs.
	changed, err := checkInputs(w, m, specDir)
	if err != nil {
		return VerifyUnusable, err
	}
	s, err := spec.FromCanonical(m.Spec.Canonical, filepath.Join(runDir, runfolder.ManifestFile))
	if err != nil {
		return VerifyUnusable, unusable("the manifest's canonical spec does not decode: %v", err)
	}
	s.File, s.Dir = m.Spec.File, specDir
	if s.Hash() != m.Spec.SHA256 {
		return VerifyUnusable, unusable("the manifest's canonical spec hashes to %s, not the recorded %s", runfolder.ShortHash(s.Hash()), runfolder.ShortHash(m.Spec.SHA256))
	}
	changed += checkSources(w, s, m)
	if changed > 0 {
		fmt.Fprintf(w, "result   INPUTS CHANGED: %d input problem(s); the run cannot be reproduced from these files\n", changed)
		return VerifyInputsChanged, nil
	}

	// 2. Rerun, and compare.
	tmp, err := os.MkdirTemp("", "almanac-verify-")
	if err != nil {
		return VerifyUnusable, err
	}
	defer os.RemoveAll(tmp)
	rerun := filepath.Join(tmp, "run")
	if _, err := Run(ctx, s, Options{Out: rerun, Workers: max(1, opt.Workers)}); err != nil {
		return VerifyUnusable, fmt.Errorf("rerun failed: %v", err)
	}
	rm, err := runfolder.ReadManifest(rerun)
	if err != nil {
		return VerifyUnusable, err
	}
	bad := map[string]bool{}
	compareTables(w, m, rm, runDir, rerun, bad)
	checkReport(w, m, runDir, bad)
	if err := extraFiles(w, m, runDir, bad); err != nil {
		return VerifyUnusable, err
	}
	if len(bad) > 0 {
		fmt.Fprintf(w, "result   DIFFERS: %d file(s) do not match the run\n", len(bad))
		return VerifyDiffers, nil
	}
	fmt.Fprintf(w, "result   IDENTICAL: %d table(s) reproduced byte for byte\n", len(m.Tables))
	return VerifyIdentical, nil
}

// trustedManifest reads a run folder's manifest and refuses one that names
// a path outside the folder or a table twice.
func trustedManifest(runDir string) (*runfolder.Manifest, error) {
	if _, err := os.Stat(filepath.Join(runDir, runfolder.MarkerFile)); err != nil {
		return nil, unusable("%s is not an almanac run folder (no %s)", runDir, runfolder.MarkerFile)
	}
	m, err := runfolder.ReadManifest(runDir)
	if err != nil {
		return nil, unusable("the manifest cannot be read: %v", err)
	}
	if m.Shard != nil {
		return nil, unusable("%s holds one shard's manifest; verify a plain run folder", runDir)
	}
	listed := map[string]bool{}
	for _, t := range m.Tables {
		if !localFile(t.File) {
			return nil, unusable("the manifest lists the table %q at %q, outside the run folder; it cannot be trusted", t.Name, t.File)
		}
		if listed[t.File] {
			return nil, unusable("the manifest lists %s twice; it cannot be trusted", t.File)
		}
		listed[t.File] = true
	}
	if m.Report != nil && !localFile(m.Report.File) {
		return nil, unusable("the manifest lists the report at %q, outside the run folder; it cannot be trusted", m.Report.File)
	}
	return m, nil
}

// inputRoot is the folder relative input paths are resolved against: the
// one asked for, else the spec's folder as seen from the run folder (a
// moved or copied project), else the recorded one.
func inputRoot(runDir string, m *runfolder.Manifest, asked string) (string, error) {
	if asked != "" {
		return filepath.Abs(asked)
	}
	if m.Spec.DirFromRun != "" {
		if abs, err := filepath.Abs(filepath.Join(runDir, filepath.FromSlash(m.Spec.DirFromRun))); err == nil {
			if st, err := os.Stat(abs); err == nil && st.IsDir() {
				return abs, nil
			}
		}
	}
	return m.Spec.Dir, nil
}

// checkInputs compares the recorded inputs with the files now on disk and
// counts those missing or changed.
func checkInputs(w io.Writer, m *runfolder.Manifest, specDir string) (int, error) {
	changed := 0
	for _, in := range m.Inputs {
		path := in.Path
		if !filepath.IsAbs(path) {
			path = filepath.Join(specDir, filepath.FromSlash(path))
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

// checkSources counts the differences between the files the spec's
// sources match now and the files the run read.
func checkSources(w io.Writer, s *spec.Spec, m *runfolder.Manifest) int {
	files, err := ingest.ResolveSources(s)
	if err == nil {
		// The manifest lists the data files, then the event files.
		var events []ingest.InputFile
		events, err = ingest.ResolveEvents(s)
		files = append(files, events...)
	}
	switch {
	case err != nil:
		fmt.Fprintf(w, "inputs   %v\n", err)
		return 1
	case len(files) != len(m.Inputs):
		fmt.Fprintf(w, "inputs   the spec's sources now match %d file(s); the run read %d\n", len(files), len(m.Inputs))
		return 1
	}
	changed := 0
	for i := range files {
		if files[i].Path != m.Inputs[i].Path {
			fmt.Fprintf(w, "inputs   the sources now match %s where the run read %s\n", files[i].Path, m.Inputs[i].Path)
			changed++
		}
	}
	return changed
}

// compareTables compares each table the rerun writes with the run's: listed
// in the manifest under its own name, as stored (against the manifest's
// hash), and byte for byte. Each bad file is marked once in bad.
func compareTables(w io.Writer, m, rm *runfolder.Manifest, runDir, rerun string, bad map[string]bool) {
	stored := map[string]runfolder.TableInfo{}
	for _, t := range m.Tables {
		stored[t.Name] = t
	}
	written := map[string]bool{}
	for _, rt := range rm.Tables {
		written[rt.Name] = true
		t, ok := stored[rt.Name]
		if !ok {
			fmt.Fprintf(w, "table    %s: MISSING from the manifest (the rerun writes it)\n", rt.File)
			bad[rt.File] = true
			continue
		}
		if t.File != rt.File {
			fmt.Fprintf(w, "table    %s: the manifest points it at %s (REDIRECTED)\n", rt.File, t.File)
			bad[rt.File] = true
			continue
		}
		a, errA := os.ReadFile(filepath.Join(runDir, t.File))
		b, errB := os.ReadFile(filepath.Join(rerun, rt.File))
		switch {
		case errA != nil:
			fmt.Fprintf(w, "table    %s: MISSING from the run folder\n", t.File)
		case errB != nil:
			fmt.Fprintf(w, "table    %s: the rerun did not write it\n", t.File)
		case runfolder.HashBytes(a) != t.SHA256 && !bytes.Equal(a, b):
			fmt.Fprintf(w, "table    %s: DIFFERS from the rerun and from its manifest hash (altered after the run)\n", t.File)
		case runfolder.HashBytes(a) != t.SHA256:
			fmt.Fprintf(w, "table    %s: does not match its manifest hash\n", t.File)
		case !bytes.Equal(a, b):
			fmt.Fprintf(w, "table    %s: DIFFERS from the rerun (%d vs %d bytes)\n", t.File, len(a), len(b))
		default:
			fmt.Fprintf(w, "table    %s: identical (%d rows, sha256 %s)\n", t.File, t.Rows, runfolder.ShortHash(t.SHA256))
			continue
		}
		bad[t.File] = true
	}
	for _, t := range m.Tables {
		if !written[t.Name] {
			fmt.Fprintf(w, "table    %s: listed in the manifest, but the rerun does not write it\n", t.File)
			bad[t.File] = true
		}
	}
}

// checkReport checks report.html against the hash the manifest records.
func checkReport(w io.Writer, m *runfolder.Manifest, runDir string, bad map[string]bool) {
	if m.Report == nil {
		return
	}
	sum, err := runfolder.HashFile(filepath.Join(runDir, m.Report.File))
	switch {
	case err != nil:
		fmt.Fprintf(w, "report   %s: MISSING\n", m.Report.File)
	case sum != m.Report.SHA256:
		fmt.Fprintf(w, "report   %s: does not match its manifest hash (altered after the run)\n", m.Report.File)
	default:
		fmt.Fprintf(w, "report   %s: as recorded (sha256 %s)\n", m.Report.File, runfolder.ShortHash(sum))
		return
	}
	bad[m.Report.File] = true
}

// extraFiles reports what the folder holds beyond what its manifest lists.
func extraFiles(w io.Writer, m *runfolder.Manifest, runDir string, bad map[string]bool) error {
	known := map[string]bool{runfolder.ManifestFile: true, runfolder.LineageFile: true, runfolder.MarkerFile: true}
	for _, t := range m.Tables {
		known[t.File] = true
	}
	if m.Report != nil {
		known[m.Report.File] = true
	}
	entries, err := os.ReadDir(runDir)
	if err != nil {
		return err
	}
	for _, e := range entries {
		if !known[e.Name()] {
			fmt.Fprintf(w, "extra    %s: in the run folder but not in its manifest\n", e.Name())
			bad[e.Name()] = true
		}
	}
	return nil
}
