package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"image"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"

	"github.com/spf13/cobra"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"statemix/cmd/statemix/render"
	"statemix/lineshape"
	"statemix/lineshape/fit"
	"statemix/lineshape/format"
	"statemix/lineshape/format/npy"
	"statemix/lineshape/series"
)

// mapOptions holds the flag values of statemix map.
type mapOptions struct {
	fitOptions
	Out     string
	Workers int
}

func newMapCmd(app *App) *cobra.Command {
	opts := &mapOptions{}
	cmd := &cobra.Command{
		Use:   "map CUBE.npy|FILE",
		Short: "Fraction, shift and goodness-of-fit maps of a spectrum image",
		Long: `Fraction, shift and goodness-of-fit maps of a spectrum image.

The spectrum image is a NumPy .npy cube of shape (height, width, channels)
with its sidecar <name>.json ({"start_ev":..,"step_ev":..,"mode":..,
"pixel_um":..}, and for a derivative cube optionally "modulation_ev":.., its
peak-to-peak modulation in eV, so that --modulation is not needed), read in
tiles so that cubes larger than memory work, or an ISO 14976 file of map
blocks with x and y positions. Every pixel is fitted
with the references of --refs/--ref-file and the model flags of statemix fit,
one common shift per pixel (--shift common, the default, or none) found on a
0.1 eV grid and refined between grid points. --out DIR receives
fraction-<state>.npy and .png per component (Kindlmann colour scale, from
black to white with monotonic luminance, with a scale bar and the range in the
title), shift.npy (eV), chi2.npy (reduced chi-square) and map.json. Results do
not depend on --workers. Nothing is written if the run is interrupted.`,
		Example: `  # Three library references, shifts within 2 eV, all cores
  statemix map area7.npy --refs "Ti foil","TiO2 film","TiN film" --max-shift 2 --out area7-maps`,
		Args: oneFileArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.File = args[0]
			opts.command = reproduceCommand(cmd, args)
			return runMap(app, opts)
		},
	}
	registerModelFlags(app, cmd, &opts.fitOptions, modelFlags{Like: "the first pixel", Overlap: "spectra"})
	f := cmd.Flags()
	f.StringVar(&opts.Out, "out", "", "output folder `DIR` (default <CUBE>-map beside the cube)")
	f.IntVar(&opts.Workers, "workers", 0, "fit with `N` goroutines (default all cores)")
	_ = cmd.MarkFlagDirname("out")
	_ = cmd.RegisterFlagCompletionFunc("workers", cobra.NoFileCompletions)
	return cmd
}

// openMapCube opens a .npy cube (by its magic) or reads map blocks from
// any other file format.ReadFile knows. The returned closer may be nil.
func openMapCube(path string) (series.Cube, io.Closer, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	head := make([]byte, 512)
	n, _ := io.ReadFull(f, head)
	f.Close()
	if format.Detect(head[:n]) == format.KindNPY {
		if sc := npy.SidecarPath(path); !fileExists(sc) {
			return nil, nil, badInputf("%s: no sidecar %s: a .npy spectrum image needs one beside it, such as "+
				`{"start_ev": 1330, "step_ev": 0.5, "mode": "derivative", "pixel_um": 2}`, path, sc)
		}
		c, err := series.OpenNPY(path)
		if err != nil {
			return nil, nil, err
		}
		return c, c, nil
	}
	specs, err := format.ReadFile(path, format.Options{})
	if err != nil {
		return nil, nil, err
	}
	c, err := series.CubeFromSpectra(specs, path)
	return c, nil, err
}

// fileExists reports whether path names an existing file or folder.
func fileExists(path string) bool {
	_, err := os.Stat(path)
	return err == nil
}

