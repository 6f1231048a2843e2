package main

// The demo's invented scenario. ALL DATA ARE SYNTHETIC: the lab, its
// instrument, the samples and the numbers are made up, and nothing comes
// from a real measurement, product or dataset.
//
// The Northgate process lab (invented) has annealed wafer NG-0412 at
// 450 °C and asks two questions: did the titanium nitride diffusion barrier
// on die 7 oxidise, and how thick is the native oxide on aluminium bond pad
// P3? It records its own standards (Ti foil, TiN film and TiO2 film for the
// Ti LMM lines; Al foil and an Al2O3 film for Al KLL), a spot on the
// barrier, a spot on the pad, a sputter depth profile through the oxidised
// barrier, and a 32 x 32 spectrum image of pad P7, cleaned after the
// anneal, around a corrosion spot.

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"

	"statemix/lineshape"
	"statemix/lineshape/format"
	"statemix/lineshape/format/npy"
	"statemix/lineshape/quant"
)

// The invented standards' direct lineshapes. Line energies follow handbook
// values loosely (Ti LMM derivative peaks near 387 and 418 eV, N KLL near
// 379 eV, Al KLL near 1396 eV for the metal and 1387 eV for the oxide;
// DOMAIN.md, from memory); widths, tails, losses and intensities are made
// up. The intensities are those of each pure standard under the lab's
// conditions: fewer Ti atoms per volume in TiO2 give it less signal.
var (
	demoTiMetal = demoState{
		Lines: []demoLine{
			{E0: 383.0, Area: 2.4e5, Sigma: 2.2, Tail: 3.0}, // L3M23M23
			{E0: 415.5, Area: 4.0e5, Sigma: 1.9, Tail: 2.5}, // L3M23V
			{E0: 447.0, Area: 0.6e5, Sigma: 2.4, Tail: 3.0}, // L3VV
		},
		Losses: []demoLoss{{Delta: 17.5, Rel: 0.22, Width: 2.5, Order: 2}}, // bulk plasmon
		Step:   0.003,
	}
	demoTiN = demoState{
		Lines: []demoLine{
			{E0: 376.5, Area: 2.2e5, Sigma: 2.6, Tail: 3.0}, // N KL23L23, on top of Ti L3M23M23
			{E0: 382.0, Area: 1.9e5, Sigma: 2.3, Tail: 3.0}, // Ti L3M23M23
			{E0: 413.0, Area: 3.0e5, Sigma: 2.2, Tail: 2.8}, // Ti L3M23V
			{E0: 445.0, Area: 0.4e5, Sigma: 2.6, Tail: 3.0}, // Ti L3VV
		},
		Losses: []demoLoss{{Delta: 24.0, Rel: 0.15, Width: 4, Order: 1}},
		Step:   0.003,
	}
	demoTiO2 = demoState{
		Lines: []demoLine{
			{E0: 380.5, Area: 2.0e5, Sigma: 2.6, Tail: 3.2}, // L3M23M23
			{E0: 405.0, Area: 1.0e5, Sigma: 2.6, Tail: 3.0}, // L3M23V, split by the O 2p band
			{E0: 410.0, Area: 1.7e5, Sigma: 1.9, Tail: 2.5},
		},
		Losses: []demoLoss{{Delta: 13.5, Rel: 0.14, Width: 5, Order: 1}}, // interband loss
		Step:   0.0035,
	}
	demoAlMetal = demoState{
		Lines: []demoLine{{E0: 1393.0, Area: 2.5e5, Sigma: 1.5, Tail: 2.2}}, // KL23L23
		Losses: []demoLoss{
			{Delta: 15.3, Rel: 0.30, Width: 1.8, Order: 3}, // bulk plasmons
			{Delta: 10.6, Rel: 0.08, Width: 1.5, Order: 1}, // surface plasmon
		},
		Step: 0.002,
	}
	demoAl2O3 = demoState{
		Lines:  []demoLine{{E0: 1384.5, Area: 2.0e5, Sigma: 2.4, Tail: 2.8}},
		Losses: []demoLoss{{Delta: 22, Rel: 0.18, Width: 6, Order: 1}},
		Step:   0.003,
	}
)

