package fit

import (
	"fmt"
	"runtime"
	"strings"

	"statemix/lineshape"
)

// ShiftMode says which energy shifts are fitted.
type ShiftMode int

const (
	// ShiftCommon fits one shift shared by all references (the default).
	ShiftCommon ShiftMode = iota
	// ShiftNone fits no shift: references are used where they were recorded.
	ShiftNone
	// ShiftEach fits one shift per reference.
	ShiftEach
)

// String returns "common", "none" or "each".
func (m ShiftMode) String() string {
	switch m {
	case ShiftCommon:
		return "common"
	case ShiftNone:
		return "none"
	case ShiftEach:
		return "each"
	}
	return fmt.Sprintf("ShiftMode(%d)", int(m))
}

// ParseShiftMode parses "none", "common" or "each".
func ParseShiftMode(s string) (ShiftMode, error) {
	switch strings.ToLower(s) {
	case "common", "":
		return ShiftCommon, nil
	case "none":
		return ShiftNone, nil
	case "each":
		return ShiftEach, nil
	}
	return 0, fmt.Errorf("unknown shift mode %q (want none, common or each)", s)
}

// Uncertainty selects how uncertainties are estimated.
type Uncertainty int

const (
	// Bootstrap resamples the residuals in moving blocks (or the counts by
	// Poisson Monte Carlo) and refits; the default for single spectra.
	Bootstrap Uncertainty = iota
	// Covariance propagates the parameter covariance at the solution,
	// corrected for correlated residuals; fast, for series and maps.
	Covariance
)

// String returns "bootstrap" or "covariance".
func (u Uncertainty) String() string {
	switch u {
	case Bootstrap:
		return "bootstrap"
	case Covariance:
		return "covariance"
	}
	return fmt.Sprintf("Uncertainty(%d)", int(u))
}

// ParseUncertainty parses "covariance" or "bootstrap".
func ParseUncertainty(s string) (Uncertainty, error) {
	switch strings.ToLower(s) {
	case "bootstrap", "":
		return Bootstrap, nil
	case "covariance", "cov":
		return Covariance, nil
	}
	return 0, fmt.Errorf("unknown uncertainty method %q (want covariance or bootstrap)", s)
}

// Background degrees with a meaning of their own (Options.Background).
const (
	// BackgroundConstant asks for a degree-0 (constant) background.
	BackgroundConstant = -1
	// BackgroundNone asks for no background term at all.
	BackgroundNone = -2
)

// Options tunes Prepare and Fit. The zero value is ready to use.
type Options struct {
	// Window is the requested fit window [lo, hi] in eV. If both are 0, the
	// window is the overlap of the unknown with every reference, trimmed by
	// MaxShift at each end.
	Window [2]float64
	// Shift selects the fitted shifts. The zero value is ShiftCommon.
	Shift ShiftMode
	// MaxShift bounds every fitted shift to [-MaxShift, MaxShift] eV. If
	// MaxShift is 0, it defaults to 3 eV. Prepare refuses more than 50 eV,
	// or a bound not below the unknown's energy range, unless Shift is
	// ShiftNone.
	MaxShift float64
	// ScanStep is the step of the exhaustive shift scan in eV. If ScanStep
	// is 0, it defaults to 0.05 eV; larger values are reduced to 0.05 eV.
	ScanStep float64
	// Background is the degree of the free-sign Legendre polynomial
	// background. If Background is 0, it defaults to 1 (a straight line);
	// use BackgroundConstant for degree 0 and BackgroundNone for none.
	Background int
	// Normalize scales each reference before fitting. The zero value,
	// lineshape.NormNone, keeps references at their recorded relative
	// intensity, which is what makes a fraction a fraction of pure-standard
	// signal; anything else changes that meaning and Fit warns.
	Normalize lineshape.Normalization
	// Uncertainty selects the method. The zero value is Bootstrap.
	Uncertainty Uncertainty
	// Samples is the number of bootstrap samples. If Samples is 0, it
	// defaults to 300.
	Samples int
	// Seed seeds the bootstrap; sample b uses a generator seeded from
	// (Seed, b), so results do not depend on the number of workers.
	// The zero value is a valid seed.
	Seed uint64
	// Modulation is the peak-to-peak modulation in eV used to emulate
	// lock-in detection when a direct spectrum must be compared with
	// derivative ones. If Modulation is 0, it is taken from the derivative
	// spectra's Meta.ModulationEV, and a derivative spectrum that records
	// none is assumed to have that of the others, with a warning; a
	// Modulation given here also applies to derivative spectra that record
	// none, without a warning.
	Modulation float64
	// Element, if not empty, is the element the unknown is analysed for;
	// a reference of another element is an error.
	Element string
	// Workers bounds the goroutines of the bootstrap. If Workers is 0, it
	// defaults to runtime.GOMAXPROCS(0).
	Workers int
	// Progress, if not nil, is called after each bootstrap sample with the
	// number done and the total. It may be called from several goroutines,
	// but never concurrently.
	Progress func(done, total int)
}

// BackgroundDegree returns the polynomial degree the options ask for (-1
// for no background).
func (o Options) BackgroundDegree() int {
	switch {
	case o.Background == 0:
		return 1
	case o.Background == BackgroundConstant:
		return 0
	case o.Background == BackgroundNone:
		return -1
	case o.Background < 0:
		panic(fmt.Sprintf("fit: Options.Background %d is not a degree", o.Background))
	}
	return o.Background
}

// resolved returns o with its defaults filled in.
func (o Options) resolved() Options {
	if o.MaxShift == 0 {
		o.MaxShift = 3
	}
	if o.MaxShift < 0 {
		panic(fmt.Sprintf("fit: Options.MaxShift %v is negative", o.MaxShift))
	}
	if o.ScanStep <= 0 || o.ScanStep > 0.05 {
		o.ScanStep = 0.05
	}
	if o.Samples <= 0 {
		o.Samples = 300
	}
	if o.Workers <= 0 {
		o.Workers = runtime.GOMAXPROCS(0)
	}
	return o
}
