//go:build unix

package nightly

import (
	"os"
	"syscall"
)

// openInput opens an inbox file for reading without following a symbolic
// link in its last component and without blocking on a FIFO that replaced it.
func openInput(p string) (*os.File, error) {
	return os.OpenFile(p, os.O_RDONLY|syscall.O_NOFOLLOW|syscall.O_NONBLOCK, 0)
}
