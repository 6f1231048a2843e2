package vamas

import (
	"fmt"
	"strings"
)

// The grammar of ISO 14976 is written once, in headerGrammar and
// blockGrammar, against the codec interface; the reader's codec fills the
// fields line by line and the writer's codec prints them. Both directions
// therefore agree on the order and on every condition.

// codec moves one item between a line (or lines) of the file and a field.
// After the first failure every method does nothing and failed reports true.
type codec interface {
	text(what string, p *string)
	real(what string, p *float64)
	integer(what string, p *int)
	// count moves a non-negative count of entries that take per lines each.
	count(what string, p *int, per int)
	// textLines moves n text lines into *p.
	textLines(what string, p *[]string, n int)
	// fits checks that n entries of per lines each can follow (reading only).
	fits(what string, n, per int)
	// check records err (if not nil) against the item moved last.
	check(err error)
	failed() bool
}

func commentLines(c codec, what string, p *[]string) {
	n := len(*p)
	c.count("number of lines in "+what, &n, 1)
	c.textLines(what+" line", p, n)
}

// headerGrammar is the experiment header, from the institution identifier to
// the number of blocks (the format identifier is handled by the caller).
func headerGrammar(c codec, f *File, nBlocks *int) {
	c.text("institution identifier", &f.Institution)
	c.text("instrument model identifier", &f.InstrumentModel)
	c.text("operator identifier", &f.Operator)
	c.text("experiment identifier", &f.Experiment)
	commentLines(c, "comment", &f.Comment)
	c.text("experiment mode", &f.ExperimentMode)
	if m := strings.ToUpper(strings.TrimSpace(f.ExperimentMode)); isMode(m) {
		f.ExperimentMode = m
	} else {
		c.check(fmt.Errorf("experiment mode %s: want NORM, SDP, SDPSV, MAP, MAPDP, MAPSV, MAPSVDP or SEM", echo(f.ExperimentMode)))
	}
	c.text("scan mode", &f.ScanMode)
	if s := strings.ToUpper(strings.TrimSpace(f.ScanMode)); isScan(s) {
		f.ScanMode = s
	} else {
		c.check(fmt.Errorf("scan mode %s: want REGULAR, IRREGULAR or MAPPING", echo(f.ScanMode)))
	}
	if c.failed() {
		return
	}
	if hasSpectralRegions(f.ExperimentMode) {
		c.integer("number of spectral regions", &f.SpectralRegions)
	}
	if hasMapXY(f.ExperimentMode) {
		c.integer("number of analysis positions", &f.AnalysisPositions)
		c.integer("number of discrete x coordinates available in full map", &f.MapX)
		c.integer("number of discrete y coordinates available in full map", &f.MapY)
	}
	n := len(f.Variables)
	c.count("number of experimental variables", &n, 2)
	if c.failed() {
		return
	}
	if len(f.Variables) != n {
		f.Variables = make([]Variable, n)
	}
	for i := range f.Variables {
		c.text("experimental variable label", &f.Variables[i].Label)
		c.text("experimental variable units", &f.Variables[i].Unit)
	}
	paramList(c, f)
	n = len(f.ManualItems)
	c.count("number of manually entered items in block", &n, 1)
	if c.failed() {
		return
	}
	if len(f.ManualItems) != n {
		f.ManualItems = make([]int, n)
	}
	for i := range f.ManualItems {
		c.integer("prefix number of manually entered item", &f.ManualItems[i])
	}
	n = len(f.FutureExperiment)
	c.count("number of future upgrade experiment entries", &n, 1)
	c.count("number of future upgrade block entries", &f.FutureBlockEntries, 0)
	c.textLines("future upgrade experiment entry", &f.FutureExperiment, n)
	c.count("number of blocks", nBlocks, 1)
}

// paramList moves the signed count of the parameter inclusion (positive) or
// exclusion (negative) list and its prefix numbers.
func paramList(c codec, f *File) {
	n := len(f.ParamList)
	if f.ParamListExcludes {
		n = -n
	}
	c.integer("number of entries in parameter inclusion or exclusion list", &n)
	if c.failed() {
		return
	}
	excl := n < 0
	if excl {
		n = -n
	}
	c.fits("number of entries in parameter inclusion or exclusion list", n, 1)
	if c.failed() {
		return
	}
	f.ParamListExcludes = excl
	if len(f.ParamList) != n {
		f.ParamList = make([]int, n)
	}
	for i := range f.ParamList {
		c.integer("parameter inclusion or exclusion prefix number", &f.ParamList[i])
		if it := f.ParamList[i]; !c.failed() && (it < 1 || it > NumItems) {
			c.check(fmt.Errorf("parameter inclusion or exclusion prefix number %d: want 1 to %d", it, NumItems))
		}
	}
}

