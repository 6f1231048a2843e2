package main

import (
	"os"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"
)

// progress is a progress bar on stderr for long work (profiles, maps,
// bootstrap). A nil *progress is valid and does nothing, so callers need
// no checks.
type progress struct {
	mu  sync.Mutex
	bar *progressbar.ProgressBar
}

// newProgress returns a bar of total steps described by desc when stderr
// is a terminal and neither --quiet nor --no-progress is given, else nil.
func newProgress(app *App, total int, desc string) *progress {
	if app.NoProgress || app.Quiet || total <= 0 {
		return nil
	}
	f, ok := app.Err.(*os.File)
	if !ok || !term.IsTerminal(int(f.Fd())) {
		return nil
	}
	return &progress{bar: progressbar.NewOptions(total,
		progressbar.OptionSetWriter(app.Err),
		progressbar.OptionSetDescription(desc),
		progressbar.OptionShowCount(),
		progressbar.OptionClearOnFinish(),
		progressbar.OptionThrottle(100*time.Millisecond))}
}

// Set shows done steps of the total; it is safe for concurrent use.
func (p *progress) Set(done, total int) {
	if p == nil {
		return
	}
	p.mu.Lock()
	_ = p.bar.Set(done)
	p.mu.Unlock()
}

// Finish clears the bar.
func (p *progress) Finish() {
	if p == nil {
		return
	}
	p.mu.Lock()
	_ = p.bar.Finish()
	p.mu.Unlock()
}

// Func returns p.Set as a callback, or nil for a nil p (so that no
// callback is installed at all).
func (p *progress) Func() func(done, total int) {
	if p == nil {
		return nil
	}
	return p.Set
}
