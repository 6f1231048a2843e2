package render

import (
	"bytes"
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"statemix/lineshape/fit"
)

// Panel is one plot of a stacked Figure with its share of the height.
type Panel struct {
	Plot   *plot.Plot
	Weight float64 // relative height; 0 counts as 1
}

// Figure is a set of panels stacked top to bottom whose data areas are
// aligned horizontally, so that they can share an x axis.
type Figure struct {
	Width, Height vg.Length // default 16 cm x 12 cm
	Panels        []Panel
}

// Draw draws the figure on c.
func (f *Figure) Draw(c draw.Canvas) {
	total := 0.0
	for _, p := range f.Panels {
		total += weight(p)
	}
	if total == 0 {
		return
	}
	h := c.Max.Y - c.Min.Y
	top := c.Max.Y
	cans := make([]draw.Canvas, len(f.Panels))
	for i, p := range f.Panels {
		ph := vg.Length(weight(p)/total) * h
		cans[i] = draw.Crop(c, 0, 0, top-ph-c.Min.Y, top-c.Max.Y)
		top -= ph
	}
	// Align the data areas: the largest left and right paddings win.
	var left, right vg.Length
	for i, p := range f.Panels {
		d := p.Plot.DataCanvas(cans[i])
		left = max(left, d.Min.X-cans[i].Min.X)
		right = max(right, cans[i].Max.X-d.Max.X)
	}
	for i, p := range f.Panels {
		d := p.Plot.DataCanvas(cans[i])
		l := left - (d.Min.X - cans[i].Min.X)
		r := right - (cans[i].Max.X - d.Max.X)
		p.Plot.Draw(draw.Crop(cans[i], l, -r, 0, 0))
	}
}

func weight(p Panel) float64 {
	if p.Weight <= 0 {
		return 1
	}
	return p.Weight
}

func (f *Figure) size() (vg.Length, vg.Length) {
	w, h := f.Width, f.Height
	if w == 0 {
		w = 16 * vg.Centimeter
	}
	if h == 0 {
		h = 12 * vg.Centimeter
	}
	return w, h
}

// WriteSVG writes the figure as SVG.
func (f *Figure) WriteSVG(w io.Writer) error {
	wd, ht := f.size()
	c := vgsvg.New(wd, ht)
	f.Draw(draw.New(c))
	_, err := c.WriteTo(w)
	return err
}

// WritePNG writes the figure as PNG at 150 dots per inch.
func (f *Figure) WritePNG(w io.Writer) error {
	wd, ht := f.size()
	c := vgimg.NewWith(vgimg.UseWH(wd, ht), vgimg.UseDPI(150), vgimg.UseBackgroundColor(color.White))
	f.Draw(draw.New(c))
	_, err := vgimg.PngCanvas{Canvas: c}.WriteTo(w)
	return err
}

// WriteFile writes the figure to path as SVG or PNG by its extension
// (.svg, .png); other extensions are an error.
func (f *Figure) WriteFile(path string) error {
	var buf bytes.Buffer
	var err error
	switch strings.ToLower(filepath.Ext(path)) {
	case ".svg":
		err = f.WriteSVG(&buf)
	case ".png":
		err = f.WritePNG(&buf)
	default:
		return fmt.Errorf("figure %s: unknown extension (want .svg or .png)", path)
	}
	if err != nil {
		return fmt.Errorf("figure %s: %w", path, err)
	}
	return os.WriteFile(path, buf.Bytes(), 0o644)
}

// InlineSVG returns the figure as an <svg> element for embedding in HTML
// (no XML prolog), scalable by CSS.
func (f *Figure) InlineSVG() (string, error) {
	var buf bytes.Buffer
	if err := f.WriteSVG(&buf); err != nil {
		return "", err
	}
	s := buf.String()
	if i := strings.Index(s, "<svg"); i >= 0 {
		s = s[i:]
	}
	return s, nil
}

