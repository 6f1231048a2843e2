package delimited

import (
	"bytes"
	"fmt"
	"math"
	"testing"
)

// BenchmarkRead reads tab-separated two-column files of real size (the
// measured spectrum in ../shared/realdata has 1151 rows).
func BenchmarkRead(b *testing.B) {
	for _, rows := range []int{1151, 20000} {
		var buf bytes.Buffer
		for i := range rows {
			e := 97.76098 + 0.3384*float64(i)
			fmt.Fprintf(&buf, "%.5f\t%.5f\n", e, 0.02*math.Sin(e/7))
		}
		data := buf.Bytes()
		b.Run(fmt.Sprintf("rows=%d", rows), func(b *testing.B) {
			b.SetBytes(int64(len(data)))
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Read(bytes.NewReader(data), "bench", Options{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
