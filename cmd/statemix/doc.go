// Command statemix decomposes Auger spectra into chemical-state fractions
// using a lab's own library of reference lineshapes.
package main
