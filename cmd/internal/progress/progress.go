// Package progress draws a progress bar on a terminal for long runs,
// redrawing at most ten times a second.
package progress

import (
	"io"
	"os"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"
)

// redraw is the least time between two updates of the progress bar: at
// most 10 redraws a second.
const redraw = 100 * time.Millisecond

// Bar shows progress on w when it is a terminal, the run takes longer
// than a second and the mode is not never (always shows it whatever w
// is).
type Bar struct {
	w     io.Writer
	total int
	label string
	mode  string
	start time.Time
	last  time.Time
	bar   *progressbar.ProgressBar
}

// New returns a bar for total items with mode auto, always or never.
func New(w io.Writer, total int, label, mode string) *Bar {
	return &Bar{w: w, total: total, label: label, mode: mode, start: time.Now()}
}

func (b *Bar) enabled() bool {
	switch b.mode {
	case "never":
		return false
	case "always":
		return true
	}
	f, ok := b.w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd())) && time.Since(b.start) > time.Second
}

// Add is called with the number of items done (from any goroutine, one at
// a time); it redraws at most every redraw.
func (b *Bar) Add(done int) {
	now := time.Now()
	if now.Sub(b.last) < redraw && done < b.total {
		return
	}
	b.last = now
	if b.bar == nil {
		if !b.enabled() {
			return
		}
		b.bar = progressbar.NewOptions(b.total, progressbar.OptionSetWriter(b.w),
			progressbar.OptionSetDescription(b.label), progressbar.OptionShowCount(),
			progressbar.OptionSetPredictTime(true), progressbar.OptionClearOnFinish(),
			progressbar.OptionThrottle(redraw))
	}
	b.bar.Set(done)
}

// Finish clears the bar.
func (b *Bar) Finish() {
	if b.bar != nil {
		b.bar.Finish()
	}
}
