// Command statemix decomposes Auger spectra into chemical-state fractions
// using a lab's own library of reference lineshapes.
package main

import "os"

func main() {
	os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}
