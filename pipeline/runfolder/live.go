package runfolder

import (
	"os"
	"sync"
)

// The folders a run is writing (staging, spill), so that a process told to
// exit at once (a second SIGINT or SIGTERM) can remove them on its way out.
var (
	liveMu sync.Mutex
	live   = map[string]bool{}
)

// TrackLive records a folder the run is writing; the returned function
// forgets it (once it is committed or removed).
func TrackLive(dir string) func() {
	liveMu.Lock()
	live[dir] = true
	liveMu.Unlock()
	return func() {
		liveMu.Lock()
		delete(live, dir)
		liveMu.Unlock()
	}
}

// RemoveLive removes every folder still tracked. Only for a process about
// to exit: the run writing them is abandoned.
func RemoveLive() {
	liveMu.Lock()
	defer liveMu.Unlock()
	for d := range live {
		os.RemoveAll(d)
	}
}
