package series

import (
	"context"
	"fmt"
	"syscall"
	"testing"

	"statemix/lineshape/fit"
)

// BenchmarkMap fits a 256 x 256 x 300-channel cube with 3 references and a
// degree-1 background, common shift within +/-2 eV (41 shifts of 0.1 eV).
func BenchmarkMap(b *testing.B) {
	for _, sz := range []int{64, 256} {
		sm := newSynthMap(sz, sz, 300, 2, 0.01, 1)
		refs := testRefs(3)
		b.Run(fmt.Sprintf("size=%dx%dx300/refs=3", sz, sz), func(b *testing.B) {
			c0 := cpuSeconds()
			for b.Loop() {
				if _, err := Map(context.Background(), sm.cube, refs, MapOptions{Fit: fit.Options{MaxShift: 2}}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(sz*sz)*float64(b.N)/b.Elapsed().Seconds(), "pixels/s")
			b.ReportMetric((cpuSeconds()-c0)/float64(b.N), "cpu-s/op")
		})
	}
}

// BenchmarkProfile fits a 100-step profile of 300-channel spectra with two
// references, a common shift within +/-2 eV and covariance uncertainties.
func BenchmarkProfile(b *testing.B) {
	steps := erfProfile(500, 50, 10, 990, 0.01, 1)
	refs := testRefs(2)
	b.Run(fmt.Sprintf("steps=%d/refs=2/uncertainty=covariance", len(steps)), func(b *testing.B) {
		c0 := cpuSeconds()
		for b.Loop() {
			if _, err := Profile(context.Background(), steps, refs, ProfileOptions{Fit: fit.Options{MaxShift: 2}}); err != nil {
				b.Fatal(err)
			}
		}
		b.ReportMetric(float64(len(steps))*float64(b.N)/b.Elapsed().Seconds(), "steps/s")
		b.ReportMetric((cpuSeconds()-c0)/float64(b.N), "cpu-s/op")
	})
}

// cpuSeconds returns the user and system CPU time of the process so far.
// On a shared machine it says what the work costs when wall time cannot
// (divide by the cores for the wall time on an idle machine).
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	tv := func(t syscall.Timeval) float64 { return float64(t.Sec) + float64(t.Usec)*1e-6 }
	return tv(ru.Utime) + tv(ru.Stime)
}