func runMap(app *App, opts *mapOptions) error {
	if err := parseFitFlags(&opts.fitOptions); err != nil {
		return err
	}
	if opts.fit.Shift == fit.ShiftEach {
		return usageErrorf("--shift each: maps fit one common shift per pixel (use common or none)")
	}
	if opts.Workers < 0 {
		return usageErrorf("--workers %d: want a number of goroutines (0 for all cores)", opts.Workers)
	}
	if opts.Out == "" {
		opts.Out = strings.TrimSuffix(opts.File, filepath.Ext(opts.File)) + "-map"
	}
	cube, closer, err := openMapCube(opts.File)
	if err != nil {
		return err
	}
	if closer != nil {
		defer closer.Close()
	}
	h, w, c := cube.Dims()
	// The first pixel stands for the image where the references are
	// chosen by similarity (--suggest).
	first := make([]float64, c)
	if err := cube.ReadPixels(first, 0, 1); err != nil {
		return err
	}
	probe, err := lineshapeFromPixel(cube, first)
	if err != nil {
		return err
	}
	refs, err := gatherReferences(app, probe, &opts.fitOptions)
	if err != nil {
		return err
	}
	bar := newProgress(app, h*w, "map")
	res, err := series.Map(app.Ctx, cube, refs, series.MapOptions{Fit: opts.fit, Workers: opts.Workers, Progress: bar.Func()})
	bar.Finish()
	if err != nil {
		if errors.Is(err, context.Canceled) {
			return fmt.Errorf("map: interrupted: nothing written to %s", opts.Out)
		}
		return fitError(err)
	}
	pixelUM := 0.0
	if nc, ok := cube.(*series.NPYCube); ok {
		pixelUM = nc.Sidecar().PixelUM
	}
	names := res.FractionNames()
	files, err := res.WriteDir(opts.Out, func(tmp string) error {
		for i, name := range names {
			title := render.ComponentLabel(fitComponentOf(res.Components[i]))
			if err := writeMapPNG(filepath.Join(tmp, name+".png"), res.Fractions[i], res.Width, res.Height, pixelUM, "fraction of "+title); err != nil {
				return fmt.Errorf("%s.png: %w", name, err)
			}
		}
		return nil
	})
	if err != nil {
		return fmt.Errorf("map: writing %s: %w", opts.Out, err)
	}
	if app.JSON {
		b, err := res.MarshalJSON()
		if err != nil {
			return err
		}
		var doc map[string]any
		if err := json.Unmarshal(b, &doc); err != nil {
			return err
		}
		doc["out"], doc["files"] = opts.Out, files
		enc := json.NewEncoder(app.Out)
		enc.SetIndent("", "  ")
		return enc.Encode(doc)
	}
	out := app.Out
	workers := opts.Workers
	if workers == 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	if !app.Quiet {
		fmt.Fprintf(out, "%s: %d x %d pixels of %d channels, window %.5g-%.5g eV, %s fit, %d shifts %.3g to %.3g eV\n",
			opts.File, w, h, c, res.Window[0], res.Window[1], res.Mode, len(res.Shifts), res.Shifts[0], res.Shifts[len(res.Shifts)-1])
		fmt.Fprintf(out, "%s\n\n", mapTiming(res.Seconds, workers, w*h))
	}
	t := &render.Table{Header: []string{"component", "mean fraction (%)", "file"}, Right: []bool{false, true, false}}
	for i, comp := range res.Components {
		t.Rows = append(t.Rows, []string{render.ComponentLabel(fitComponentOf(comp)), fmtNum(100*comp.MeanFraction, "%.1f"), names[i] + ".npy/.png"})
	}
	if err := t.WriteText(out); err != nil {
		return err
	}
	finiteShift := make([]float64, 0, len(res.Shift))
	for _, v := range res.Shift {
		if !math.IsNaN(v) {
			finiteShift = append(finiteShift, v)
		}
	}
	lo, hi := minMax(finiteShift)
	fmt.Fprintf(out, "\nshift %.3g to %.3g eV (shift.npy), reduced chi-square in chi2.npy; written to %s\n", lo, hi, opts.Out)
	for _, s := range res.Warnings {
		app.Warn(s)
	}
	return nil
}

func minMax(v []float64) (lo, hi float64) {
	if len(v) == 0 {
		return math.NaN(), math.NaN()
	}
	lo, hi = v[0], v[0]
	for _, x := range v {
		lo, hi = math.Min(lo, x), math.Max(hi, x)
	}
	return lo, hi
}

// mapColors is the colour map of the fraction images: Kindlmann's
// (Kindlmann, Reinhard & Creem, IEEE Visualization 2002, as tabulated in
// gonum.org/v1/plot/palette/moreland), whose luminance rises linearly from
// black to white, so equal steps of fraction look equally different.
func mapColors() palette.ColorMap {
	cm := moreland.Kindlmann()
	cm.SetMin(0)
	cm.SetMax(1)
	return cm
}

