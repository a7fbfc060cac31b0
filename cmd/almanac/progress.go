package main

import (
	"fmt"
	"io"
	"os"
	"time"

	"github.com/schollz/progressbar/v3"
)

// barProgress draws a progress bar on a terminal.
type barProgress struct {
	out *os.File
	bar *progressbar.ProgressBar
}

func (b *barProgress) Start(total int) {
	b.bar = progressbar.NewOptions(total,
		progressbar.OptionSetWriter(b.out),
		progressbar.OptionSetDescription("series"),
		progressbar.OptionShowCount(),
		progressbar.OptionShowIts(),
		progressbar.OptionSetItsString("series"),
		progressbar.OptionSetPredictTime(true),
		progressbar.OptionThrottle(100*time.Millisecond),
		progressbar.OptionClearOnFinish(),
	)
}

func (b *barProgress) Add(n int) { b.bar.Add(n) }

func (b *barProgress) Finish() { b.bar.Finish() }

// lineProgress writes a plain line at each tenth of the work, for logs.
type lineProgress struct {
	pass       int
	out        io.Writer
	total      int
	done, next int
	start      time.Time
}

func (l *lineProgress) Start(total int) {
	l.total, l.done, l.start = total, 0, time.Now()
	l.next = max(1, total/10)
	l.pass++
}

func (l *lineProgress) Add(n int) {
	l.done += n
	if l.done >= l.next || l.done == l.total {
		el := time.Since(l.start).Seconds()
		rate := float64(l.done) / max(el, 1e-9)
		eta := float64(l.total-l.done) / max(rate, 1e-9)
		fmt.Fprintf(l.out, "pass %d: series %d/%d (%.0f%%), %.0f series/s, eta %.0fs\n", l.pass, l.done, l.total, 100*float64(l.done)/float64(max(l.total, 1)), rate, eta)
		l.next += max(1, l.total/10)
	}
}

func (l *lineProgress) Finish() {}
