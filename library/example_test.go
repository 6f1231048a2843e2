package library_test

import (
	"fmt"
	"log"
	"os"

	"statemix/library"
	"statemix/lineshape"
)

// Example shows a library's life: create it, add a reference, find it by
// name and by id prefix, and check it.
func Example() {
	dir, err := os.MkdirTemp("", "statemix-example-")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)

	st, err := library.Create(dir)
	if err != nil {
		log.Fatal(err)
	}
	// An invented derivative-like line with its minimum at 380 eV.
	y := make([]float64, 101)
	for i := range y {
		x := float64(i) - 50
		y[i] = x / (1 + x*x/36)
	}
	sp, err := lineshape.NewUniform(336, 1, y, lineshape.Derivative)
	if err != nil {
		log.Fatal(err)
	}
	added, warns, err := st.Add(&library.Entry{
		Element: "Ti", Transition: "L3M23M23", State: "metal", Spectrum: sp,
	})
	if err != nil {
		log.Fatal(err)
	}
	e := added[0]
	fmt.Println(e.Name, len(e.ID), st.Revision(), len(warns))

	byName, _ := st.Resolve("Ti metal L3M23M23")
	byPrefix, _ := st.Resolve(e.ID[:4])
	fmt.Println(byName.ID == e.ID, byPrefix.ID == e.ID)

	rep, err := st.Verify(library.VerifyOptions{})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(rep.Entries, rep.OK())
	// Output:
	// Ti metal L3M23M23 12 1 0
	// true true
	// 1 true
}

// ExampleParseFilter selects entries with a simple field query.
func ExampleParseFilter() {
	f, err := library.ParseFilter(`element:Ti state:nitride tag.lab:north`)
	if err != nil {
		log.Fatal(err)
	}
	e := &library.Entry{Element: "Ti", State: "nitride", Tags: map[string]string{"lab": "north"}}
	fmt.Println(f.Match(e))
	e.State = "oxide"
	fmt.Println(f.Match(e))
	// Output:
	// true
	// false
}
