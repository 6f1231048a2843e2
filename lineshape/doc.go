// Package lineshape holds Auger spectra against kinetic energy and the
// operations that prepare them for fitting with standards: windowing,
// resampling and sub-channel shifting, Savitzky-Golay smoothing and
// derivatives, lock-in (modulation) emulation and its inverse, normalisation,
// and derivative-peak features.
//
// # Units
//
// Energies are kinetic energies in eV, on a uniform axis (Axis.Start +
// i*Axis.Step) or an explicit, strictly increasing one (Axis.Values).
// Binding-energy axes are converted with KineticFromBinding only when the
// excitation energy is known. Values are in whatever unit the instrument
// wrote (counts, counts/s, arbitrary); a derivative computed here is in
// value per eV, and Meta.ModulationEV is the peak-to-peak modulation in eV.
// Values are never rescaled silently: Normalize is an explicit step and
// returns the scale it divided by.
//
// # Ownership and aliasing
//
// Operations on a *Spectrum are functions: they leave the receiver alone and
// return a new Spectrum that shares no storage with it (values, explicit
// energies, and the slices, maps and pointers in Meta are copied). A Curve
// is immutable once made and safe for concurrent use; it holds its own copy
// of what it needs. Functions on slices that fill a destination take it
// first (SavitzkyGolayFilter(dst, y, ...), Curve.SampleShifted(dst, ...))
// and allocate nothing beyond what their documentation says; SampleShifted,
// the inner loop of shift fitting, allocates nothing at all.
//
// Programmer errors (a Spectrum whose axis and values disagree, mismatched
// slice lengths) panic with a "lineshape:" prefix. Unusable parameters or
// data (an even filter window, a grid outside the data, an uneven axis where
// a uniform one is needed) are returned errors; bad input files are
// reported by the readers as *InputError.
//
// # Typical use
//
// A derivative spectrum exported on an uneven grid is put on a uniform one,
// smoothed, and its peaks are located:
//
//	u, err := s.ResampleStep(0.25)      // 0.25 eV channels
//	sm, err := u.Smooth(9, 2)           // 9-point quadratic Savitzky-Golay
//	f := sm.Features(0.05)              // extrema with prominence >= 5 % of range
//	fmt.Println(f.PeakEnergy)           // deepest minimum, eV
//
// A direct reference is turned into the derivative a lock-in with 2 eV
// peak-to-peak modulation would have recorded, to compare it with derivative
// unknowns measured that way:
//
//	d, err := direct.LockIn(2)
//
// For fitting, a reference is prepared once as a Curve and sampled, shifted
// by a trial energy, onto the unknown's grid as often as needed:
//
//	c := ref.Curve()
//	c.SampleShifted(col, unknown.Axis.Start, unknown.Axis.Step, dE)
//
// # Methods and sources
//
// Interpolation (Curve, Resample, Shift) is the monotone piecewise cubic of
// F. N. Fritsch and J. Butland, "A method for constructing local monotone
// piecewise cubic interpolants", SIAM J. Sci. Stat. Comput. 5 (1984) 300,
// through gonum.org/v1/gonum/interp: it does not overshoot between samples,
// so it invents no extrema next to sharp peaks (see Curve).
//
// Smoothing and derivatives (SavitzkyGolay, Smooth, Differentiate) are the
// least-squares polynomial filters of A. Savitzky and M. J. E. Golay, Anal.
// Chem. 36 (1964) 1627, whose tables were corrected by J. Steinier, Y.
// Termonia and J. Deltour, Anal. Chem. 44 (1972) 1906. The weights are
// computed by least squares for any odd window, order and derivative, and
// reproduce the published tables; the ends use the polynomial of the first
// and last full window.
//
// Lock-in emulation (LockIn) evaluates the first-harmonic amplitude of a
// sinusoidal modulation of peak-to-peak amplitude k by its defining phase
// integral, on the not-a-knot cubic spline through the samples (accuracy
// matters there more than monotonicity; LockIn documents the error); the
// result equals (N' * w)(E), w a unit-area semicircle of radius k/2. Integrate goes back from derivative to direct with a linear
// baseline through the ends. Features uses topographic prominence and the
// conventional derivative peak energy (the minimum of the high-energy
// negative excursion, common practice).
package lineshape
