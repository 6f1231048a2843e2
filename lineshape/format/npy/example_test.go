package npy_test

import (
	"fmt"
	"os"
	"path/filepath"

	"statemix/lineshape/format/npy"
)

// A 2x3 spectrum image of 4 channels, written and read back one pixel row
// at a time.
func ExampleReader_ReadRows() {
	dir, _ := os.MkdirTemp("", "npy-example")
	defer os.RemoveAll(dir)
	cube := filepath.Join(dir, "image.npy")
	data := make([]float64, 2*3*4)
	for i := range data {
		data[i] = float64(i) / 4
	}
	if err := npy.WriteFile(cube, []int{2, 3, 4}, data, "<f4"); err != nil {
		fmt.Println(err)
		return
	}
	npy.WriteSidecar(cube, npy.Sidecar{StartEV: 350, StepEV: 0.5, Mode: "derivative", PixelUM: 2})

	r, sc, err := npy.OpenCube(cube)
	if err != nil {
		fmt.Println(err)
		return
	}
	defer r.Close()
	fmt.Println("shape", r.Shape(), r.DType(), "channels", r.Channels(), "pixels", r.Pixels())
	axis := sc.Axis(r.Channels())
	fmt.Printf("axis %.1f..%.1f eV, %s\n", axis.Lo(), axis.Hi(), sc.Mode)
	row := make([]float64, 3*r.Channels())
	r.ReadRows(row, 3, 3) // the second pixel row: pixels 3, 4, 5
	fmt.Println(row[:4], "...")
	// Output:
	// shape [2 3 4] <f4 channels 4 pixels 6
	// axis 350.0..351.5 eV, derivative
	// [3 3.25 3.5 3.75] ...
}