// The lab's two recording set-ups (10 keV, 20 nA beam): the Ti LMM region
// with 2 eV peak-to-peak lock-in modulation for every spectrum, and the
// Al KLL region, whose standards the lab keeps as direct spectra and whose
// unknowns it records with 3 eV modulation.
var (
	demoTiRegion = demoInstrument{Start: 330, Step: 0.5, N: 281, B: 1.2e5, EB: 400, M: 1.5, ModulationEV: 2}
	demoAlRegion = demoInstrument{Start: 1330, Step: 0.5, N: 201, B: 4e4, EB: 1400, M: 1.3}
	demoAlModEV  = 3.0
)

// demoTakeOffDeg is the analyser take-off angle from the surface the pad
// files record.
const demoTakeOffDeg = 45.0

// demoTruth is what the demo planted: the "stated truth" it prints for
// comparison and its test checks against.
type demoTruth struct {
	// Barrier spot B2: fraction of pure-standard signal per state.
	Barrier map[string]float64 `json:"barrier"`
	// Pad P3: fractions, and the oxide thickness in nm that gave them.
	Pad         map[string]float64 `json:"pad"`
	PadOxideNM  float64            `json:"pad_oxide_nm"`
	PadLambdaNM float64            `json:"pad_lambda_nm"` // TPP-2M IMFP of Al2O3 used for the attenuation
	// Depth profile: oxide over nitride, the interface depth (50 %
	// crossing) and the 16-84 % width (2 sigma of the Gaussian broadening).
	InterfaceNM         float64 `json:"interface_nm"`
	InterfaceWidthNM    float64 `json:"interface_width_nm"`
	SputterRateNMPerMin float64 `json:"sputter_rate_nm_per_min"`
	ProfileSteps        int     `json:"profile_steps"`
	// Map: mean fraction per state over the image and the planted field.
	MapMean    map[string]float64 `json:"map_mean"`
	MapW       int                `json:"map_width"`
	MapH       int                `json:"map_height"`
	MapOxide   []float64          `json:"-"` // planted oxide fraction per pixel, row-major
	MapShiftLo float64            `json:"map_shift_lo_ev"`
	MapShiftHi float64            `json:"map_shift_hi_ev"`
}

// demoFiles are the paths of what the synthesis wrote, relative to the demo
// folder.
type demoFiles struct {
	TiFoil, TiN, TiO2, AlFoil, Al2O3 string
	Barrier, Pad, Profile, Map       string
}

// demoMeta fills the acquisition metadata the invented lab's files carry.
func demoMeta(s *lineshape.Spectrum, sample string, dwell float64, comment string) {
	s.Meta.Sample = sample
	s.Meta.BeamEnergyKeV = 10
	s.Meta.BeamCurrentNA = 20
	s.Meta.DwellS = 0.1 * dwell
	s.Meta.Scans = demoCounts
	s.Meta.EnergyReference = "fermi"
	if s.Mode == lineshape.Derivative {
		s.Meta.Technique = "AES diff"
	} else {
		s.Meta.Technique = "AES dir"
	}
	s.Meta.Comments = []string{
		"SYNTHETIC DATA made by statemix demo: invented lab, sample and numbers",
		comment,
	}
}

// demoPadFractions returns the coefficients (fractions of pure-standard
// signal) of oxide and metal for a uniform oxide of thickness d nm on the
// metal: the oxide standard's signal grows as 1 - exp(-d / (L sin theta)),
// the metal's is attenuated by exp(-d / (L sin theta)) (the model behind
// the Strohmeier equation that statemix fit --overlayer inverts).
func demoPadFractions(d, lambda, takeOff float64) (oxide, metal float64) {
	x := d / (lambda * math.Sin(takeOff*math.Pi/180))
	return -math.Expm1(-x), math.Exp(-x)
}

// demoOxideInProfile is the TiO2 fraction at depth z nm of an oxide on
// nitride with the interface at z0 and Gaussian depth resolution sigma.
func demoOxideInProfile(z, z0, sigma float64) float64 {
	return 0.5 * math.Erfc((z-z0)/(math.Sqrt2*sigma))
}

