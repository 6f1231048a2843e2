package delimited

import (
	"bytes"
	"reflect"
	"strings"
	"testing"

	"statemix/lineshape"
)

// TestMetaRoundTrip: acquisition metadata is written as "# key: value"
// lines and read back into Meta exactly, with and without a header row;
// the free comments stay comments.
func TestMetaRoundTrip(t *testing.T) {
	st := 120.5
	for _, mode := range []lineshape.Mode{lineshape.Direct, lineshape.Derivative} {
		for _, noHeader := range []bool{false, true} {
			s, err := lineshape.NewUniform(1330, 0.5, []float64{1, -2, 3, 0.25, 7}, mode)
			if err != nil {
				t.Fatal(err)
			}
			s.Meta = lineshape.Meta{
				Comments:      []string{"Al KLL, pad P3", "note: not metadata"},
				Sample:        "wafer 7\npad P3",
				Technique:     "AES diff",
				BeamEnergyKeV: 10, BeamCurrentNA: 12.5, DwellS: 0.05, Scans: 8,
				ModulationEV: 2, EnergyReference: "fermi", AnalyserMode: "FRR",
				TakeOffDeg: 42.3, ExcitationEV: 1486.6, SputterTimeS: &st,
			}
			var buf bytes.Buffer
			if err := Write(&buf, s, WriteOptions{NoHeader: noHeader}); err != nil {
				t.Fatal(err)
			}
			text := buf.String()
			if !strings.Contains(text, "# modulation_ev: 2\n") || !strings.Contains(text, "# beam_energy_kev: 10\n") {
				t.Errorf("written:\n%s\nlacks the modulation and beam energy lines", text)
			}
			if got := strings.Contains(text, "# mode: "+mode.String()+"\n"); got != noHeader {
				t.Errorf("mode line written %v, want %v (only without a header):\n%s", got, noHeader, text)
			}
			back, err := Read(strings.NewReader(text), "rt.csv", Options{})
			if err != nil {
				t.Fatalf("%v\n%s", err, text)
			}
			if back.Mode != mode {
				t.Errorf("mode %v, want %v:\n%s", back.Mode, mode, text)
			}
			want := s.Meta.Clone()
			want.Sample = "wafer 7 pad P3" // line breaks become spaces
			want.Source, want.Block, want.BlockID = "rt.csv", 0, back.Meta.BlockID
			if !reflect.DeepEqual(back.Meta, want) {
				t.Errorf("meta read back\n%+v\nwant\n%+v\nfrom\n%s", back.Meta, want, text)
			}
		}
	}
}

// TestMetaComments: metadata comments with unknown keys or bad values stay
// comments; a "# mode:" comment decides the mode only where the header
// does not; Options.Mode overrides both.
func TestMetaComments(t *testing.T) {
	text := "# modulation_ev: -3\n# scans: many\n# colour: red\n# MODULATION_EV : 1.5\n# mode: direct\n100,1\n101,2\n"
	s, err := Read(strings.NewReader(text), "m.csv", Options{})
	if err != nil {
		t.Fatal(err)
	}
	if s.Meta.ModulationEV != 1.5 || s.Mode != lineshape.Direct {
		t.Errorf("modulation %v, mode %v; want 1.5 and direct", s.Meta.ModulationEV, s.Mode)
	}
	if want := []string{"modulation_ev: -3", "scans: many", "colour: red"}; !reflect.DeepEqual(s.Meta.Comments, want) {
		t.Errorf("comments %q, want %q", s.Meta.Comments, want)
	}
	s, err = Read(strings.NewReader("# mode: direct\nenergy,dN/dE\n100,1\n101,2\n"), "h.csv", Options{})
	if err != nil || s.Mode != lineshape.Derivative {
		t.Errorf("header dN/dE with a mode comment: %v, %v; want derivative", s, err)
	}
	d := lineshape.Derivative
	s, err = Read(strings.NewReader("# mode: direct\n100,1\n101,2\n"), "o.csv", Options{Mode: &d})
	if err != nil || s.Mode != lineshape.Derivative {
		t.Errorf("Options.Mode derivative with a mode comment: %v, %v", s, err)
	}
}

// TestMetaTable: a table writes the metadata its spectra share and leaves
// out what differs.
func TestMetaTable(t *testing.T) {
	a, _ := lineshape.NewUniform(100, 1, []float64{1, 2, 3}, lineshape.Derivative)
	b, _ := lineshape.NewUniform(100, 1, []float64{3, 2, 1}, lineshape.Derivative)
	a.Meta.ModulationEV, b.Meta.ModulationEV = 2, 2
	a.Meta.BeamEnergyKeV, b.Meta.BeamEnergyKeV = 5, 10
	var buf bytes.Buffer
	if err := WriteTable(&buf, []*lineshape.Spectrum{a, b}, WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	if text := buf.String(); !strings.Contains(text, "# modulation_ev: 2\n") || strings.Contains(text, "beam_energy_kev") {
		t.Errorf("table:\n%s\nwant the shared modulation and no beam energy", text)
	}
}
