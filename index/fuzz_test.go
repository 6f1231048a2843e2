package index

import (
	"strings"
	"testing"
)

// FuzzDecodeVector feeds arbitrary stored-field text to the vector
// decoder: it must return an error or a vector whose encoding round trips,
// never panic.
func FuzzDecodeVector(f *testing.F) {
	s := synthDerivative(350, 450, 0.5, elementPeaks["Ti"], 0, 1)
	v, _ := newVector(s, 0)
	f.Add(v.encode())
	f.Add("")
	f.Add("AAAA")
	f.Add("AAAAAAAA")
	f.Add("not base64")
	f.Add(v.encode()[:10])
	f.Fuzz(func(t *testing.T, in string) {
		v, err := decodeVector(in)
		if err != nil {
			return
		}
		w, err := decodeVector(v.encode())
		if err != nil || w.K0 != v.K0 || len(w.Y) != len(v.Y) {
			t.Fatalf("round trip of %q: %v", in, err)
		}
	})
}

// FuzzUnknownFields scans arbitrary query strings for field names: no
// panic, and every name it reports is followed by a colon in the query.
func FuzzUnknownFields(f *testing.F) {
	for _, q := range []string{
		`element:Ti state:nitride "diffusion barrier"`, `+elemnt:Ti -stat:oxide`, `"a:b" c\:d`,
		`tags:site\=lab2`, `"unclosed name:x`, `:::`, `\`, `beam_energy_kev:>=9.5`, "",
	} {
		f.Add(q)
	}
	f.Fuzz(func(t *testing.T, q string) {
		for _, name := range UnknownFields(q) {
			if !strings.Contains(q, name+":") {
				t.Fatalf("%q: reported %q, which is not a field clause", q, name)
			}
		}
	})
}
