package lineshape

// This file lists the operations other packages build on, with their
// contract. Bodies that panic("lineshape: not implemented") are being
// written; the owner of package lineshape replaces each stub by moving it
// into its own file (resample.go, savgol.go, lockin.go, ...) and deletes
// this file when it is empty.

// Normalization selects how Normalize scales a spectrum.
type Normalization int

const (
	NormNone       Normalization = iota // leave values as recorded
	NormPeakToPeak                      // divide by max - min
	NormArea                            // divide by the integral of |y| dE
	NormL2                              // divide by the Euclidean norm of the values
)

// ParseNormalization parses "none", "peak-to-peak", "area" or "l2".
func ParseNormalization(s string) (Normalization, error) { panic("lineshape: not implemented") }

// String returns the name ParseNormalization accepts.
func (n Normalization) String() string { panic("lineshape: not implemented") }

// Normalize returns s divided by the scale n defines, and that scale. A
// spectrum whose scale is zero is an error.
func (s *Spectrum) Normalize(n Normalization) (*Spectrum, float64, error) {
	panic("lineshape: not implemented")
}

// Extremum is a local minimum or maximum with its topographic prominence.
type Extremum struct {
	Index      int     `json:"index"`
	Energy     float64 `json:"energy_ev"`
	Value      float64 `json:"value"`
	Prominence float64 `json:"prominence"`
	Minimum    bool    `json:"minimum"`
}

// Features summarises a spectrum's derivative peaks.
type Features struct {
	Minima     []Extremum `json:"minima"`       // by energy, prominence >= the threshold
	Maxima     []Extremum `json:"maxima"`       // by energy, prominence >= the threshold
	PeakToPeak float64    `json:"peak_to_peak"` // max - min of the values
	// PeakEnergy is the conventional derivative peak energy: the energy of the
	// deepest minimum (the high-energy negative excursion of the main peak).
	// For a direct spectrum, the energy of the highest maximum.
	PeakEnergy float64 `json:"peak_energy_ev"`
}

// Features returns the extrema whose prominence is at least relProminence
// times the peak-to-peak range (0 means 0.05).
func (s *Spectrum) Features(relProminence float64) Features { panic("lineshape: not implemented") }