// writeMapPNG draws a fraction map (values in [0, 1], NaN shown grey) with
// a colour bar, a scale bar (µm when pixelUM > 0, else pixels) and the
// range of the values in the title.
func writeMapPNG(path string, v []float64, w, h int, pixelUM float64, title string) error {
	cm := mapColors()
	// Pixels are enlarged by an integer factor here, so that the figure
	// shows them as blocks and not smoothed by the PNG canvas.
	k := max(1, (800+max(w, h)-1)/max(w, h))
	img := image.NewRGBA(image.Rect(0, 0, w*k, h*k))
	nan := color.RGBA{R: 0x99, G: 0x99, B: 0x99, A: 0xff}
	var vals []float64
	for r := range h {
		for c := range w {
			x := v[r*w+c]
			var col color.Color = nan
			if !math.IsNaN(x) {
				vals = append(vals, x)
				var err error
				if col, err = cm.At(math.Max(0, math.Min(1, x))); err != nil {
					return err
				}
			}
			for dy := range k {
				for dx := range k {
					img.Set(c*k+dx, r*k+dy, col)
				}
			}
		}
	}
	unit, pitch := "pixels", 1.0
	if pixelUM > 0 {
		unit, pitch = "µm", pixelUM
	}
	W, H := float64(w)*pitch, float64(h)*pitch
	p := render.NewPlot("x ("+unit+")", "y ("+unit+")")
	lo, hi := minMax(vals)
	p.Title.Text = fmt.Sprintf("%s (range %.3f to %.3f)", title, lo, hi)
	// Row 0 of the cube is drawn at the top and labelled y = 0, as the
	// image was scanned.
	p.Add(plotter.NewImage(img, 0, 0, W, H))
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0, W, 0, H
	p.Y.Tick.Marker = fromTopTicks{H}
	// Scale bar: a round length near a fifth of the width, bottom left.
	bar := niceLength(W / 5)
	x0, y0 := W*0.05, H*0.07
	white := color.RGBA{R: 0xff, G: 0xff, B: 0xff, A: 0xff}
	black := color.RGBA{A: 0xff}
	p.Add(render.Line([]float64{x0, x0 + bar}, []float64{y0, y0}, black, 4, nil))
	p.Add(render.Line([]float64{x0, x0 + bar}, []float64{y0, y0}, white, 2, nil))
	if lb, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: x0, Y: y0 + H*0.02}}, Labels: []string{fmt.Sprintf("%g %s", bar, unit)}}); err == nil {
		lb.TextStyle[0].Color = white
		lb.TextStyle[0].Font.Size = 8
		p.Add(lb)
	}
	cb := render.NewPlot("fraction (0 to 1)", "")
	cb.Add(&plotter.ColorBar{ColorMap: cm})
	cb.HideY()
	cb.X.Min, cb.X.Max = 0, 1
	// Keep the pixels about square: the image panel's height follows the
	// aspect ratio (within 1:3 and 3:1), the colour bar takes 2.5 cm.
	aspect := math.Max(1.0/3, math.Min(3, H/W))
	imgH := 11*aspect + 2 // cm, with room for the axes and title
	fig := &render.Figure{Width: 14 * vg.Centimeter, Height: vg.Length(imgH+2.5) * vg.Centimeter,
		Panels: []render.Panel{{Plot: p, Weight: imgH}, {Plot: cb, Weight: 2.5}}}
	return fig.WriteFile(path)
}

// fromTopTicks labels a y axis of height H by the distance from its top:
// round labels from the top, placed at H - label.
type fromTopTicks struct{ H float64 }

// Ticks returns the default ticks of [H - max, H - min], each moved to
// H - value.
func (f fromTopTicks) Ticks(min, max float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(f.H-max, f.H-min)
	for i := range ts {
		ts[i].Value = f.H - ts[i].Value
	}
	return ts
}

// niceLength returns 1, 2 or 5 times a power of ten at most x.
func niceLength(x float64) float64 {
	if !(x > 0) {
		return 1
	}
	e := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{5, 2, 1} {
		if m*e <= x {
			return m * e
		}
	}
	return e
}

// lineshapeFromPixel returns pixel values y of cube as a spectrum.
func lineshapeFromPixel(cube series.Cube, y []float64) (*lineshape.Spectrum, error) {
	s := &lineshape.Spectrum{Axis: cube.Axis(), Y: y, Mode: cube.Mode()}
	s.Meta.Source = cube.Name()
	s.Meta.ModulationEV = series.CubeModulation(cube)
	if err := s.Validate(); err != nil {
		return nil, &lineshape.InputError{File: cube.Name(), Block: 0, Err: err}
	}
	return s, nil
}

// fitComponentOf returns the labels of a map component as a fit.Component,
// for render.ComponentLabel.
func fitComponentOf(c series.MapComponent) fit.Component {
	return fit.Component{Ref: c.Ref, Name: c.Name, Element: c.Element, State: c.State}
}

// mapTiming says how long the fit of pixels took and how fast it ran, in
// plain numbers ("fitted in 0.0135 s with 1 worker (75852 pixels/s)").
func mapTiming(seconds float64, workers, pixels int) string {
	return fmt.Sprintf("fitted in %.3g s with %d %s (%.0f pixels/s)", seconds, workers, plural(workers, "worker", "workers"),
		float64(pixels)/math.Max(seconds, 1e-9))
}
