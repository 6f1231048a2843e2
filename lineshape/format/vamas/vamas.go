package vamas

import "math"

// FormatIdentifier is the first line of every ISO 14976 file.
const FormatIdentifier = "VAMAS Surface Chemical Analysis Standard Data Transfer Format 1988 May 4"

// Terminator is the line that ends the experiment, after the last block.
const Terminator = "end of experiment"

// NotGiven is the value ISO 14976 writes (as "1E37") for a real number that
// is not known. Use Given to test for it.
const NotGiven = 1e37

// Given reports whether v is a real value rather than the "not given"
// marker 1E37 (any value of magnitude 1e37 or more counts as the marker, so
// that "1.0E+37" and "1E37" mean the same).
func Given(v float64) bool { return math.Abs(v) < NotGiven*(1-1e-12) }

// Experiment modes (File.ExperimentMode).
const (
	ModeNORM    = "NORM"    // spectra or regions, one technique, not at an addressed point
	ModeSDP     = "SDP"     // sputter depth profile: spectra against sputtering
	ModeSDPSV   = "SDPSV"   // sputter depth profile of single values
	ModeMAP     = "MAP"     // spectra at the points of a regular two-dimensional array
	ModeMAPDP   = "MAPDP"   // MAP, and at a layer of a depth profile
	ModeMAPSV   = "MAPSV"   // map of single values made of linescans
	ModeMAPSVDP = "MAPSVDP" // MAPSV, and at a layer of a depth profile
	ModeSEM     = "SEM"     // electron-microscope image made of linescans
)

// Scan modes (File.ScanMode).
const (
	ScanRegular   = "REGULAR"   // abscissa start and increment given per block
	ScanIrregular = "IRREGULAR" // abscissa values carried as a corresponding variable
	ScanMapping   = "MAPPING"   // ordinates are the values of a map; no abscissa
)

// Technique names this package treats specially; others are kept as written.
const (
	TechAESDiff = "AES diff" // derivative Auger spectrum; adds the differential width line
	TechAESDir  = "AES dir"  // direct Auger spectrum
)

// Variable is an experimental variable declared in the header, or a
// corresponding variable declared in a block: a label and its units.
type Variable struct {
	Label string
	Unit  string
}

// Param is an additional numerical parameter of a block.
type Param struct {
	Label string
	Unit  string
	Value float64
}

// File is one ISO 14976 experiment: the header and its blocks. Field names
// follow the standard's item names; reals that the file gives as 1E37 hold
// NotGiven.
type File struct {
	Institution     string   // institution identifier
	InstrumentModel string   // instrument model identifier
	Operator        string   // operator identifier
	Experiment      string   // experiment identifier
	Comment         []string // header comment lines, blank lines included

	ExperimentMode string // one of the Mode constants
	ScanMode       string // one of the Scan constants

	// SpectralRegions is the number of spectral regions; present only in
	// NORM, SDP, MAP and MAPDP files.
	SpectralRegions int
	// AnalysisPositions, MapX and MapY are the number of analysis positions
	// and of discrete x and y coordinates available in the full map; present
	// only in MAP and MAPDP files.
	AnalysisPositions, MapX, MapY int

	// Variables are the experimental variables; every block has one value
	// per variable (Block.VariableValues).
	Variables []Variable

	// ParamList holds the prefix numbers (1 to 40, see the Item constants)
	// of the parameter inclusion list, or of the exclusion list when
	// ParamListExcludes is set. Blocks after the first carry only the
	// included items; the others are taken from the first block.
	ParamList         []int
	ParamListExcludes bool

	// ManualItems are the prefix numbers of items entered by hand.
	ManualItems []int

	// FutureExperiment are the future upgrade experiment entries;
	// FutureBlockEntries is how many future upgrade block entries every
	// block carries (Block.Future).
	FutureExperiment   []string
	FutureBlockEntries int

	Blocks []*Block

	name string // file name given to Read, for error messages
}

