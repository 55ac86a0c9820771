package ui

import (
	"fmt"
	"io"
	"os"
	"sync"
	"time"

	"golang.org/x/term"

	"github.com/sweep-cfd/sweep/internal/runner"
)

// RunProgress prints a run's progress: on a terminal one line rewritten in
// place; otherwise a line every few seconds. Events are printed on their
// own lines in both cases.
type RunProgress struct {
	mu       sync.Mutex
	w        io.Writer
	tty      bool
	quiet    bool
	last     time.Time
	lastLine string
	pending  bool // a rewritten line is on screen
}

// NewRunProgress prints to w; quiet prints events only.
func NewRunProgress(w io.Writer, quiet bool) *RunProgress {
	tty := false
	if f, ok := w.(*os.File); ok {
		tty = term.IsTerminal(int(f.Fd()))
	}
	return &RunProgress{w: w, tty: tty, quiet: quiet}
}

// Update implements runner.Progress.
func (p *RunProgress) Update(s runner.Snapshot) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.quiet {
		return
	}
	line := fmt.Sprintf("%d/%d done, %d running, %d failed, %d pending, %s elapsed%s",
		s.Done, s.Total, s.Running, s.Failed, s.Pending, Duration(s.Elapsed), left(s))
	if p.tty {
		fmt.Fprintf(p.w, "\r\033[K%s", line)
		p.pending = true
		return
	}
	finished := s.Running == 0 && s.Pending == 0
	if line != p.lastLine && (time.Since(p.last) >= 5*time.Second || finished) {
		fmt.Fprintln(p.w, line)
		p.last, p.lastLine = time.Now(), line
	}
}

// Event implements runner.Progress.
func (p *RunProgress) Event(msg string) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.pending {
		fmt.Fprint(p.w, "\r\033[K")
	}
	fmt.Fprintln(p.w, msg)
}

// Finish ends the rewritten line.
func (p *RunProgress) Finish() {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.pending {
		fmt.Fprintln(p.w)
		p.pending = false
	}
}

func left(s runner.Snapshot) string {
	if s.Left <= 0 || (s.Pending == 0 && s.Running == 0) {
		return ""
	}
	return ", about " + Duration(s.Left) + " left"
}

// Duration formats a duration for people: 42s, 3m05s, 2h10m.
func Duration(d time.Duration) string {
	d = d.Round(time.Second)
	switch {
	case d < time.Minute:
		return fmt.Sprintf("%ds", int(d.Seconds()))
	case d < time.Hour:
		return fmt.Sprintf("%dm%02ds", int(d.Minutes()), int(d.Seconds())%60)
	default:
		return fmt.Sprintf("%dh%02dm", int(d.Hours()), int(d.Minutes())%60)
	}
}
