package nightly

import (
	"fmt"
	"strconv"
	"strings"
)

// ParseShard reads "K/N" (1-based K, 1 ≤ K ≤ N).
func ParseShard(s string) (k, n int, err error) {
	bad := fmt.Errorf("nightly: --shard %q: want K/N with 1 ≤ K ≤ N, for example 2/8", s)
	a, b, ok := strings.Cut(strings.TrimSpace(s), "/")
	if !ok {
		return 0, 0, bad
	}
	k, err1 := strconv.Atoi(strings.TrimSpace(a))
	n, err2 := strconv.Atoi(strings.TrimSpace(b))
	if err1 != nil || err2 != nil || n < 1 || k < 1 || k > n {
		return 0, 0, bad
	}
	return k, n, nil
}

// ShardOf returns the shard (1..n) of a content hash: 1 + (the first 64 bits
// of the SHA-256, big-endian) mod n. It depends on the content only, so every
// machine computes the same partition.
func ShardOf(sha256hex string, n int) int {
	if n <= 1 {
		return 1
	}
	if len(sha256hex) < 16 {
		return 1
	}
	v, err := strconv.ParseUint(sha256hex[:16], 16, 64)
	if err != nil {
		return 1
	}
	return 1 + int(v%uint64(n))
}
