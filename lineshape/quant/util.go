package quant

import "gonum.org/v1/gonum/floats/scalar"

// approxEqual compares a and b within an absolute or relative tolerance.
func approxEqual(a, b, tol float64) bool {
	return scalar.EqualWithinAbsOrRel(a, b, tol, tol)
}
