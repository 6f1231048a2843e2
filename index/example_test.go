package index_test

import (
	"fmt"
	"math"
	"os"
	"path/filepath"

	"statemix/index"
	"statemix/library"
	"statemix/lineshape"
)

// gaussianDerivative is the derivative of a Gaussian at e0 eV with sigma
// 2.5 eV on 340..460 eV: invented data for the example.
func gaussianDerivative(e0, dE float64) *lineshape.Spectrum {
	y := make([]float64, 241)
	for i := range y {
		u := (340 + 0.5*float64(i) - dE - e0) / 2.5
		y[i] = -u * math.Exp(-u*u/2)
	}
	s, _ := lineshape.NewUniform(340, 0.5, y, lineshape.Derivative)
	return s
}

// This example builds a two-entry library and its index, then runs a field
// query and a similarity search for a spectrum shifted by 2 eV.
func Example() {
	dir, _ := os.MkdirTemp("", "statemix-example-")
	defer os.RemoveAll(dir)
	store, _ := library.Create(filepath.Join(dir, "lib"))
	store.Add(
		&library.Entry{Name: "Ti foil", Element: "Ti", Transition: "LMM", State: "metal", Spectrum: gaussianDerivative(418, 0)},
		&library.Entry{Name: "TiN film", Element: "Ti", Transition: "LMM", State: "nitride", Spectrum: gaussianDerivative(400, 0)},
	)

	w, _ := index.Open(store.Dir(), false) // the library commands do this after each write
	w.Sync(store)
	w.Close()

	x, _ := index.Open(store.Dir(), true) // queries open read-only
	defer x.Close()
	hits, total, _ := x.Search("+element:Ti +state:nitride", 10)
	fmt.Println(total, hits[0].Name)

	like, _ := x.Like(gaussianDerivative(418, 2), index.LikeOptions{Top: 1})
	fmt.Printf("%s similarity %.3f shift %+.2f eV\n", like[0].Name, like[0].Similarity, like[0].ShiftEV)
	// Output:
	// 1 TiN film
	// Ti foil similarity 1.000 shift +2.00 eV
}
