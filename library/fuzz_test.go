package library

import (
	"bytes"
	"fmt"
	"testing"
)

// FuzzDecodeEntry feeds entry files to the reader: it must never panic,
// and whatever it accepts must encode and decode to the same entry.
func FuzzDecodeEntry(f *testing.F) {
	e := tiEntry("seed", "metal", 383, 1)
	if err := normalize(e); err != nil {
		f.Fatal(err)
	}
	good, _ := encodeEntry(e)
	f.Add(good)
	f.Add(good[:len(good)/2])
	f.Add([]byte(`{"format":"statemix-entry","version":1,"id":"000000000000","kind":"reference","spectrum":{"axis":{"start_ev":0,"step_ev":0,"n":2},"values":[1,2],"mode":"direct"}}`))
	f.Add([]byte(`{"format":"statemix-entry","version":1,"spectrum":{"axis":{"values_ev":[2,1]},"values":[1,2],"mode":"sideways"}}`))
	f.Add([]byte(`{"format":"statemix-entry","version":1,"kind":"measurement","fit":{"a":[1,2,3]}}`))
	f.Add([]byte(`null`))
	f.Add([]byte(`{} {}`))
	f.Fuzz(func(t *testing.T, b []byte) {
		e, err := decodeEntry(b)
		if err != nil {
			return
		}
		if err := checkStored(e, e.ID, e.Kind.folder()); err != nil {
			return
		}
		b2, err := encodeEntry(e)
		if err != nil {
			t.Fatalf("accepted entry does not encode: %v", err)
		}
		e2, err := decodeEntry(b2)
		if err != nil {
			t.Fatalf("re-encoded entry does not decode: %v", err)
		}
		b3, _ := encodeEntry(e2)
		if !bytes.Equal(b2, b3) {
			t.Fatalf("entry changes on a second round trip")
		}
	})
}

// FuzzReadBundle feeds archives to the bundle reader: it must never panic
// and must accept only bundles whose every entry checks out.
func FuzzReadBundle(f *testing.F) {
	s, err := Create(f.TempDir())
	if err != nil {
		f.Fatal(err)
	}
	if _, _, err := s.Add(tiEntry("a", "metal", 383, 1), tiEntry("b", "oxide", 388, 2)); err != nil {
		f.Fatal(err)
	}
	var buf bytes.Buffer
	if _, err := s.Export(&buf, ExportOptions{}); err != nil {
		f.Fatal(err)
	}
	good := buf.Bytes()
	f.Add(good)
	f.Add(good[:len(good)-8])
	f.Add(good[:len(good)/3])
	f.Add([]byte{0x1f, 0x8b})
	f.Add([]byte("not a bundle"))
	f.Fuzz(func(t *testing.T, b []byte) {
		_, es, err := ReadBundle(bytes.NewReader(b), "fuzz.tar.gz")
		if err != nil {
			return
		}
		for _, e := range es {
			if id, err := ComputeID(e); err != nil || id != e.ID {
				t.Fatalf("accepted entry %s hashes to %s (%v)", e.ID, id, err)
			}
		}
	})
}

// FuzzParseFilter checks the query parser never panics and that what it
// accepts can be applied.
func FuzzParseFilter(f *testing.F) {
	for _, q := range []string{`element:Ti state:nitride`, `name:"Ti foil" tag.lab:north`, `kind:measurement`, `"`, `a:`, `tag.:x`, ``, `element:Ti element:Cu`} {
		f.Add(q)
	}
	e := tiEntry("x", "metal", 383, 1)
	f.Fuzz(func(t *testing.T, q string) {
		flt, err := ParseFilter(q)
		if err != nil {
			return
		}
		flt.Match(e)
	})
}

// FuzzParseCatalog feeds catalogue files to the parser: it must never
// panic, and whatever it accepts must encode and parse back to the same
// rows.
func FuzzParseCatalog(f *testing.F) {
	good := newCatalog(3, []catRow{
		{ID: "0123456789ab", Kind: KindReference, Name: "Ti metal", Element: "Ti", Transition: "L3M23M23", State: "metal",
			Mode: "derivative", N: 300, Lo: 330, Hi: 479.5, Feature: 383.25, HasFeature: true},
		{ID: "0123456789ac", Kind: KindMeasurement, Name: "tab\tname", Mode: "direct", N: 2, Lo: 1, Hi: 2},
		{ID: "0123456789ad", Kind: KindReference, Bad: true},
	}).encode()
	f.Add(good)
	f.Add(good[:len(good)/2])
	f.Add([]byte(catalogFormat + "\t1\t0\t0\t0\t0\n"))
	f.Add([]byte(catalogFormat + "\t1\t0\t1\t5\t-5\n0123456789ab\tr\tok\t\"unterminated\t\t\t\t\t1\t0\t0\t\n"))
	f.Add([]byte(catalogFormat + "\t1\t-1\t0\t0\t0\n"))
	f.Add([]byte(""))
	f.Fuzz(func(t *testing.T, b []byte) {
		c, err := parseCatalog(b)
		if err != nil {
			return
		}
		c2, err := parseCatalog(c.encode())
		if err != nil {
			t.Fatalf("accepted catalogue does not parse after encoding: %v", err)
		}
		if c2.Revision != c.Revision || c2.DirTimes != c.DirTimes || len(c2.rows) != len(c.rows) {
			t.Fatalf("round trip: revision %d, %d rows; want %d, %d", c2.Revision, len(c2.rows), c.Revision, len(c.rows))
		}
		for i := range c.rows {
			a, b := c.rows[i], c2.rows[i]
			// NaN != NaN: compare the numbers by their text.
			if fmt.Sprint(a) != fmt.Sprint(b) {
				t.Fatalf("row %d: %+v, after a round trip %+v", i, a, b)
			}
		}
	})
}
