package series

import (
	"context"
	"fmt"
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
			for b.Loop() {
				if _, err := Map(context.Background(), sm.cube, refs, MapOptions{Fit: fit.Options{MaxShift: 2}}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(sz*sz)*float64(b.N)/b.Elapsed().Seconds(), "pixels/s")
		})
	}
}
