//go:build linux

package nightly_test

import (
	"bytes"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"unsafe"

	"bandwright/pipelines/nightly"
)

// openPTY opens a pseudo-terminal pair (Linux /dev/ptmx).
func openPTY(t *testing.T) (master, slave *os.File) {
	m, err := os.OpenFile("/dev/ptmx", os.O_RDWR, 0)
	if err != nil {
		t.Skipf("no pseudo-terminal: %v", err)
	}
	var unlock int32
	if _, _, e := syscall.Syscall(syscall.SYS_IOCTL, m.Fd(), syscall.TIOCSPTLCK, uintptr(unsafe.Pointer(&unlock))); e != 0 {
		m.Close()
		t.Skipf("unlockpt: %v", e)
	}
	var n uint32
	if _, _, e := syscall.Syscall(syscall.SYS_IOCTL, m.Fd(), syscall.TIOCGPTN, uintptr(unsafe.Pointer(&n))); e != 0 {
		m.Close()
		t.Skipf("ptsname: %v", e)
	}
	s, err := os.OpenFile("/dev/pts/"+strconv.Itoa(int(n)), os.O_RDWR|syscall.O_NOCTTY, 0)
	if err != nil {
		m.Close()
		t.Skipf("open slave: %v", err)
	}
	return m, s
}

// TestProgressBarOnTerminal: on a terminal the run draws a bar (carriage
// returns, percentages) and prints failures above it instead of a line per
// file.
func TestProgressBarOnTerminal(t *testing.T) {
	master, slave := openPTY(t)
	defer master.Close()
	if !nightly.IsTerminal(slave) {
		t.Fatal("the pseudo-terminal is not seen as a terminal")
	}
	var out bytes.Buffer
	done := make(chan struct{})
	go func() {
		io.Copy(&out, master)
		close(done)
	}()
	e := newEnv(t)
	fill(t, e.inbox, 3, 20)
	write(t, filepath.Join(e.inbox, "bad.csv"), badLineList())
	o := e.opts(fitJob)
	o.Progress = slave
	run(t, o)
	slave.Close()
	<-done
	s := out.String()
	if !strings.Contains(s, "\r") || !strings.Contains(s, "100%") || !strings.Contains(s, "FAILED  bad.csv") {
		t.Errorf("terminal output:\n%q", s)
	}
	if strings.Contains(s, "ok      a0.csv") {
		t.Errorf("per-file log lines on a terminal:\n%q", s)
	}
}
