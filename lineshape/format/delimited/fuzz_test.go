package delimited

import (
	"bytes"
	"errors"
	"os"
	"reflect"
	"strings"
	"testing"

	"statemix/lineshape"
)

// FuzzDelimited checks that any input gives a spectrum or an
// *lineshape.InputError, never a panic, and that what is read validates and
// survives Write and Read again.
func FuzzDelimited(f *testing.F) {
	seeds := []string{
		"1,2\n2,3\n",
		"Energy (eV),Counts\n100,5\n101,6\n102,7\n",
		"KE\tdN/dE\r\n100\t-1\r\n100.5\t2\r\n",
		"# energy_ev counts\n1 2\n2 3\n",
		"\"energy\";\"E*N(E)\";\n1;2;\n3;4;\n",
		"BE,cps\n1400,1\n1386.6,2\n",
		"e,a,b\n1,2,7\n2,3,8\n",
		"300,3\n200,2\n150,1.5\n",
		"1\t2\n1,5\t3,5\n",
		"1 2\n2 3\n3 4 5\n",
		"1 2\n2 3\n1 4\n",
		"1 2\n2 nan\n",
		"energy,counts\n",
		"",
		"#",
		"\ufeff1,2\n2,3\n",
		"1e308 1\n-1e308 2\n",
		"1e6 1\n-1e6 2\n",
		"1 1\n1.0000000000000002 2\n1.0000000000000004 3\n",
		"0x1p-3 1\n0x1p-2 2\n",
		"# modulation_ev: 2\n# beam_energy_kev: 10\n# mode: direct\n1,2\n2,3\n",
		"# scans: 0\n# sputter_time_s: 0\n# sample:\n# take_off_deg: nan\nenergy,dN/dE\n1,2\n2,3\n",
	}
	if b, err := os.ReadFile(realFile); err == nil {
		seeds = append(seeds, string(b[:2000]))
	}
	for _, s := range seeds {
		f.Add([]byte(s), uint8(0))
	}
	f.Fuzz(func(t *testing.T, data []byte, col uint8) {
		opts := Options{ValueColumn: int(col % 4), ExcitationEV: float64(col)}
		s, err := Read(bytes.NewReader(data), "fuzz", opts)
		if err != nil {
			var ie *lineshape.InputError
			if !errors.As(err, &ie) && !strings.HasPrefix(err.Error(), "delimited: ") {
				t.Fatalf("error %v (%T) is neither an InputError nor a delimited: option error", err, err)
			}
			return
		}
		if err := s.Validate(); err != nil {
			t.Fatalf("spectrum does not validate: %v", err)
		}
		var buf bytes.Buffer
		if err := Write(&buf, s, WriteOptions{}); err != nil {
			t.Fatal(err)
		}
		back, err := Read(&buf, "again", Options{})
		if err != nil {
			t.Fatalf("written spectrum does not read back: %v\n%s", err, buf.String())
		}
		if back.Len() != s.Len() || back.Mode != s.Mode {
			t.Fatalf("read back %d channels mode %v, want %d %v", back.Len(), back.Mode, s.Len(), s.Mode)
		}
		for i := range s.Y {
			if back.Y[i] != s.Y[i] {
				t.Fatalf("channel %d: %v read back as %v", i, s.Y[i], back.Y[i])
			}
		}
		want := s.Meta.Clone()
		want.Source, want.BlockID = back.Meta.Source, back.Meta.BlockID
		if !reflect.DeepEqual(back.Meta, want) {
			t.Fatalf("meta read back as %+v, want %+v\n%s", back.Meta, want, buf.String())
		}
		_, _ = ReadAll(bytes.NewReader(data), "fuzz", opts)
	})
}
