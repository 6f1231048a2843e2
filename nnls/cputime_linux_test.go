package nnls

import (
	"runtime"
	"syscall"
	"testing"
)

// threadCPU returns the CPU time of the calling OS thread
// (getrusage(RUSAGE_THREAD)), so that benchmarks can report CPU time per
// operation next to wall time on a loaded machine.
func threadCPU() int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(1, &ru); err != nil { // 1 = RUSAGE_THREAD
		return 0
	}
	return ru.Utime.Nano() + ru.Stime.Nano()
}

// cpuTimer reports cpu-ns/op for the b.Loop that follows start.
type cpuTimer struct {
	b  *testing.B
	t0 int64
}

func startCPU(b *testing.B) *cpuTimer {
	runtime.LockOSThread()
	return &cpuTimer{b: b, t0: threadCPU()}
}

func (c *cpuTimer) stop() {
	d := threadCPU() - c.t0
	runtime.UnlockOSThread()
	if c.b.N > 0 && d > 0 {
		c.b.ReportMetric(float64(d)/float64(c.b.N), "cpu-ns/op")
	}
}
