package series_test

import (
	"fmt"
	"math"

	"statemix/lineshape/series"
)

// Crossings finds where a state's fraction passes 50 % and the 16-84 %
// width around it. An oxide fraction falling as an erf centred at 120 s
// with a standard deviation of 20 s has its interface at 120 s and a
// 16-84 % width of 2 x 20 = 40 s; steps of 10 s and linear interpolation
// come close.
func ExampleCrossings() {
	var t, f []float64
	for i := 0; i <= 30; i++ {
		ts := 10 * float64(i)
		t = append(t, ts)
		f = append(f, 0.5*math.Erfc((ts-120)/(20*math.Sqrt2)))
	}
	for _, x := range series.Crossings(t, f) {
		fmt.Printf("rising %v, position %.1f s, width %.1f s\n", x.Rising, x.PositionS, x.WidthS)
	}
	// Output:
	// rising false, position 120.0 s, width 39.8 s
}
