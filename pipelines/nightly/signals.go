package nightly

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
	"sync"
	"syscall"
)

// NotifyContext returns a context that is cancelled by the first SIGINT or
// SIGTERM, for Run: the run then starts no new file and finishes those in
// progress. A message saying so is written to log (if not nil). After the
// first signal the default handling is restored, so a second signal ends the
// process at once; that is safe, since the next run cleans up after it. Call
// stop to release the signal handler.
func NotifyContext(parent context.Context, log io.Writer) (ctx context.Context, stop context.CancelFunc) {
	ctx, cancel := context.WithCancel(parent)
	ch := make(chan os.Signal, 1)
	signal.Notify(ch, os.Interrupt, syscall.SIGTERM)
	done := make(chan struct{})
	go func() {
		select {
		case s := <-ch:
			signal.Stop(ch)
			if log != nil {
				fmt.Fprintf(log, "nightly: %v received: finishing the files in progress, starting no new one (send the signal again to stop at once)\n", s)
			}
			cancel()
		case <-done:
		}
	}()
	var once sync.Once
	return ctx, func() {
		once.Do(func() {
			signal.Stop(ch)
			close(done)
			cancel()
		})
	}
}
