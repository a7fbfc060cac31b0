package runfolder

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"golang.org/x/sys/unix"
)

// MarkerFile marks a folder as an almanac run folder. almanac replaces or
// deletes only folders that hold it.
const MarkerFile = ".almanac-run"

const markerText = "This folder is an almanac run folder. almanac replaces it whole on the next run.\n"

const tmpPrefix = ".almanac-tmp-"

// CheckTarget refuses output folders that almanac must not touch: a folder
// that exists and is not an (empty folder or) almanac run folder, and any
// folder that holds one of the run's inputs.
func CheckTarget(target string, inputs []Input) error {
	for _, in := range inputs {
		dir := filepath.Dir(in.Abs)
		if dir == target || strings.HasPrefix(in.Abs, target+string(os.PathSeparator)) {
			return fmt.Errorf("output folder %s holds the input %s; write the run somewhere else (replacing the folder would delete the input)", target, in.Path)
		}
	}
	return checkReplaceable(target)
}

// checkReplaceable refuses a target that exists and is neither an almanac
// run folder nor an empty folder.
func checkReplaceable(target string) error {
	st, err := os.Stat(target)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return err
	}
	if !st.IsDir() {
		return fmt.Errorf("output %s exists and is a file, not an almanac run folder; refusing to replace it", target)
	}
	if _, err := os.Stat(filepath.Join(target, MarkerFile)); err == nil {
		return nil
	}
	entries, err := os.ReadDir(target)
	if err != nil {
		return err
	}
	if len(entries) == 0 {
		return nil
	}
	return fmt.Errorf("output folder %s exists and is not an almanac run folder (it has no %s file); refusing to overwrite it — choose another output or remove it yourself", target, MarkerFile)
}

// MakeStaging creates the hidden sibling folder a run writes into, and
// removes staging folders that killed runs into the same target left behind.
func MakeStaging(target string) (string, error) {
	parent := filepath.Dir(target)
	if err := os.MkdirAll(parent, 0o755); err != nil {
		return "", err
	}
	// The caller holds the target's lock (LockTarget), so a staging folder
	// of this target is a dead run's; a sibling's (weekly-eu beside weekly)
	// never matches. A parent that cannot be listed only leaves a dead
	// run's folder behind (disk space); the Mkdir below reports a folder
	// this run cannot use.
	entries, _ := os.ReadDir(parent)
	for _, e := range entries {
		if !isStagingOf(e.Name(), filepath.Base(target)) {
			continue
		}
		s := filepath.Join(parent, e.Name())
		if _, err := os.Stat(filepath.Join(s, StagingMarker)); err == nil {
			// Best effort: a killed run's leftover is hidden and holds no
			// result anyone reads; what cannot be removed now is tried
			// again by the next run, and this run does not depend on it.
			_ = os.RemoveAll(s)
		}
	}
	var b [6]byte
	if _, err := rand.Read(b[:]); err != nil {
		return "", err
	}
	dir := filepath.Join(parent, tmpPrefix+filepath.Base(target)+"-"+hex.EncodeToString(b[:]))
	if err := os.Mkdir(dir, 0o755); err != nil {
		return "", err
	}
	// A staging marker lets a later run recognise and clean this folder.
	if err := os.WriteFile(filepath.Join(dir, StagingMarker), nil, 0o644); err != nil {
		// The write error is what the caller needs; an unmarked empty
		// folder that cannot be removed is only hidden clutter.
		_ = os.RemoveAll(dir)
		return "", err
	}
	return dir, nil
}

// CommitStaging makes the staging folder the run folder in one step. When
// the target exists, the two are exchanged atomically (renameat2
// RENAME_EXCHANGE) and the old run is removed; elsewhere the old run is
// moved aside first. Readers see the old run or the new one, never a mix.
func CommitStaging(staging, target string) error {
	if err := os.Remove(filepath.Join(staging, StagingMarker)); err != nil {
		return err
	}
	if err := os.WriteFile(filepath.Join(staging, MarkerFile), []byte(markerText), 0o644); err != nil {
		return err
	}
	if err := fsyncPath(filepath.Join(staging, MarkerFile)); err != nil {
		return err
	}
	if err := fsyncPath(staging); err != nil {
		return err
	}
	parent := filepath.Dir(target)
	// What is at the target now, not what was there when the run began:
	// a folder someone made there meanwhile is refused, not swapped in and
	// deleted.
	if err := checkReplaceable(target); err != nil {
		return err
	}
	if _, err := os.Stat(target); errors.Is(err, os.ErrNotExist) {
		if err := os.Rename(staging, target); err != nil {
			return err
		}
		return syncParent(parent)
	}
	if err := unix.Renameat2(unix.AT_FDCWD, staging, unix.AT_FDCWD, target, unix.RENAME_EXCHANGE); err == nil {
		// staging now holds the previous run: remove it even when the sync
		// fails, and report both.
		return errors.Join(syncParent(parent), os.RemoveAll(staging))
	}
	// No RENAME_EXCHANGE (an older kernel or another file system): move
	// the previous run aside, move the new one in, and on failure put the
	// previous one back.
	old := staging + ".old"
	if err := os.Rename(target, old); err != nil {
		return err
	}
	if err := os.Rename(staging, target); err != nil {
		if rerr := os.Rename(old, target); rerr != nil {
			return fmt.Errorf("%w; putting the previous run back also failed, it is at %s: %v", err, old, rerr)
		}
		return err
	}
	return errors.Join(syncParent(parent), os.RemoveAll(old))
}

// syncParent fsyncs the folder that holds a committed run, so that the
// rename survives a crash. The new run is already in place when it fails:
// the error says so, and the run is reported failed because its
// durability is not known.
func syncParent(parent string) error {
	if err := fsyncPath(parent); err != nil {
		return fmt.Errorf("the run is in place but %s could not be synced, so it may not survive a crash: %w", parent, err)
	}
	return nil
}