// Block is one block of an experiment: a spectrum, a region, a map or a
// profile, with every item of the standard. Fields that only some
// experiment modes, scan modes or techniques carry say so; they are zero
// (or whatever the writer was given) otherwise.
type Block struct {
	ID     string // block identifier
	Sample string // sample identifier

	Year, Month, Day, Hour, Minute, Second int
	GMTOffsetHours                         float64 // number of hours in advance of Greenwich Mean Time

	Comment   []string // block comment lines, blank lines included
	Technique string   // e.g. "AES diff", "AES dir", "XPS", "UPS", "SIMS"

	// X and Y are the map coordinates; MAP and MAPDP only.
	X, Y int

	// VariableValues holds one value per experimental variable of the header.
	VariableValues []float64

	SourceLabel string // analysis source label

	// SputterZ, SputterAtoms and SputterCharge describe the sputtering ion
	// or atom (atomic number, number of atoms in the particle, charge sign
	// and number); depth-profile modes (SDP, SDPSV, MAPDP, MAPSVDP) only.
	SputterZ, SputterAtoms, SputterCharge int

	SourceEnergy   float64 // analysis source characteristic energy, eV
	SourceStrength float64 // analysis source strength (beam current in nA for an electron gun, power in W for an X-ray source)
	SourceWidthX   float64 // analysis source beam width x, micrometres
	SourceWidthY   float64 // analysis source beam width y, micrometres

	// FieldOfViewX and FieldOfViewY are in micrometres; MAP, MAPDP, MAPSV,
	// MAPSVDP and SEM only.
	FieldOfViewX, FieldOfViewY float64

	// Linescan holds the first linescan start x, y, first linescan finish
	// x, y and last linescan finish x, y; MAPSV, MAPSVDP and SEM only.
	Linescan [6]int

	SourcePolar   float64 // analysis source polar angle of incidence, degrees
	SourceAzimuth float64 // analysis source azimuth, degrees

	AnalyserMode string  // e.g. "FAT", "FRR"
	PassEnergy   float64 // analyser pass energy (eV), retard ratio or mass resolution

	// DifferentialWidth is the peak-to-peak width (eV) of the differentiating
	// function; technique "AES diff" only.
	DifferentialWidth float64

	Magnification  float64 // magnification of the analyser transfer lens
	WorkFunction   float64 // analyser work function or acceptance energy, eV
	TargetBias     float64 // target bias, V
	AnalysisWidthX float64 // analysis width x, micrometres
	AnalysisWidthY float64 // analysis width y, micrometres
	TakeOffPolar   float64 // analyser axis take-off polar angle, degrees
	TakeOffAzimuth float64 // analyser axis take-off azimuth, degrees

	Species        string // species label, e.g. "Ti"
	Transition     string // transition or charge state label, e.g. "LMM"
	ParticleCharge int    // charge of the detected particle (-1 for electrons)

	// AbscissaLabel, AbscissaUnit, AbscissaStart and AbscissaStep describe
	// the regular abscissa; REGULAR scan mode only. AbscissaStep may be
	// negative (a descending scan).
	AbscissaLabel, AbscissaUnit string
	AbscissaStart, AbscissaStep float64

	// Variables are the corresponding variables; Data[c] holds the values of
	// Variables[c] (in the file they are interleaved point by point).
	Variables []Variable
	Data      [][]float64

	SignalMode     string  // e.g. "pulse counting", "analogue"
	CollectionTime float64 // signal collection time per channel, s
	Scans          int     // number of scans to compile this block
	TimeCorrection float64 // signal time correction, s

	// Sputtering source items; depth-profile modes with a technique that
	// does not itself sputter (AES diff, AES dir, EDX, ELS, UPS, XPS, XRF).
	SputterEnergy  float64 // sputtering source energy, eV
	SputterCurrent float64 // sputtering source beam current, nA
	SputterWidthX  float64 // sputtering source width x, micrometres
	SputterWidthY  float64 // sputtering source width y, micrometres
	SputterPolar   float64 // sputtering source polar angle of incidence, degrees
	SputterAzimuth float64 // sputtering source azimuth, degrees
	SputterMode    string  // "continuous" or "cyclic"

	TiltPolar   float64 // sample normal polar angle of tilt, degrees
	TiltAzimuth float64 // sample normal tilt azimuth, degrees
	Rotation    float64 // sample rotation angle, degrees

	Params []Param  // additional numerical parameters
	Future []string // future upgrade block entries (File.FutureBlockEntries of them)

	// Min and Max are the minimum and maximum ordinate value of each
	// corresponding variable as the file states them. Write recomputes them
	// from Data.
	Min, Max []float64

	line int // 1-based line of the block identifier when read from a file
}

// Points returns the number of points (abscissa values) in the block.
func (b *Block) Points() int {
	if len(b.Data) == 0 {
		return 0
	}
	return len(b.Data[0])
}

