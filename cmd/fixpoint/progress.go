package main

import (
	"os"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"
)

// redraw is the least time between two updates of the progress bar: at
// most 10 redraws a second.
const redraw = 100 * time.Millisecond

// progressBar shows progress on stderr when it is a terminal, the run
// takes longer than a second and the mode is not never (always shows it
// whatever the terminal).
type progressBar struct {
	a     *app
	total int
	label string
	mode  string
	start time.Time
	last  time.Time
	bar   *progressbar.ProgressBar
}

func (a *app) progress(total int, label, mode string) *progressBar {
	return &progressBar{a: a, total: total, label: label, mode: mode, start: time.Now()}
}

func (b *progressBar) enabled() bool {
	switch b.mode {
	case "never":
		return false
	case "always":
		return true
	}
	f, ok := b.a.stderr.(*os.File)
	return ok && term.IsTerminal(int(f.Fd())) && time.Since(b.start) > time.Second
}

// add is called with the number of items done (from any goroutine, one at
// a time); it redraws at most every redraw.
func (b *progressBar) add(done int) {
	now := time.Now()
	if now.Sub(b.last) < redraw && done < b.total {
		return
	}
	b.last = now
	if b.bar == nil {
		if !b.enabled() {
			return
		}
		b.bar = progressbar.NewOptions(b.total, progressbar.OptionSetWriter(b.a.stderr),
			progressbar.OptionSetDescription(b.label), progressbar.OptionShowCount(),
			progressbar.OptionSetPredictTime(true), progressbar.OptionClearOnFinish(),
			progressbar.OptionThrottle(redraw))
	}
	b.bar.Set(done)
}

func (b *progressBar) finish() {
	if b.bar != nil {
		b.bar.Finish()
	}
}
