// Package nnls solves non-negative least-squares problems with free
// (sign-unconstrained) variables: min ||A x - b||_2 subject to x_j >= 0 for
// the constrained columns j. It knows nothing about spectra.
//
// Solver is the exact single-problem method (Lawson & Hanson, 1974).
package nnls
