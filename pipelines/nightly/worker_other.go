//go:build !linux

package nightly

import "os/exec"

// dieWithParent does nothing here: a worker process ends when its job ends
// and it finds its input closed.
func dieWithParent(cmd *exec.Cmd) {}

// capAddressSpace does nothing here: the watchdog of LimitMemory bounds the
// memory.
func capAddressSpace(n uint64) error { return nil }
