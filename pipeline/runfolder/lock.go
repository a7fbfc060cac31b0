package runfolder

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"golang.org/x/sys/unix"
)

// lockPrefix names the lock files beside run folders: .almanac-lock-<name>.
const lockPrefix = ".almanac-lock-"

// ErrLocked says another run holds a lock.
var ErrLocked = errors.New("locked by another run")

// LockTarget takes the advisory lock (flock) of an output target, so two
// runs never write one target at once: a plain run (shardIndex < 0) locks it
// exclusively; a shard of a sharded run shares the target's lock with the
// other shards and locks its own shard exclusively. A second run fails at
// once with a clear message. The returned function releases the locks (and
// removes the lock files it may); the kernel drops them when the process
// ends, even by SIGKILL.
func LockTarget(target string, shardIndex int) (func(), error) {
	parent := filepath.Dir(target)
	if err := os.MkdirAll(parent, 0o755); err != nil {
		return nil, err
	}
	path := filepath.Join(parent, lockPrefix+filepath.Base(target))
	f, err := TakeLock(path, shardIndex >= 0)
	if err != nil {
		return nil, fmt.Errorf("another almanac run is writing %s (it holds %s): %w; wait for it to finish, or write to another --out", target, path, err)
	}
	// An exclusive holder removes its lock file before letting go; TakeLock
	// checks that the file it locked is still the one at the path.
	release := func(f *os.File, path string) {
		os.Remove(path)
		f.Close()
	}
	if shardIndex < 0 {
		return func() { release(f, path) }, nil
	}
	spath := path + "." + shardName(shardIndex)
	g, err := TakeLock(spath, false)
	if err != nil {
		f.Close()
		return nil, fmt.Errorf("another almanac run is writing shard %d of %s (it holds %s): %w; wait for it to finish", shardIndex, target, spath, err)
	}
	return func() {
		release(g, spath)
		// The shared lock's file is removed by the last shard running: the
		// one that can take it exclusively.
		if unix.Flock(int(f.Fd()), unix.LOCK_EX|unix.LOCK_NB) == nil {
			release(f, path)
			return
		}
		f.Close()
	}, nil
}

// TakeLock opens (creating) and flocks path without waiting, shared or
// exclusive. Lock files are removed by their holders, so it tries again
// when the file it locked is no longer the one at the path.
func TakeLock(path string, shared bool) (*os.File, error) {
	mode := unix.LOCK_EX
	if shared {
		mode = unix.LOCK_SH
	}
	for attempt := 0; ; attempt++ {
		f, err := os.OpenFile(path, os.O_CREATE|os.O_RDWR, 0o644)
		if err != nil {
			return nil, err
		}
		if err := unix.Flock(int(f.Fd()), mode|unix.LOCK_NB); err != nil {
			f.Close()
			if errors.Is(err, unix.EWOULDBLOCK) {
				return nil, ErrLocked
			}
			return nil, err
		}
		var a, b unix.Stat_t
		if unix.Fstat(int(f.Fd()), &a) == nil && unix.Stat(path, &b) == nil && a.Ino == b.Ino && a.Dev == b.Dev {
			return f, nil
		}
		f.Close()
		if attempt == 10 {
			return nil, ErrLocked
		}
	}
}

// isStagingOf reports whether name is a staging folder of the target named
// base: exactly .almanac-tmp-<base>-<12 hex digits>, so that the staging of
// "weekly-eu" is never taken for one of "weekly".
func isStagingOf(name, base string) bool {
	rest, ok := strings.CutPrefix(name, tmpPrefix+base+"-")
	if !ok || len(rest) != 12 {
		return false
	}
	for _, c := range rest {
		if !strings.ContainsRune("0123456789abcdef", c) {
			return false
		}
	}
	return true
}