// blockGrammar is one block from the block identifier to the future upgrade
// block entries; the ordinate section follows (readOrdinates,
// writeOrdinates). incl says which items the block carries; conditions on
// experiment mode, scan mode and technique use b's values as they stand when
// the condition is met, so a technique inherited from the first block
// decides the differential-width line. With all set, every conditional
// item is moved whatever its condition (Write uses this to compare items).
func blockGrammar(c codec, f *File, b *Block, incl func(int) bool, all bool) {
	mode := f.ExperimentMode
	cond := func(ok bool) bool { return ok || all }
	if incl(ItemBlockID) {
		c.text("block identifier", &b.ID)
	}
	if incl(ItemSample) {
		c.text("sample identifier", &b.Sample)
	}
	if incl(ItemYear) {
		c.integer("year in full", &b.Year)
	}
	if incl(ItemMonth) {
		c.integer("month", &b.Month)
	}
	if incl(ItemDay) {
		c.integer("day of month", &b.Day)
	}
	if incl(ItemHour) {
		c.integer("hours", &b.Hour)
	}
	if incl(ItemMinute) {
		c.integer("minutes", &b.Minute)
	}
	if incl(ItemSecond) {
		c.integer("seconds", &b.Second)
	}
	if incl(ItemGMT) {
		c.real("number of hours in advance of Greenwich Mean Time", &b.GMTOffsetHours)
	}
	if incl(ItemComment) {
		commentLines(c, "block comment", &b.Comment)
	}
	if incl(ItemTechnique) {
		c.text("technique", &b.Technique)
	}
	if cond(hasMapXY(mode)) && incl(ItemXY) {
		c.integer("x coordinate", &b.X)
		c.integer("y coordinate", &b.Y)
	}
	if incl(ItemVariableValues) {
		if len(b.VariableValues) != len(f.Variables) {
			b.VariableValues = make([]float64, len(f.Variables))
		}
		for i := range b.VariableValues {
			c.real("value of experimental variable "+quoteLabel(f.Variables[i].Label), &b.VariableValues[i])
		}
	}
	if incl(ItemSourceLabel) {
		c.text("analysis source label", &b.SourceLabel)
	}
	if cond(depthProfile(mode)) && incl(ItemSputterIon) {
		c.integer("sputtering ion or atom atomic number", &b.SputterZ)
		c.integer("number of atoms in sputtering ion or atom particle", &b.SputterAtoms)
		c.integer("sputtering ion or atom charge sign and number", &b.SputterCharge)
	}
	if incl(ItemSourceEnergy) {
		c.real("analysis source characteristic energy", &b.SourceEnergy)
	}
	if incl(ItemSourceStrength) {
		c.real("analysis source strength", &b.SourceStrength)
	}
	if incl(ItemSourceWidth) {
		c.real("analysis source beam width x", &b.SourceWidthX)
		c.real("analysis source beam width y", &b.SourceWidthY)
	}
	if cond(hasFieldOfView(mode)) && incl(ItemFieldOfView) {
		c.real("field of view x", &b.FieldOfViewX)
		c.real("field of view y", &b.FieldOfViewY)
	}
	if cond(hasLinescan(mode)) && incl(ItemLinescan) {
		c.integer("first linescan start x coordinate", &b.Linescan[0])
		c.integer("first linescan start y coordinate", &b.Linescan[1])
		c.integer("first linescan finish x coordinate", &b.Linescan[2])
		c.integer("first linescan finish y coordinate", &b.Linescan[3])
		c.integer("last linescan finish x coordinate", &b.Linescan[4])
		c.integer("last linescan finish y coordinate", &b.Linescan[5])
	}
	if incl(ItemSourceAngles) {
		c.real("analysis source polar angle of incidence", &b.SourcePolar)
		c.real("analysis source azimuth", &b.SourceAzimuth)
	}
	if incl(ItemAnalyserMode) {
		c.text("analyser mode", &b.AnalyserMode)
	}
	if incl(ItemPassEnergy) {
		c.real("analyser pass energy or retard ratio or mass resolution", &b.PassEnergy)
	}
	if cond(isAESDiff(b.Technique)) && incl(ItemDiffWidth) {
		c.real("differential width", &b.DifferentialWidth)
	}
	if incl(ItemMagnification) {
		c.real("magnification of analyser transfer lens", &b.Magnification)
	}
	if incl(ItemWorkFunction) {
		c.real("analyser work function or acceptance energy of atom or ion", &b.WorkFunction)
	}
	if incl(ItemTargetBias) {
		c.real("target bias", &b.TargetBias)
	}
	if incl(ItemAnalysisWidth) {
		c.real("analysis width x", &b.AnalysisWidthX)
		c.real("analysis width y", &b.AnalysisWidthY)
	}
	if incl(ItemTakeOff) {
		c.real("analyser axis take off polar angle", &b.TakeOffPolar)
		c.real("analyser axis take off azimuth", &b.TakeOffAzimuth)
	}
	if incl(ItemSpecies) {
		c.text("species label", &b.Species)
	}
	if incl(ItemTransition) {
		c.text("transition or charge state label", &b.Transition)
		c.integer("charge of detected particle", &b.ParticleCharge)
	}
	if cond(f.ScanMode == ScanRegular) && incl(ItemAbscissa) {
		c.text("abscissa label", &b.AbscissaLabel)
		c.text("abscissa units", &b.AbscissaUnit)
		c.real("abscissa start", &b.AbscissaStart)
		c.real("abscissa increment", &b.AbscissaStep)
	}
	if incl(ItemVariables) {
		n := len(b.Variables)
		c.count("number of corresponding variables", &n, 2)
		if c.failed() {
			return
		}
		if len(b.Variables) != n {
			b.Variables = make([]Variable, n)
		}
		for i := range b.Variables {
			c.text("corresponding variable label", &b.Variables[i].Label)
			c.text("corresponding variable units", &b.Variables[i].Unit)
		}
	}
	if incl(ItemSignalMode) {
		c.text("signal mode", &b.SignalMode)
	}
	if incl(ItemCollectionTime) {
		c.real("signal collection time", &b.CollectionTime)
	}
	if incl(ItemScans) {
		c.integer("number of scans to compile this block", &b.Scans)
	}
	if incl(ItemTimeCorrection) {
		c.real("signal time correction", &b.TimeCorrection)
	}
	if cond(depthProfile(mode) && sputterSourceTechnique(b.Technique)) && incl(ItemSputterSource) {
		c.real("sputtering source energy", &b.SputterEnergy)
		c.real("sputtering source beam current", &b.SputterCurrent)
		c.real("sputtering source width x", &b.SputterWidthX)
		c.real("sputtering source width y", &b.SputterWidthY)
		c.real("sputtering source polar angle of incidence", &b.SputterPolar)
		c.real("sputtering source azimuth", &b.SputterAzimuth)
		c.text("sputtering mode", &b.SputterMode)
	}
	if incl(ItemTilt) {
		c.real("sample normal polar angle of tilt", &b.TiltPolar)
		c.real("sample normal tilt azimuth", &b.TiltAzimuth)
		c.real("sample rotation angle", &b.Rotation)
	}
	if incl(ItemParams) {
		n := len(b.Params)
		c.count("number of additional numerical parameters", &n, 3)
		if c.failed() {
			return
		}
		if len(b.Params) != n {
			b.Params = make([]Param, n)
		}
		for i := range b.Params {
			c.text("additional numerical parameter label", &b.Params[i].Label)
			c.text("additional numerical parameter units", &b.Params[i].Unit)
			c.real("additional numerical parameter value", &b.Params[i].Value)
		}
	}
	// Future upgrade block entries are not in the inclusion list: every
	// block carries them (checkOmitted, setting all, compares items only).
	if !all {
		c.textLines("future upgrade block entry", &b.Future, f.FutureBlockEntries)
	}
}

func quoteLabel(s string) string {
	if len(s) > 40 {
		s = s[:40]
	}
	return "\"" + s + "\""
}

func trimSpace(s string) string { return strings.TrimSpace(s) }

func equalFold(a, b string) bool { return strings.EqualFold(a, b) }

func lowerASCII(s string) string { return strings.ToLower(s) }
