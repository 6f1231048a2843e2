package lineshape

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/floats"
)

// Normalization selects how Normalize scales a spectrum.
type Normalization int

const (
	NormNone       Normalization = iota // leave values as recorded
	NormPeakToPeak                      // divide by max - min
	NormArea                            // divide by the integral of |y| dE
	NormL2                              // divide by the Euclidean norm of the values
)

// normNames are the names ParseNormalization accepts, by value.
var normNames = [...]string{NormNone: "none", NormPeakToPeak: "peak-to-peak", NormArea: "area", NormL2: "l2"}

// ParseNormalization parses "none", "peak-to-peak", "area" or "l2".
// Case is ignored; "" means none, and "p2p" and "peak" are accepted for
// peak-to-peak.
func ParseNormalization(s string) (Normalization, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "none", "":
		return NormNone, nil
	case "peak-to-peak", "p2p", "peak":
		return NormPeakToPeak, nil
	case "area":
		return NormArea, nil
	case "l2":
		return NormL2, nil
	}
	return 0, fmt.Errorf("unknown normalisation %q (want none, peak-to-peak, area or l2)", s)
}

// String returns the name ParseNormalization accepts.
func (n Normalization) String() string {
	if n >= 0 && int(n) < len(normNames) {
		return normNames[n]
	}
	return fmt.Sprintf("Normalization(%d)", int(n))
}

// MarshalText implements encoding.TextMarshaler with the String name.
func (n Normalization) MarshalText() ([]byte, error) {
	if n < 0 || int(n) >= len(normNames) {
		return nil, fmt.Errorf("unknown normalisation %d", int(n))
	}
	return []byte(n.String()), nil
}

// UnmarshalText implements encoding.TextUnmarshaler with ParseNormalization.
func (n *Normalization) UnmarshalText(b []byte) error {
	v, err := ParseNormalization(string(b))
	if err != nil {
		return err
	}
	*n = v
	return nil
}

// Scale returns the scale Normalize divides s by under n: 1 for NormNone,
// max - min of the values for NormPeakToPeak, the trapezoidal integral of
// |y| over energy (value times eV) for NormArea, and sqrt(sum y^2) for
// NormL2. It panics on an unknown Normalization.
func (s *Spectrum) Scale(n Normalization) float64 {
	switch n {
	case NormNone:
		return 1
	case NormPeakToPeak:
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, v := range s.Y {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		return hi - lo
	case NormArea:
		var a float64
		for i := 1; i < len(s.Y); i++ {
			a += (s.Energy(i) - s.Energy(i-1)) * (math.Abs(s.Y[i-1]) + math.Abs(s.Y[i])) / 2
		}
		return a
	case NormL2:
		return floats.Norm(s.Y, 2)
	}
	panic(fmt.Sprintf("lineshape: unknown Normalization %d", int(n)))
}

// Normalize returns s divided by the scale n defines, and that scale. A
// spectrum whose scale is zero is an error.
//
// The scale is Spectrum.Scale. Note what it does to a fit: fractions of
// normalised references are shares of normalised signal, not of the signal
// of pure standards at their recorded intensity.
func (s *Spectrum) Normalize(n Normalization) (*Spectrum, float64, error) {
	if n < 0 || int(n) >= len(normNames) {
		return nil, 0, fmt.Errorf("unknown normalisation %d", int(n))
	}
	scale := s.Scale(n)
	if !(scale > 0) || math.IsInf(scale, 0) {
		return nil, 0, fmt.Errorf("cannot normalise (%v): scale is %g", n, scale)
	}
	y := make([]float64, len(s.Y))
	for i, v := range s.Y {
		y[i] = v / scale
	}
	ax := s.Axis
	if ax.Values != nil {
		ax.Values = append([]float64(nil), ax.Values...)
	}
	return s.withValues(ax, y), scale, nil
}
