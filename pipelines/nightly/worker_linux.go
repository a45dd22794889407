package nightly

import (
	"os/exec"
	"syscall"
)

// dieWithParent makes the worker process end (SIGKILL) when the thread that
// started it ends, which Go's threads do only with the process.
func dieWithParent(cmd *exec.Cmd) {
	cmd.SysProcAttr = &syscall.SysProcAttr{Pdeathsig: syscall.SIGKILL}
}

// capAddressSpace sets the address-space limit (RLIMIT_AS) of this process.
func capAddressSpace(n uint64) error {
	return syscall.Setrlimit(syscall.RLIMIT_AS, &syscall.Rlimit{Cur: n, Max: n})
}
