package library

import (
	"archive/tar"
	"bytes"
	"compress/gzip"
	"errors"
	"io"
	"reflect"
	"strings"
	"testing"
)

// exportAll exports every entry of s.
func exportAll(t *testing.T, s *Store) []byte {
	t.Helper()
	var buf bytes.Buffer
	res, err := s.Export(&buf, ExportOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Skipped) > 0 {
		t.Fatal(res.Skipped)
	}
	return buf.Bytes()
}

func TestBundleRoundTrip(t *testing.T) {
	src := newLib(t)
	added := mustAdd(t, src, tiEntry("a", "metal", 383, 1), tiEntry("b", "oxide", 388, 2),
		&Entry{Kind: KindMeasurement, Name: "run 1", Element: "Ti", Spectrum: synth(330, 0.5, 201, 385, 3, 80, 0.2, 3),
			Fit: []byte(`{"schema":"statemix.fit/v1","components":[]}`)})
	if _, _, err := src.Edit("a", map[string]string{"note": "edited before export"}); err != nil {
		t.Fatal(err)
	}
	b := exportAll(t, src)
	dst := newLib(t)
	res, err := dst.Import(bytes.NewReader(b), ImportOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Added) != 3 || len(res.Skipped) != 0 || res.Revision != 1 {
		t.Fatalf("import: %d added, %d skipped, revision %d", len(res.Added), len(res.Skipped), res.Revision)
	}
	srcEntries, _ := src.Entries()
	for _, want := range srcEntries {
		got, err := dst.Resolve(want.ID)
		if err != nil {
			t.Fatal(err)
		}
		if !sameBits(got.Spectrum.Y, want.Spectrum.Y) {
			t.Errorf("%s: values changed", want.Name)
		}
		w := want.Clone()
		w.Revision = got.Revision // the importing library's revision
		if !reflect.DeepEqual(got, w) {
			t.Errorf("%s: metadata changed:\n got %+v\nwant %+v", want.Name, got, w)
		}
	}
	if got, _ := dst.Resolve(added[2].ID); got.Kind != KindMeasurement || string(got.Fit) != `{"schema":"statemix.fit/v1","components":[]}` {
		t.Errorf("measurement: %+v", got)
	}
	// Importing again skips identical entries and changes nothing.
	res, err = dst.Import(bytes.NewReader(b), ImportOptions{})
	if err != nil || len(res.Added) != 0 || len(res.Skipped) != 3 || dst.Revision() != 1 {
		t.Errorf("second import: %+v %v, revision %d", res, err, dst.Revision())
	}
	// A filtered export.
	f, _ := ParseFilter("state:oxide")
	var buf bytes.Buffer
	er, err := src.Export(&buf, ExportOptions{Match: f.Match, Query: "state:oxide"})
	if err != nil || len(er.Entries) != 1 || er.Entries[0].Name != "b" {
		t.Errorf("filtered export: %+v %v", er, err)
	}
	man, es, err := ReadBundle(bytes.NewReader(buf.Bytes()), "x.tar.gz")
	if err != nil || len(es) != 1 || man.Query != "state:oxide" {
		t.Errorf("read filtered bundle: %v %v %v", man, es, err)
	}
}