// Item numbers: the prefix numbers of the block's parameters as the
// parameter inclusion/exclusion list and the manually-entered-items list
// name them. The first block always carries every item.
const (
	ItemBlockID        = 1  // block identifier
	ItemSample         = 2  // sample identifier
	ItemYear           = 3  // year in full
	ItemMonth          = 4  // month
	ItemDay            = 5  // day of month
	ItemHour           = 6  // hours
	ItemMinute         = 7  // minutes
	ItemSecond         = 8  // seconds
	ItemGMT            = 9  // number of hours in advance of GMT
	ItemComment        = 10 // number of lines in block comment and the lines
	ItemTechnique      = 11 // technique
	ItemXY             = 12 // x and y coordinates
	ItemVariableValues = 13 // values of the experimental variables
	ItemSourceLabel    = 14 // analysis source label
	ItemSputterIon     = 15 // sputtering ion or atom atomic number, atoms, charge
	ItemSourceEnergy   = 16 // analysis source characteristic energy
	ItemSourceStrength = 17 // analysis source strength
	ItemSourceWidth    = 18 // analysis source beam width x and y
	ItemFieldOfView    = 19 // field of view x and y
	ItemLinescan       = 20 // linescan start and finish coordinates
	ItemSourceAngles   = 21 // analysis source polar angle of incidence and azimuth
	ItemAnalyserMode   = 22 // analyser mode
	ItemPassEnergy     = 23 // analyser pass energy, retard ratio or mass resolution
	ItemDiffWidth      = 24 // differential width
	ItemMagnification  = 25 // magnification of analyser transfer lens
	ItemWorkFunction   = 26 // analyser work function or acceptance energy
	ItemTargetBias     = 27 // target bias
	ItemAnalysisWidth  = 28 // analysis width x and y
	ItemTakeOff        = 29 // analyser axis take-off polar angle and azimuth
	ItemSpecies        = 30 // species label
	ItemTransition     = 31 // transition or charge state label and charge of detected particle
	ItemAbscissa       = 32 // abscissa label, units, start and increment
	ItemVariables      = 33 // number of corresponding variables, labels and units
	ItemSignalMode     = 34 // signal mode
	ItemCollectionTime = 35 // signal collection time
	ItemScans          = 36 // number of scans to compile this block
	ItemTimeCorrection = 37 // signal time correction
	ItemSputterSource  = 38 // sputtering source energy, current, widths, angles, mode
	ItemTilt           = 39 // sample normal tilt polar angle and azimuth, rotation angle
	ItemParams         = 40 // number of additional numerical parameters and the parameters

	// NumItems is the number of block items that can be listed.
	NumItems = 40
)

// Included reports whether blocks after the first carry item (1 to
// NumItems) under f's parameter inclusion/exclusion list.
func (f *File) Included(item int) bool {
	listed := false
	for _, p := range f.ParamList {
		if p == item {
			listed = true
			break
		}
	}
	if f.ParamListExcludes {
		return !listed
	}
	if len(f.ParamList) == 0 {
		return true
	}
	return listed
}

func isMode(m string) bool {
	switch m {
	case ModeNORM, ModeSDP, ModeSDPSV, ModeMAP, ModeMAPDP, ModeMAPSV, ModeMAPSVDP, ModeSEM:
		return true
	}
	return false
}

func isScan(s string) bool {
	switch s {
	case ScanRegular, ScanIrregular, ScanMapping:
		return true
	}
	return false
}

// hasSpectralRegions: the header carries the number of spectral regions.
func hasSpectralRegions(m string) bool {
	return m == ModeNORM || m == ModeSDP || m == ModeMAP || m == ModeMAPDP
}

// hasMapXY: the header carries map sizes and each block x and y coordinates.
func hasMapXY(m string) bool { return m == ModeMAP || m == ModeMAPDP }

// depthProfile: the block carries the sputtering ion lines.
func depthProfile(m string) bool {
	return m == ModeSDP || m == ModeSDPSV || m == ModeMAPDP || m == ModeMAPSVDP
}

// hasFieldOfView: the block carries field of view x and y.
func hasFieldOfView(m string) bool {
	return m == ModeMAP || m == ModeMAPDP || m == ModeMAPSV || m == ModeMAPSVDP || m == ModeSEM
}

// hasLinescan: the block carries the six linescan coordinates.
func hasLinescan(m string) bool { return m == ModeMAPSV || m == ModeMAPSVDP || m == ModeSEM }

// isAESDiff compares a technique to "AES diff" the way files spell it.
func isAESDiff(t string) bool { return equalFold(trimSpace(t), TechAESDiff) }

// sputterSourceTechnique: techniques whose depth profiles carry the
// sputtering source lines (those whose probe does not itself sputter).
func sputterSourceTechnique(t string) bool {
	switch lowerASCII(trimSpace(t)) {
	case "aes diff", "aes dir", "edx", "els", "ups", "xps", "xrf":
		return true
	}
	return false
}
