package ui

import (
	"fmt"
	"io"
	"os"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"

	"github.com/sweep-cfd/sweep/internal/runner"
)

// RunProgress prints a run's progress: on a terminal one line rewritten in
// place; otherwise a line every few seconds. Events are printed on their
// own lines in both cases.
type RunProgress struct {
	bar      *progressbar.ProgressBar // on a terminal
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
		if p.bar == nil {
			p.bar = progressbar.NewOptions(s.Total, progressbar.OptionSetWriter(p.w), progressbar.OptionSetWidth(24),
				progressbar.OptionShowCount(), progressbar.OptionSetPredictTime(false), progressbar.OptionClearOnFinish(),
				progressbar.OptionThrottle(100*time.Millisecond))
		}
		p.bar.Describe(fmt.Sprintf("%d running, %d failed, %s elapsed%s", s.Running, s.Failed, Duration(s.Elapsed), left(s)))
		p.bar.Set(s.Done + s.Failed)
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
	if p.bar != nil {
		p.bar.Clear()
	}
	fmt.Fprintln(p.w, msg)
}

// Detach sends all further output to w as plain lines: the run's
// terminal has gone (SIGHUP) and its output now goes to a log file.
func (p *RunProgress) Detach(w io.Writer) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.w, p.tty, p.bar, p.pending = w, false, nil, false
}

// Finish ends the rewritten line.
func (p *RunProgress) Finish() {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar != nil {
		p.bar.Finish()
		p.bar = nil
	}
	p.pending = false
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

// Counter shows the progress of counted work (rendering variants,
// harvesting them) as a bar on a terminal, and nothing elsewhere.
type Counter struct {
	bar *progressbar.ProgressBar
	w   io.Writer
	tty bool
	mu  sync.Mutex
}

// NewCounter prints to w, labelled with what.
func NewCounter(w io.Writer, what string) *Counter {
	c := &Counter{w: w}
	if f, ok := w.(*os.File); ok {
		c.tty = term.IsTerminal(int(f.Fd()))
	}
	return c
}

// Step reports that done of total items are finished.
func (c *Counter) Step(done, total int) {
	if !c.tty || total < 20 {
		return
	}
	c.mu.Lock()
	defer c.mu.Unlock()
	if c.bar == nil {
		c.bar = progressbar.NewOptions(total, progressbar.OptionSetWriter(c.w), progressbar.OptionSetWidth(24),
			progressbar.OptionShowCount(), progressbar.OptionClearOnFinish(), progressbar.OptionThrottle(100*time.Millisecond))
	}
	c.bar.Set(done)
	if done == total {
		c.bar.Finish()
	}
}

// Rendered implements plan.Progress.
func (c *Counter) Rendered(done, total int) { c.Step(done, total) }
