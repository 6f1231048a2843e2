// Package vamas reads and writes ISO 14976:1998 "Surface chemical analysis
// — Data transfer format" files (the VAMAS standard data transfer format of
// Dench, Hazell and Seah, Surf. Interface Anal. 13 (1988) 63), and turns
// their blocks into lineshape.Spectrum values and back.
//
// # The model
//
// File and Block hold every item of the standard under its own name: the
// header (format identifier, institution, instrument model, operator and
// experiment identifiers, comment lines, experiment mode, scan mode, number
// of spectral regions, map sizes, experimental variables with labels and
// units, the parameter inclusion or exclusion list, manually entered items,
// future upgrade entries) and each block from the block identifier to the
// ordinate values. Text items are kept as written (a trailing CR removed);
// reals the file gives as 1E37 ("not given") hold NotGiven, tested with
// Given. Read followed by Write reproduces every item; what changes is the
// spelling, not the value: lines end in CRLF, numbers are printed in the
// shortest form that reads back to the same float64 ("1.0E+37" becomes
// "1E37", an integer written "3.0" becomes "3"), experiment and scan mode
// are upper case, and the minimum and maximum ordinate lines are recomputed
// from the data.
//
// # Grammar
//
// One description of the line order (grammar.go) drives both Read and
// Write. Conditional lines follow the experiment mode, scan mode and
// technique:
//
//   - header: number of spectral regions in NORM, SDP, MAP and MAPDP; number
//     of analysis positions and of discrete x and y coordinates in MAP and
//     MAPDP;
//   - block: x and y coordinates in MAP and MAPDP; the sputtering ion or
//     atom (atomic number, atoms per particle, charge) in the depth-profile
//     modes SDP, SDPSV, MAPDP and MAPSVDP; field of view in MAP, MAPDP,
//     MAPSV, MAPSVDP and SEM; the six linescan coordinates in MAPSV, MAPSVDP
//     and SEM; the differential width for technique "AES diff"; abscissa
//     label, units, start and increment in REGULAR scan mode; the seven
//     sputtering source lines in the depth-profile modes when the technique
//     is AES diff, AES dir, EDX, ELS, UPS, XPS or XRF.
//
// In IRREGULAR scan mode the abscissa values travel as one of the
// corresponding variables (File.AbscissaVariable finds it by its label or
// units); the scan mode MAPPING is read and written, but its blocks are
// maps, and Spectrum refuses them. Several corresponding variables are
// interleaved point by point in the ordinate list; Block.Data holds them
// one slice per variable. A negative abscissa increment (a descending scan)
// is kept in the Block and made ascending in the Spectrum.
//
// # Parameter inclusion and exclusion
//
// Blocks after the first carry only the items the list includes (a positive
// count lists included items, a negative count excluded ones, zero means
// all). Every later block starts as a copy of the first block, and its own
// lines then overwrite the items it carries, so an omitted technique or
// abscissa is the first block's when the conditions of the later block (the
// differential-width line, the sputtering source lines) are evaluated. The
// standard numbers the items 1 to 40; the Item constants give the numbering
// this package uses, in block order. Write refuses a File whose later blocks
// differ from the first in an omitted item, since the difference could not
// be read back.
//
// # Lines and errors
//
// Lines end in CRLF (what Write emits), LF or CR. A blank line is a value,
// never skipped: an empty text item, and an error where a number is due.
// Reals may use E or Fortran D exponents; NaN, infinities and hexadecimal
// are refused. Every count is checked against the lines that remain before
// anything is allocated for it, so a hostile count is an error, not an
// out-of-memory, and every loop ends. Content errors are
// *lineshape.InputError with the 1-based line and the 0-based block, which
// print as "file.vms: line 87: block 2: ordinate count 401, want 400".
//
// # Bridge to lineshape
//
// File.Spectra returns one Spectrum per block, with the first corresponding
// variable that is not the abscissa as values; File.Spectrum picks any
// other. Its documentation lists how each Meta field is filled: units (eV
// and keV abscissae, s, min and h sputter times), the take-off angle
// conversion, pixel positions made 0-based, and the binding-energy abscissa
// converted to kinetic energy only when the excitation energy is known.
// FromSpectra builds a File of a given experiment mode from spectra so that
// statemix convert can write what it read.
package vamas
