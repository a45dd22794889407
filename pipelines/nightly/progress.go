package nightly

import (
	"fmt"
	"io"
	"os"
	"sync"
	"time"

	"github.com/mattn/go-isatty"
	"github.com/schollz/progressbar/v3"
)

// progress shows the run: a bar on a terminal, log lines otherwise.
type progress interface {
	start(total int, line string)
	done(fo FileOutcome, n, total int)
	note(line string)
	finish(rep *Report)
}

// IsTerminal reports whether w is a terminal (then Run draws a progress bar).
func IsTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	return isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd())
}

func newProgress(w io.Writer) progress {
	if IsTerminal(w) {
		return &barProgress{w: w}
	}
	return &logProgress{w: w}
}

func outcomeLine(fo FileOutcome) string {
	switch fo.Status {
	case StatusOK:
		d := fo.Finished.Sub(fo.Started).Round(10 * time.Millisecond)
		return fmt.Sprintf("ok      %s -> %s (%v)", shown(fo.Input), shown(fo.Output), d)
	case StatusFailed:
		return fmt.Sprintf("FAILED  %s: %s", shown(fo.Input), fo.Message)
	default:
		return fmt.Sprintf("skipped %s: %s", shown(fo.Input), fo.Message)
	}
}

func finalLine(rep *Report) string {
	s := fmt.Sprintf("nightly: %d processed: %d ok, %d failed, %d skipped", rep.Processed, rep.Succeeded, rep.Failed, rep.Skipped)
	if rep.Recovered > 0 {
		s += fmt.Sprintf("; %d recovered from an interrupted run", rep.Recovered)
	}
	if rep.Interrupted {
		s += fmt.Sprintf("; stopped before %d files (they will be done next run)", rep.Pending)
	}
	if rep.Summary != "" {
		s += "; summary " + rep.Summary
	}
	return s
}

// logProgress writes one line per event (for logs, cron mail, Slurm output).
type logProgress struct {
	mu sync.Mutex
	w  io.Writer
}

func (p *logProgress) start(total int, line string) { p.note(line) }

func (p *logProgress) done(fo FileOutcome, n, total int) {
	p.note(fmt.Sprintf("nightly: [%d/%d] %s", n, total, outcomeLine(fo)))
}

func (p *logProgress) note(line string) {
	p.mu.Lock()
	defer p.mu.Unlock()
	fmt.Fprintln(p.w, line)
}

func (p *logProgress) finish(rep *Report) { p.note(finalLine(rep)) }

// barProgress draws a bar; failures, skips and notes are printed above it.
type barProgress struct {
	mu  sync.Mutex
	w   io.Writer
	bar *progressbar.ProgressBar
}

func (p *barProgress) start(total int, line string) {
	p.mu.Lock()
	defer p.mu.Unlock()
	fmt.Fprintln(p.w, line)
	if total == 0 {
		return
	}
	p.bar = progressbar.NewOptions(total,
		progressbar.OptionSetWriter(p.w),
		progressbar.OptionSetDescription("nightly"),
		progressbar.OptionShowCount(),
		progressbar.OptionSetPredictTime(true),
		progressbar.OptionSetElapsedTime(true),
		progressbar.OptionSetWidth(30),
		progressbar.OptionThrottle(100*time.Millisecond),
		progressbar.OptionOnCompletion(func() { fmt.Fprintln(p.w) }),
	)
	p.bar.RenderBlank()
}

func (p *barProgress) done(fo FileOutcome, n, total int) {
	if fo.Status != StatusOK {
		p.note("nightly: " + outcomeLine(fo))
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar != nil {
		p.bar.Add(1)
	}
}

func (p *barProgress) note(line string) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar != nil && !p.bar.IsFinished() {
		progressbar.Bprintln(p.bar, line)
		return
	}
	fmt.Fprintln(p.w, line)
}

func (p *barProgress) finish(rep *Report) {
	p.mu.Lock()
	if p.bar != nil && !p.bar.IsFinished() {
		p.bar.Exit()
		fmt.Fprintln(p.w)
	}
	p.mu.Unlock()
	p.note(finalLine(rep))
}
