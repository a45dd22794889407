package nightly

import (
	"fmt"
	"os"
	"runtime/debug"
	"runtime/metrics"
	"time"
)

// LimitMemory bounds the memory of this process, for a worker process (see
// Isolation): the Go heap is collected harder as it nears limit bytes
// (debug.SetMemoryLimit), a watchdog ends the process with "fatal error: out
// of memory" once the memory the Go runtime holds passes limit (checked every
// 20 ms), and where the system allows (Linux) the address space is capped at
// limit plus 4 GiB (the runtime reserves about 1.5 GiB of address space it
// does not use), so that one huge allocation fails at once. A job that needs
// more than limit therefore ends its worker instead of swapping the machine or
// waking the kernel's OOM killer. limit ≤ 0 leaves the memory unbounded.
func LimitMemory(limit int64) error {
	if limit <= 0 {
		return nil
	}
	debug.SetMemoryLimit(limit)
	go watchMemory(uint64(limit))
	return capAddressSpace(uint64(limit) + 4<<30)
}

// watchMemory ends the process when the memory mapped by the Go runtime
// (/memory/classes/total:bytes less what it has released to the system)
// passes limit.
func watchMemory(limit uint64) {
	s := []metrics.Sample{{Name: "/memory/classes/total:bytes"}, {Name: "/memory/classes/heap/released:bytes"}}
	for range time.Tick(20 * time.Millisecond) {
		metrics.Read(s)
		if used := s[0].Value.Uint64() - s[1].Value.Uint64(); used > limit {
			fmt.Fprintf(os.Stderr, "fatal error: out of memory: the job needed more than %d MiB, the memory limit of a worker process\n", limit>>20)
			os.Exit(2)
		}
	}
}