// Palette is the colour sequence for components: distinct hues of similar
// weight, readable on white and in grey print.
var Palette = []color.Color{
	color.RGBA{R: 0x1b, G: 0x7f, B: 0x79, A: 0xff}, // teal
	color.RGBA{R: 0xd9, G: 0x6c, B: 0x06, A: 0xff}, // orange
	color.RGBA{R: 0x6a, G: 0x3d, B: 0x9a, A: 0xff}, // violet
	color.RGBA{R: 0xb8, G: 0x2e, B: 0x4b, A: 0xff}, // raspberry
	color.RGBA{R: 0x4d, G: 0x8b, B: 0x22, A: 0xff}, // green
	color.RGBA{R: 0x8c, G: 0x6d, B: 0x31, A: 0xff}, // ochre
	color.RGBA{R: 0x2b, G: 0x5d, B: 0xa8, A: 0xff}, // blue
}

var (
	inkData  = color.RGBA{R: 0x30, G: 0x30, B: 0x30, A: 0xff}
	inkModel = color.RGBA{R: 0x0b, G: 0x2e, B: 0x59, A: 0xff}
	inkBack  = color.RGBA{R: 0x80, G: 0x80, B: 0x80, A: 0xff}
	inkGrid  = color.RGBA{R: 0xe4, G: 0xe4, B: 0xe4, A: 0xff}
)

// NewPlot returns a plot in the house style: light grid, no top/right
// frame clutter, small type.
func NewPlot(xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	for _, ax := range []*plot.Axis{&p.X, &p.Y} {
		ax.Label.TextStyle.Font.Size = 9
		ax.Tick.Label.Font.Size = 8
		ax.Padding = 2
	}
	p.Legend.TextStyle.Font.Size = 8
	p.Legend.Top = true
	p.Legend.YOffs = -2
	p.Title.TextStyle.Font.Size = 10
	g := plotter.NewGrid()
	g.Vertical.Color, g.Horizontal.Color = inkGrid, inkGrid
	g.Vertical.Width, g.Horizontal.Width = 0.5, 0.5
	p.Add(g)
	return p
}

// Line returns a line over x and y in colour c, width w points, dashed if
// dash is not nil. It panics if the lengths differ.
func Line(x, y []float64, c color.Color, w vg.Length, dash []vg.Length) *plotter.Line {
	if len(x) != len(y) {
		panic("render: Line with mismatched lengths")
	}
	xy := make(plotter.XYs, len(x))
	for i := range x {
		xy[i] = plotter.XY{X: x[i], Y: y[i]}
	}
	l, err := plotter.NewLine(xy)
	if err != nil {
		panic("render: " + err.Error())
	}
	l.Color, l.Width, l.Dashes = c, w, dash
	return l
}

// ComponentLabel returns the legend label of a fitted component.
func ComponentLabel(c fit.Component) string {
	switch {
	case c.State != "" && c.Name != "" && c.Name != c.State:
		return c.State + " (" + c.Name + ")"
	case c.State != "":
		return c.State
	case c.Name != "":
		return c.Name
	}
	return c.Ref
}