func TestImportNameClash(t *testing.T) {
	src := newLib(t)
	mustAdd(t, src, tiEntry("Ti metal", "metal", 383, 1), tiEntry("Ti oxide", "oxide", 388, 2))
	b := exportAll(t, src)
	dst := newLib(t)
	mine := mustAdd(t, dst, tiEntry("Ti metal", "metal", 384, 9))
	_, err := dst.Import(bytes.NewReader(b), ImportOptions{Bundle: "other-lab.tar.gz"})
	if !errors.Is(err, ErrBundleClash) || !strings.Contains(err.Error(), `"Ti metal"`) || !strings.Contains(err.Error(), mine[0].ID) {
		t.Fatalf("clash: %v", err)
	}
	if n := countEntries(t, dst); n != 1 || dst.Revision() != 1 {
		t.Fatalf("refused import changed the library: %d entries, revision %d", n, dst.Revision())
	}
	res, err := dst.Import(bytes.NewReader(b), ImportOptions{Rename: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Added) != 2 || len(res.Renamed) != 1 {
		t.Fatalf("rename import: %+v", res)
	}
	for id, n := range res.Renamed {
		if n != "Ti metal (2)" {
			t.Errorf("renamed %s to %q", id, n)
		}
		if e, err := dst.Resolve("Ti metal (2)"); err != nil || e.ID != id {
			t.Errorf("renamed entry: %v %v", e, err)
		}
	}
	// Same id, different labels: refused.
	other := newLib(t)
	mustAdd(t, other, tiEntry("Ti metal", "metal", 383, 1))
	if _, _, err := other.Edit("Ti metal", map[string]string{"state": "carbide"}); err != nil {
		t.Fatal(err)
	}
	if _, err := other.Import(bytes.NewReader(b), ImportOptions{}); !errors.Is(err, ErrBundleClash) || !strings.Contains(err.Error(), "different labels") {
		t.Errorf("same id, other labels: %v", err)
	}
	if n := countEntries(t, other); n != 1 {
		t.Errorf("refused import added entries: %d", n)
	}
}

// rewriteBundle rebuilds a bundle with each member passed through f.
func rewriteBundle(t *testing.T, b []byte, f func(name string, data []byte) []byte) []byte {
	t.Helper()
	gz, err := gzip.NewReader(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	tr := tar.NewReader(gz)
	var out bytes.Buffer
	gw := gzip.NewWriter(&out)
	tw := tar.NewWriter(gw)
	for {
		hdr, err := tr.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		data, _ := io.ReadAll(tr)
		data = f(hdr.Name, data)
		if data == nil {
			continue
		}
		hdr.Size = int64(len(data))
		tw.WriteHeader(hdr)
		tw.Write(data)
	}
	tw.Close()
	gw.Close()
	return out.Bytes()
}

func TestImportBadBundles(t *testing.T) {
	src := newLib(t)
	mustAdd(t, src, tiEntry("a", "metal", 383, 1), tiEntry("b", "oxide", 388, 2))
	good := exportAll(t, src)
	flip := func(name string, data []byte) []byte {
		if strings.HasPrefix(name, "refs/") {
			i := bytes.Index(data, []byte(`"values": [`)) + 20
			data = append([]byte(nil), data...)
			if data[i] == '1' {
				data[i] = '2'
			} else {
				data[i] = '1'
			}
		}
		return data
	}
	cases := []struct {
		name string
		b    []byte
		msg  string
	}{
		{"truncated in the middle", good[:len(good)/2], "truncated or damaged"},
		{"truncated gzip trailer", good[:len(good)-4], "truncated or damaged"},
		{"empty", nil, "not a gzip"},
		{"bad checksum", rewriteBundle(t, good, flip), "checksum mismatch"},
		{"member missing", rewriteBundle(t, good, func(n string, d []byte) []byte {
			if strings.HasPrefix(n, "refs/") {
				return nil
			}
			return d
		}), "missing from the archive"},
		{"no manifest", rewriteBundle(t, good, func(n string, d []byte) []byte {
			if n == bundleManifestName {
				return nil
			}
			return d
		}), "not a statemix bundle"},
		{"manifest not JSON", rewriteBundle(t, good, func(n string, d []byte) []byte {
			if n == bundleManifestName {
				return d[:10]
			}
			return d
		}), "not valid JSON"},
	}
	dst := newLib(t)
	mustAdd(t, dst, tiEntry("mine", "nitride", 393, 3))
	for _, c := range cases {
		_, err := dst.Import(bytes.NewReader(c.b), ImportOptions{Bundle: "in.tar.gz"})
		if !errors.Is(err, ErrBadBundle) || !strings.Contains(err.Error(), c.msg) || !strings.HasPrefix(err.Error(), "in.tar.gz") {
			t.Errorf("%s: %v, want a bundle error mentioning %q", c.name, err, c.msg)
		}
	}
	if n := countEntries(t, dst); n != 1 || dst.Revision() != 1 {
		t.Errorf("bad bundles changed the library: %d entries, revision %d", n, dst.Revision())
	}
}
