// Package delimited reads and writes spectra stored as columns of numbers
// in text: comma-separated (CSV), semicolon-separated, tab-separated (TSV)
// or separated by runs of spaces, as instruments and spreadsheets export
// them.
//
// # File layout
//
// A file holds one row per channel. The first column is the energy in eV
// (kinetic unless the header or Options say binding), the other columns are
// values; Options.EnergyColumn and Options.ValueColumn pick others. Blank
// lines are skipped, and everything from a '#' to the end of a line is a
// comment; comment lines before the first row are kept in Meta.Comments.
//
// The separator is detected from the first data row: a tab if the row has
// one, else a semicolon, else a comma, else runs of spaces. Numbers use a
// decimal point; a decimal comma ("97,76") is refused with a message that
// says so, because in a comma-separated file it cannot be told apart from
// two columns.
//
// The grid may be uneven and may run downwards: Read hands the energies to
// lineshape.New, which reorders a descending axis and stores an axis whose
// steps agree to 1e-6 relative as uniform.
//
// # Header row
//
// An optional header row is recognised as the first non-comment row that is
// not all numbers. Its names may say what the columns are:
//
//	energy, e, ke, kinetic, kinetic energy, energy_ev  kinetic-energy axis
//	be, binding, binding energy                        binding-energy axis
//	dn/de, dnde, derivative, diff, d(n)/de              derivative values
//	n(e), direct, intensity, cps, counts                direct values
//	en(e), e*n(e), e.n(e)                               direct values times E
//
// Units in brackets or after a slash ("Energy (eV)", "energy/eV") are
// ignored, and matching is case-insensitive. "counts" also sets
// Meta.Counts. A binding-energy axis is converted to kinetic energy with
// Options.ExcitationEV, and is an error without it.
//
// # Metadata comments
//
// A leading comment line "key: value" whose key is one of the JSON names of
// lineshape.Meta that Write records (mode, sample, technique,
// beam_energy_kev, beam_current_na, dwell_s, scans, modulation_ev,
// energy_reference, analyser_mode, take_off_deg, excitation_ev,
// sputter_time_s), with a valid value, sets that field instead of being
// kept in Meta.Comments:
//
//	# modulation_ev: 2
//	# beam_energy_kev: 10
//	# mode: derivative
//
// # Mode
//
// Options.Mode, when set, decides the mode. Otherwise a value-column header
// decides it, then a "# mode:" comment, and without either the spectrum is
// taken as a derivative (dN/dE): this package serves derivative Auger work,
// and a file with no header says nothing either way. Callers that know
// better set Options.Mode.
//
// # Errors
//
// Bad data is reported as a *lineshape.InputError naming the file and the
// 1-based line.
//
// # Writing
//
// Write produces the comments, the metadata comments, a header row
// ("energy_ev" and the mode's column name) and one row per channel with
// every number in the shortest form that reads back to the same float64, so
// a Write-then-Read round trip is exact, metadata included.
package delimited
