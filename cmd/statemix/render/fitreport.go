package render

import (
	"fmt"
	"io"
	"path/filepath"
	"time"

	"statemix/lineshape/fit"
)

// ReportInfo is what a report says about where a result came from, so that
// it can be reproduced later.
type ReportInfo struct {
	Title       string // default "statemix fit: <input file>"
	InputFile   string
	InputSHA256 string
	Block       int // 0-based block, -1 if not applicable
	// Settings are the fit settings as label/value pairs, in order.
	Settings [][2]string
	// LibraryDir and LibraryRevision identify the reference library; a
	// revision of 0 with no folder means no library was used.
	LibraryDir      string
	LibraryRevision int64
	Version         string    // statemix version
	Generated       time.Time // when the report was written
	Command         string    // command line that reproduces the result
	// Extra sections (atomic fractions, overlayer thickness, ...) placed
	// after the result.
	Extra []Section
}

// FitPage returns the report page of a fit.
func FitPage(res *fit.Result, info ReportInfo) *Page {
	title := info.Title
	if title == "" {
		title = "statemix fit: " + filepath.Base(info.InputFile)
	}
	sub := fmt.Sprintf("%s spectrum, window %.5g–%.5g eV", res.Mode, res.Window[0], res.Window[1])
	if !info.Generated.IsZero() {
		sub += ", " + info.Generated.UTC().Format("2006-01-02 15:04 UTC")
	}
	p := &Page{Title: title, Subtitle: sub}
	p.Sections = append(p.Sections, Section{Heading: "Result", Blocks: []Block{
		TableBlock(FitTable(res)),
		Paragraph(fmt.Sprintf("Fractions are coefficient shares of the references at their recorded relative intensity; intervals are 95 %% (%s).", res.Uncertainty)),
		Warnings(res.Warnings),
	}})
	p.Sections = append(p.Sections, Section{Heading: "Fit", Blocks: []Block{
		FigureBlock(FitFigure(res, ""), "Data (points), model, each component as fitted (on the background) and the background; residual below with the ±2 noise SD band."),
		KeyValues(qualityPairs(res.Quality)),
	}})
	p.Sections = append(p.Sections, info.Extra...)
	if len(info.Settings) > 0 {
		p.Sections = append(p.Sections, Section{Heading: "Settings", Blocks: []Block{KeyValues(info.Settings)}})
	}
	prov := [][2]string{{"input file", info.InputFile}}
	if info.Block >= 0 {
		prov = append(prov, [2]string{"block", fmt.Sprint(info.Block + 1)})
	}
	if info.InputSHA256 != "" {
		prov = append(prov, [2]string{"input SHA-256", info.InputSHA256})
	}
	if info.LibraryDir != "" || info.LibraryRevision != 0 {
		prov = append(prov, [2]string{"library", fmt.Sprintf("%s (revision %d)", info.LibraryDir, info.LibraryRevision)})
	}
	if info.Version != "" {
		prov = append(prov, [2]string{"statemix version", info.Version})
	}
	refs := &Table{Header: []string{"reference id", "name", "element", "state"}}
	for _, c := range res.Components {
		refs.Rows = append(refs.Rows, []string{c.Ref, c.Name, c.Element, c.State})
	}
	blocks := []Block{KeyValues(prov), TableBlock(refs)}
	if info.Command != "" {
		blocks = append(blocks, Paragraph("To reproduce:"), Preformatted(info.Command))
	}
	p.Sections = append(p.Sections, Section{Heading: "Provenance", Blocks: blocks})
	return p
}

func qualityPairs(q fit.Quality) [][2]string {
	return [][2]string{
		{"points", fmt.Sprint(q.Points)},
		{"degrees of freedom", fmt.Sprint(q.DOF)},
		{"reduced chi-square", num(q.Chi2Reduced)},
		{"R-factor Σ(y−model)²/Σy²", num(q.RFactor)},
		{"residual RMS", num(q.ResidualRMS)},
		{"noise SD (high-pass)", num(q.NoiseSD)},
		{"effective independent channels", fmt.Sprintf("%.0f (correlation factor %.3g)", float64(q.Points)/q.CorrelationFactor, q.CorrelationFactor)},
	}
}

// FitReport writes the self-contained HTML report of a fit.
func FitReport(w io.Writer, res *fit.Result, info ReportInfo) error {
	return FitPage(res, info).Write(w)
}
