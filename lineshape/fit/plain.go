package fit

import (
	"math"
	"strconv"
)

// plain formats v rounded to sig significant digits in plain decimal
// notation, never with an exponent: 1e6 is "1000000", 2.40 is "2.4" and
// 1.5e-7 is "0.00000015". Messages use it for numbers a user typed or
// will read, where "1e+06" would be a puzzle.
func plain(v float64, sig int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', sig, 64), 64)
	return strconv.FormatFloat(r, 'f', -1, 64)
}
