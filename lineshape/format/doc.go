// Package format reads spectra from any file statemix understands and
// writes them in the formats statemix convert offers.
//
// ReadFile tells the kind of a file from its first bytes (Detect), not its
// name:
//
//   - ISO 14976 (first line "VAMAS Surface Chemical Analysis Standard Data
//     Transfer Format 1988 May 4"): every block, by package vamas;
//   - statemix spectrum JSON (a JSON object):
//     {"schema":"statemix.spectrum/v1","spectra":[...]}, each spectrum in the
//     JSON encoding of lineshape.Spectrum;
//   - a NumPy .npy cube with its <name>.json sidecar: one spectrum per
//     pixel, by package npy;
//   - anything else: columns of numbers, by package delimited.
//
// Options.Block picks one spectrum, counting from 1 (the numbering error
// messages use), and Options.Mode overrides the mode every file gives.
//
// Write and WriteFile produce "csv", "vamas" or "json". JSON keeps every
// field of a spectrum and reads back bit for bit; ISO 14976 keeps what its
// items can hold; CSV keeps the axis, values, mode and comments. WriteFile
// is atomic (temporary file, fsync, rename).
package format