// FitFigure draws a fit: the data, the model, each component as fitted and
// the background in the upper panel, the residual below with the +/- 2
// noise SD band. title may be empty.
func FitFigure(res *fit.Result, title string) *Figure {
	cv := res.Curves
	ylab := "dN/dE (arb. units)"
	if res.Mode.String() == "direct" {
		ylab = "N(E) (arb. units)"
	}
	top := NewPlot("", ylab)
	top.Title.Text = title
	data, err := plotter.NewScatter(xys(cv.Energy, cv.Data))
	if err != nil {
		panic("render: " + err.Error())
	}
	data.GlyphStyle.Color = inkData
	data.GlyphStyle.Radius = 1.1
	data.GlyphStyle.Shape = draw.CircleGlyph{}
	top.Add(data)
	top.Legend.Add("data", data)
	if len(res.Background) > 0 {
		bg := Line(cv.Energy, cv.Background, inkBack, 0.8, []vg.Length{4, 2})
		top.Add(bg)
		top.Legend.Add("background", bg)
	}
	for i, comp := range cv.Components {
		if res.Components[i].AtBound {
			continue
		}
		y := make([]float64, len(comp))
		for j := range comp {
			y[j] = comp[j] + cv.Background[j]
		}
		l := Line(cv.Energy, y, Palette[i%len(Palette)], 1, nil)
		top.Add(l)
		top.Legend.Add(fmt.Sprintf("%s %.1f %%", ComponentLabel(res.Components[i]), 100*res.Components[i].Fraction), l)
	}
	model := Line(cv.Energy, cv.Total, inkModel, 1.6, nil)
	top.Add(model)
	top.Legend.Add("model", model)
	// Headroom above the curves for the legend (top right), so that it
	// does not cover the highest peak: about 4 % of the range per legend row.
	if lo, hi, ok := curvesRange(cv); ok && hi > lo {
		rows := 2 + len(cv.Components)
		top.Y.Min, top.Y.Max = lo-0.03*(hi-lo), hi+0.045*float64(rows)*(hi-lo)
	}

	bot := NewPlot("kinetic energy (eV)", "residual")
	zero := Line([]float64{cv.Energy[0], cv.Energy[len(cv.Energy)-1]}, []float64{0, 0}, inkBack, 0.6, nil)
	bot.Add(zero)
	if s := res.Quality.NoiseSD; s > 0 {
		e := []float64{cv.Energy[0], cv.Energy[len(cv.Energy)-1]}
		bot.Add(Line(e, []float64{2 * s, 2 * s}, inkBack, 0.5, []vg.Length{1, 2}))
		bot.Add(Line(e, []float64{-2 * s, -2 * s}, inkBack, 0.5, []vg.Length{1, 2}))
	}
	bot.Add(Line(cv.Energy, cv.Residual, inkData, 0.8, nil))
	// Symmetric about 0 with round ticks: the largest |residual| (at least
	// the 2 SD band) sets the range.
	m := 2 * res.Quality.NoiseSD
	for _, r := range cv.Residual {
		if !math.IsNaN(r) && !math.IsInf(r, 0) {
			m = math.Max(m, math.Abs(r))
		}
	}
	if m > 0 {
		lim, ticks := SymmetricTicks(m)
		bot.Y.Min, bot.Y.Max = -lim, lim
		bot.Y.Tick.Marker = ticks
	}
	top.X.Min, top.X.Max = cv.Energy[0], cv.Energy[len(cv.Energy)-1]
	top.X.Tick.Label.Color = color.Transparent // the residual panel carries the energy labels
	bot.X.Min, bot.X.Max = top.X.Min, top.X.Max
	return &Figure{Panels: []Panel{{Plot: top, Weight: 3}, {Plot: bot, Weight: 1.2}}}
}

// SymmetricTicks returns the axis limit L >= m and ticks for the range
// [-L, L]: 0 and whole multiples of a round step (1, 2, 2.5 or 5 times a
// power of ten) chosen so that two or three ticks lie on each side, labelled
// compactly ("250", "-0.5", "1e+04").
func SymmetricTicks(m float64) (float64, plot.ConstantTicks) {
	if !(m > 0) || math.IsInf(m, 0) {
		return 1, plot.ConstantTicks{{Value: 0, Label: "0"}}
	}
	step := NiceStep(m / 3)
	k := math.Ceil(m/step - 1e-9)
	lim := k * step
	var ticks plot.ConstantTicks
	for i := -k; i <= k; i++ {
		v := i * step
		ticks = append(ticks, plot.Tick{Value: v, Label: CompactNumber(v)})
	}
	return lim, ticks
}

// NiceStep returns the smallest of 1, 2, 2.5 and 5 times a power of ten
// that is at least x (> 0).
func NiceStep(x float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, f := range []float64{1, 2, 2.5, 5, 10} {
		if f*p >= x*(1-1e-9) {
			return f * p
		}
	}
	return 10 * p
}

// CompactNumber formats a tick value with at most 4 significant digits and
// no trailing zeros ("250", "-0.05", "1.5e+05").
func CompactNumber(v float64) string {
	if math.Abs(v) < 1e-300 {
		return "0"
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// curvesRange returns the smallest and largest finite value of the data,
// the model and the components on their background.
func curvesRange(cv fit.Curves) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	see := func(v float64) {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	for i := range cv.Data {
		see(cv.Data[i])
		see(cv.Total[i])
		for _, c := range cv.Components {
			if i < len(c) && i < len(cv.Background) {
				see(c[i] + cv.Background[i])
			}
		}
	}
	return lo, hi, lo <= hi
}

func xys(x, y []float64) plotter.XYs {
	xy := make(plotter.XYs, len(x))
	for i := range x {
		xy[i] = plotter.XY{X: x[i], Y: y[i]}
	}
	return xy
}
