package lineshape

import "fmt"

func ExampleSpectrum_Normalize() {
	s, _ := NewUniform(100, 0.5, []float64{0, 2, -6, 4, 0}, Derivative)
	n, scale, _ := s.Normalize(NormPeakToPeak)
	fmt.Printf("scale %.1f, values %.1f\n", scale, n.Y)
	// Output:
	// scale 10.0, values [0.0 0.2 -0.6 0.4 0.0]
}

func ExampleParseNormalization() {
	n, err := ParseNormalization("peak-to-peak")
	fmt.Println(n, err)
	_, err = ParseNormalization("max")
	fmt.Println(err)
	// Output:
	// peak-to-peak <nil>
	// unknown normalisation "max" (want none, peak-to-peak, area or l2)
}

func ExampleSpectrum_Integrate() {
	// The derivative of a triangle is a step up then a step down; its
	// integral recovers the triangle, zero at both ends.
	s, _ := NewUniform(0, 1, []float64{1, 1, 1, -1, -1, -1}, Derivative)
	n, _ := s.Integrate()
	fmt.Printf("%v %.1f\n", n.Mode, n.Y)
	// Output:
	// direct [0.0 1.0 2.0 2.0 1.0 0.0]
}