// synthesizeDemo writes the standards and unknowns of the scenario into
// dir and returns what was planted. progress, if not nil, is called with
// the spectra done and the total. Every random number comes from
// generators with fixed seeds, so the files are the same on every run.
func synthesizeDemo(dir string, progress func(done, total int)) (*demoTruth, *demoFiles, error) {
	for _, sub := range []string{"standards", "unknowns", "profile", "map"} {
		if err := os.MkdirAll(filepath.Join(dir, sub), 0o755); err != nil {
			return nil, nil, err
		}
	}
	const (
		profileSteps = 19
		mapW, mapH   = 32, 32
	)
	total := 7 + profileSteps + mapW*mapH
	done := 0
	tick := func(n int) {
		done += n
		if progress != nil {
			progress(done, total)
		}
	}
	files := &demoFiles{
		TiFoil: "standards/ti-foil.vms", TiN: "standards/tin-film.vms", TiO2: "standards/tio2-film.vms",
		AlFoil: "standards/al-foil.csv", Al2O3: "standards/al2o3-film.csv",
		Barrier: "unknowns/barrier-B2.vms", Pad: "unknowns/pad-P3.vms",
		Profile: "profile/barrier-depth.vms", Map: "map/pad-P7-map.npy",
	}
	write := func(rel string, specs []*lineshape.Spectrum, fmtName string) error {
		if err := format.WriteFile(filepath.Join(dir, rel), specs, fmtName); err != nil {
			return fmt.Errorf("demo: writing %s: %w", rel, err)
		}
		return nil
	}
	t := &demoTruth{}

	// Standards, recorded at full dwell (dwell 1): one seed each.
	stds := []struct {
		rel, sample string
		st          demoState
		in          demoInstrument
		seed        uint64
	}{
		{files.TiFoil, "STD-Ti-foil", demoTiMetal, demoTiRegion, 11},
		{files.TiN, "STD-TiN-film", demoTiN, demoTiRegion, 12},
		{files.TiO2, "STD-TiO2-film", demoTiO2, demoTiRegion, 13},
		{files.AlFoil, "STD-Al-foil", demoAlMetal, demoAlRegion, 14},
		{files.Al2O3, "STD-Al2O3-film", demoAl2O3, demoAlRegion, 15},
	}
	for _, s := range stds {
		rng := rand.New(rand.NewPCG(s.seed, 2026))
		sp, err := s.in.record(rng, []demoComponent{{s.st, 1}}, 0, 1, 1)
		if err != nil {
			return nil, nil, err
		}
		demoMeta(sp, s.sample, 1, "reference standard, sputter-cleaned")
		f := format.FormatVAMAS
		if filepath.Ext(s.rel) == ".csv" {
			f = format.FormatCSV
		}
		if err := write(s.rel, []*lineshape.Spectrum{sp}, f); err != nil {
			return nil, nil, err
		}
		tick(1)
	}

	// Barrier spot B2: mostly nitride, partly oxidised, no metallic Ti; a
	// small energy-scale offset; half the standards' dwell.
	t.Barrier = map[string]float64{"metal": 0, "nitride": 0.64, "oxide": 0.36}
	{
		rng := rand.New(rand.NewPCG(21, 2026))
		sp, err := demoTiRegion.record(rng, []demoComponent{{demoTiN, 0.64}, {demoTiO2, 0.36}}, 0.4, 1.05, 0.5)
		if err != nil {
			return nil, nil, err
		}
		demoMeta(sp, "NG-0412 die 7 barrier spot B2", 0.5, "after 450 C anneal")
		if err := write(files.Barrier, []*lineshape.Spectrum{sp}, format.FormatVAMAS); err != nil {
			return nil, nil, err
		}
		tick(1)
	}

	// Pad P3: a uniform native oxide of 3.0 nm on the aluminium, seen at
	// 45 degrees take-off. The attenuation uses the TPP-2M IMFP of Al2O3 at
	// 1380 eV, the centre of the window the fit will use (the IMFP changes
	// by about 0.5 % over 10 eV, far below the tolerance).
	t.PadOxideNM = 3.0
	mat, err := quant.LookupMaterial("Al2O3")
	if err != nil {
		return nil, nil, err
	}
	imfp, err := quant.TPP2M(mat, 1380)
	if err != nil {
		return nil, nil, err
	}
	t.PadLambdaNM = imfp.IMFP
	ox, me := demoPadFractions(t.PadOxideNM, t.PadLambdaNM, demoTakeOffDeg)
	t.Pad = map[string]float64{"oxide": ox / (ox + me), "metal": me / (ox + me)}
	alDeriv := demoAlRegion
	alDeriv.ModulationEV = demoAlModEV
	{
		rng := rand.New(rand.NewPCG(22, 2026))
		sp, err := alDeriv.record(rng, []demoComponent{{demoAl2O3, ox}, {demoAlMetal, me}}, -0.3, 1, 0.5)
		if err != nil {
			return nil, nil, err
		}
		demoMeta(sp, "NG-0412 bond pad P3", 0.5, "as received after anneal")
		sp.Meta.TakeOffDeg = demoTakeOffDeg
		if err := write(files.Pad, []*lineshape.Spectrum{sp}, format.FormatVAMAS); err != nil {
			return nil, nil, err
		}
		tick(1)
	}

	// Depth profile through the oxidised barrier: TiO2 over TiN, the
	// interface at 6.0 nm, 0.8 nm Gaussian depth resolution, 2.4 nm/min,
	// a step every 12 s.
	t.InterfaceNM, t.InterfaceWidthNM, t.SputterRateNMPerMin, t.ProfileSteps = 6.0, 1.6, 2.4, profileSteps
	var steps []*lineshape.Spectrum
	for i := range profileSteps {
		rng := rand.New(rand.NewPCG(100+uint64(i), 2026))
		ts := 12 * float64(i)
		z := ts * t.SputterRateNMPerMin / 60
		fo := demoOxideInProfile(z, t.InterfaceNM, t.InterfaceWidthNM/2)
		sp, err := demoTiRegion.record(rng, []demoComponent{{demoTiO2, fo}, {demoTiN, 1 - fo}}, 0, 1, 0.5)
		if err != nil {
			return nil, nil, err
		}
		demoMeta(sp, "NG-0412 die 7 depth profile", 0.5, fmt.Sprintf("Ar+ 1 keV, step %d", i+1))
		sp.Meta.SputterTimeS = &ts
		steps = append(steps, sp)
		tick(1)
	}
	if err := write(files.Profile, steps, format.FormatVAMAS); err != nil {
		return nil, nil, err
	}

	// Spectrum image of pad P7, cleaned: oxide coefficient 0.25 with a corrosion
	// spot (Gaussian, 5 pixels) reaching 0.80, the rest metal; a charging
	// shift growing from -0.3 to +0.3 eV across the image; 1/20 of the
	// standards' dwell per pixel.
	t.MapW, t.MapH = mapW, mapH
	t.MapShiftLo, t.MapShiftHi = -0.3, 0.3
	t.MapOxide = make([]float64, mapW*mapH)
	cube := make([]float64, 0, mapW*mapH*alDeriv.N)
	sum := 0.0
	for y := range mapH {
		for x := range mapW {
			rng := rand.New(rand.NewPCG(1000+uint64(y*mapW+x), 2026))
			dx, dy := float64(x-20), float64(y-11)
			fo := 0.25 + 0.55*math.Exp(-(dx*dx+dy*dy)/(2*5*5))
			t.MapOxide[y*mapW+x] = fo
			sum += fo
			shift := t.MapShiftLo + (t.MapShiftHi-t.MapShiftLo)*float64(x)/float64(mapW-1)
			sp, err := alDeriv.record(rng, []demoComponent{{demoAl2O3, fo}, {demoAlMetal, 1 - fo}}, shift, 1, 0.05)
			if err != nil {
				return nil, nil, err
			}
			cube = append(cube, sp.Y...)
		}
		tick(mapW)
	}
	mean := sum / float64(mapW*mapH)
	t.MapMean = map[string]float64{"oxide": mean, "metal": 1 - mean}
	mp := filepath.Join(dir, files.Map)
	if err := npy.WriteFile(mp, []int{mapH, mapW, alDeriv.N}, cube, "<f4"); err != nil {
		return nil, nil, fmt.Errorf("demo: writing %s: %w", files.Map, err)
	}
	if err := npy.WriteSidecar(mp, npy.Sidecar{StartEV: alDeriv.Start, StepEV: alDeriv.Step, Mode: "derivative", PixelUM: 2, ModulationEV: alDeriv.ModulationEV}); err != nil {
		return nil, nil, fmt.Errorf("demo: writing the sidecar of %s: %w", files.Map, err)
	}
	return t, files, nil
}
