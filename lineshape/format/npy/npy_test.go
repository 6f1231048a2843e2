package npy

import (
	"bytes"
	"encoding/binary"
	"errors"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"statemix/lineshape"
)

// refValue is the formula testdata/gen.py fills its arrays with. The
// explicit float64 conversion rounds the product before the sum, as NumPy
// does: without it the Go compiler may fuse x*y+z into one FMA (it does on
// arm64, ppc64le and s390x), which changes the last bit for 6 of the first
// 24 values and breaks the bit-exact comparisons with the NumPy files.
func refValue(i int) float64 { return float64(float64(i-7)*0.37) + 1/float64(i+3) }

// TestNumPyFiles reads the files testdata/gen.py wrote with NumPy 1.24.
func TestNumPyFiles(t *testing.T) {
	cases := []struct {
		file  string
		shape []int
		dtype string
		major int
	}{
		{"cube-v1-f4.npy", []int{2, 3, 5}, "<f4", 1},
		{"map-v2-f8.npy", []int{4, 6}, "<f8", 2},
		{"vec-v3-f8.npy", []int{7}, "<f8", 3},
		{"scalar-v1-f8.npy", []int{}, "<f8", 1},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			path := filepath.Join("testdata", c.file)
			r, err := Open(path)
			if err != nil {
				t.Fatal(err)
			}
			defer r.Close()
			if !slices.Equal(r.Shape(), c.shape) || r.DType() != c.dtype {
				t.Fatalf("shape %v dtype %s, want %v %s", r.Shape(), r.DType(), c.shape, c.dtype)
			}
			if major, minor := r.Version(); major != c.major || minor != 0 {
				t.Errorf("version %d.%d, want %d.0", major, minor, c.major)
			}
			a, err := ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			if c.file == "scalar-v1-f8.npy" {
				// gen.py saves numpy.float64(2.5).
				if len(a.Data) != 1 || a.Data[0] != 2.5 {
					t.Fatalf("scalar %v, want [2.5]", a.Data)
				}
				return
			}
			for i, v := range a.Data {
				want := refValue(i)
				tol := 0.0 // float64 stored and read bit for bit
				if c.dtype == "<f4" {
					want = float64(float32(want)) // NumPy rounds to nearest float32, as Go does
				}
				if !scalar.EqualWithinAbsOrRel(v, want, tol, tol) {
					t.Errorf("element %d: %v, want %v", i, v, want)
				}
			}
			b, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			s, err := Read(bytes.NewReader(b), c.file)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(s.Data, a.Data) || !slices.Equal(s.Shape, a.Shape) {
				t.Errorf("Read and ReadFile disagree")
			}
		})
	}
}

// TestRefused checks the NumPy-written files this package must refuse.
func TestRefused(t *testing.T) {
	for file, want := range map[string]string{
		"fortran.npy":   "fortran_order is True",
		"bigendian.npy": `data type ">f8" not supported`,
		"int64.npy":     `data type "<i8" not supported`,
	} {
		_, err := ReadFile(filepath.Join("testdata", file))
		checkInputError(t, err, want)
	}
}

func checkInputError(t *testing.T, err error, want string) {
	t.Helper()
	if err == nil {
		t.Errorf("no error, want %q", want)
		return
	}
	var ie *lineshape.InputError
	if !errors.As(err, &ie) {
		t.Errorf("error %v (%T) is not a *lineshape.InputError", err, err)
	}
	if !strings.Contains(err.Error(), want) {
		t.Errorf("error %q does not say %q", err, want)
	}
}

// TestWriteMatchesNumPy compares the writer's bytes with numpy.save's.
func TestWriteMatchesNumPy(t *testing.T) {
	cases := []struct {
		file  string
		shape []int
		dtype string
	}{
		{"write-2x3-f8.npy", []int{2, 3}, "<f8"},
		{"write-5-f4.npy", []int{5}, "float32"},
	}
	for _, c := range cases {
		want, err := os.ReadFile(filepath.Join("testdata", c.file))
		if err != nil {
			t.Fatal(err)
		}
		n := 1
		for _, d := range c.shape {
			n *= d
		}
		data := make([]float64, n)
		for i := range data {
			data[i] = refValue(i)
		}
		var buf bytes.Buffer
		if err := Write(&buf, c.shape, data, c.dtype); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(buf.Bytes(), want) {
			t.Errorf("%s: bytes differ from numpy.save:\n got %q\nwant %q", c.file, buf.Bytes(), want)
		}
	}
}

func TestRoundTrip(t *testing.T) {
	shapes := [][]int{{}, {0}, {3}, {2, 5}, {3, 0, 2}, {2, 3, 4}, {1, 2, 1, 3}}
	for _, dt := range []string{"<f4", "<f8"} {
		for _, shape := range shapes {
			n := 1
			for _, d := range shape {
				n *= d
			}
			data := make([]float64, n)
			for i := range data {
				data[i] = refValue(i) * 1e3
			}
			if n > 2 {
				data[1] = math.NaN()
				data[2] = math.Inf(-1)
			}
			var buf bytes.Buffer
			if err := Write(&buf, shape, data, dt); err != nil {
				t.Fatal(err)
			}
			if buf.Len()%64 != n*map[string]int{"<f4": 4, "<f8": 8}[dt]%64 {
				t.Errorf("%s %v: header not padded to 64 bytes", dt, shape)
			}
			a, err := Read(bytes.NewReader(buf.Bytes()), "rt")
			if err != nil {
				t.Fatalf("%s %v: %v", dt, shape, err)
			}
			if !slices.Equal(a.Shape, shape) || a.DType != dt || len(a.Data) != n {
				t.Fatalf("%s %v: got shape %v dtype %s", dt, shape, a.Shape, a.DType)
			}
			for i, v := range a.Data {
				want := data[i]
				if dt == "<f4" {
					want = float64(float32(want))
				}
				// Bit-exact for f8; f4 compared with the same rounding applied.
				if !(v == want || math.IsNaN(v) && math.IsNaN(want)) {
					t.Errorf("%s %v element %d: %v, want %v", dt, shape, i, v, want)
				}
			}
		}
	}
	if err := Write(&bytes.Buffer{}, []int{1}, []float64{1}, "<i4"); err == nil {
		t.Error("dtype <i4 accepted")
	}
}

func TestWritePanics(t *testing.T) {
	defer func() {
		if r := recover(); r == nil || !strings.HasPrefix(r.(string), "npy: ") {
			t.Errorf("recover() = %v, want an npy: panic", r)
		}
	}()
	Write(&bytes.Buffer{}, []int{2, 2}, make([]float64, 3), "<f8")
}

// TestHeaderRank64 checks the header of the largest rank accepted: still
// format 1.0, padded to 64 bytes, and readable.
func TestHeaderRank64(t *testing.T) {
	shape := make([]int, 64)
	for i := range shape {
		shape[i] = 1
	}
	var buf bytes.Buffer
	if err := Write(&buf, shape, []float64{4}, "<f8"); err != nil {
		t.Fatal(err)
	}
	if b := buf.Bytes(); b[6] != 1 || (len(b)-8)%64 != 0 {
		t.Errorf("64 dimensions: version %d, length %d", b[6], len(b))
	}
	a, err := Read(&buf, "rank64")
	if err != nil || len(a.Shape) != 64 || a.Data[0] != 4 {
		t.Errorf("read back: %v %v", a, err)
	}
}

func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "cube.npy")
	data := make([]float64, 2*3*4)
	for i := range data {
		data[i] = refValue(i)
	}
	if err := os.WriteFile(path, []byte("old"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := WriteFile(path, []int{2, 3, 4}, data, "<f8"); err != nil {
		t.Fatal(err)
	}
	a, err := ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(a.Data, data) {
		t.Error("data changed")
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("folder holds %d files, want 1 (temp file left behind?)", len(ents))
	}
	if st, _ := os.Stat(path); st.Mode().Perm() != 0o644 {
		t.Errorf("mode %v, want 0644", st.Mode().Perm())
	}
	if err := WriteFile(filepath.Join(dir, "no", "such", "x.npy"), []int{1}, []float64{1}, "<f8"); err == nil {
		t.Error("write into a missing folder succeeded")
	}
	if err := WriteFile(path, []int{1}, []float64{1}, "<f2"); err == nil {
		t.Error("dtype <f2 accepted")
	}
}

// TestReadRows writes a 20x24x301 float32 cube (a real-sized tile of a
// spectrum image) and reads it back in uneven tiles and from several
// goroutines at once.
func TestReadRows(t *testing.T) {
	const h, w, c = 20, 24, 301
	data := make([]float64, h*w*c)
	for i := range data {
		data[i] = float64(float32(refValue(i % 1000)))
	}
	path := filepath.Join(t.TempDir(), "cube.npy")
	if err := WriteFile(path, []int{h, w, c}, data, "<f4"); err != nil {
		t.Fatal(err)
	}
	r, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	if r.Pixels() != h*w || r.Channels() != c || r.Len() != h*w*c {
		t.Fatalf("pixels %d channels %d len %d", r.Pixels(), r.Channels(), r.Len())
	}
	var wg sync.WaitGroup
	errs := make(chan string, 8)
	for g := range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			tile := 7 + 13*g // uneven tile sizes, the last tile short
			dst := make([]float64, tile*c)
			for p := 0; p < h*w; p += tile {
				n := min(tile, h*w-p)
				if err := r.ReadRows(dst, p, n); err != nil {
					errs <- err.Error()
					return
				}
				if !slices.Equal(dst[:n*c], data[p*c:(p+n)*c]) {
					errs <- "tile at pixel " + string(rune('0'+p%10)) + " differs"
					return
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Error(e)
	}
	func() {
		defer func() {
			if recover() == nil {
				t.Error("ReadRows past the end did not panic")
			}
		}()
		r.ReadRows(make([]float64, 2*c), h*w-1, 2)
	}()
}

// TestReadValuesShortFile checks a file truncated after Open.
func TestReadValuesShortFile(t *testing.T) {
	var buf bytes.Buffer
	Write(&buf, []int{100}, make([]float64, 100), "<f8")
	b := buf.Bytes()
	r, err := NewReader(&shortReaderAt{b, len(b) - 8}, int64(len(b)), "short")
	if err != nil {
		t.Fatal(err)
	}
	checkInputError(t, r.ReadValues(make([]float64, 100), 0), "file ends inside the data")
}

type shortReaderAt struct {
	b []byte
	n int
}

func (s *shortReaderAt) ReadAt(p []byte, off int64) (int, error) {
	return bytes.NewReader(s.b[:s.n]).ReadAt(p, off)
}

// rawV1 builds a version 1.0 file with the given dictionary and data bytes.
func rawV1(dict string, data int) []byte {
	b := []byte(magic + "\x01\x00")
	b = binary.LittleEndian.AppendUint16(b, uint16(len(dict)))
	b = append(b, dict...)
	return append(b, make([]byte, data)...)
}

func TestHostileHeaders(t *testing.T) {
	v2huge := []byte(magic + "\x02\x00\xff\xff\xff\xff{")
	cases := []struct {
		name string
		file []byte
		want string
	}{
		{"empty", nil, "too short"},
		{"magic", []byte("PK\x03\x04 not npy at all"), "no \\x93NUMPY magic"},
		{"version 4", []byte(magic + "\x04\x00\x10\x00{}"), "version 4.0 not supported"},
		{"version 1.1", []byte(magic + "\x01\x01\x10\x00{}"), "version 1.1 not supported"},
		{"v2 header 4 GiB", v2huge, "longer than"},
		{"header cut", []byte(magic + "\x01\x00\xff\x00{'descr'"), "ends inside the"},
		{"huge shape", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (1000000000000, 1000), }\n", 16), "needs"},
		{"overflow", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (4294967296, 4294967296, 4294967296), }\n", 0), "too large"},
		{"int64 overflow", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (99999999999999999999,), }\n", 0), "bad integer"},
		{"negative", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (-1, 2), }\n", 0), "non-negative"},
		{"float dim", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (2.5,), }\n", 0), "unexpected"},
		{"not dict", rawV1("['descr']\n", 0), "not a dictionary"},
		{"missing key", rawV1("{'descr': '<f8', 'shape': (2,), }\n", 16), `"fortran_order" missing`},
		{"extra key", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (2,), 'x': 1}\n", 16), `unexpected key "x"`},
		{"twice", rawV1("{'descr': '<f8', 'descr': '<f8', 'fortran_order': False, 'shape': (2,)}\n", 16), "given twice"},
		{"structured", rawV1("{'descr': [('a', '<f8')], 'fortran_order': False, 'shape': (2,), }\n", 16), "structured"},
		{"shape list", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': [2], }\n", 16), "not a tuple"},
		{"order string", rawV1("{'descr': '<f8', 'fortran_order': 'no', 'shape': (2,), }\n", 16), "not True or False"},
		{"unclosed", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (2,\n", 16), "unexpected end"},
		{"unclosed string", rawV1("{'descr: 1}\n", 0), "not closed"},
		{"escape", rawV1("{'de\\scr': 1}\n", 0), "escapes"},
		{"deep", rawV1(strings.Repeat("(", 50)+strings.Repeat(")", 50), 0), "nested too deeply"},
		{"rank", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': ("+strings.Repeat("1, ", 70)+"), }\n", 8), "more than 64"},
		{"garbage after", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (2,), } x\n", 16), "after the dictionary"},
		{"non-ascii v1", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (2,), } \xc3\xa9\n", 16), "not ASCII"},
		{"short data", rawV1("{'descr': '<f8', 'fortran_order': False, 'shape': (3,), }\n", 16), "needs 24 data bytes, file has 16"},
		{"long data", rawV1("{'descr': '<f4', 'fortran_order': False, 'shape': (3,), }\n", 16), "needs 12 data bytes, file has 16"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := NewReader(bytes.NewReader(c.file), int64(len(c.file)), "h.npy")
			checkInputError(t, err, c.want)
			var ms0, ms1 runtime.MemStats
			runtime.ReadMemStats(&ms0)
			_, err = Read(bytes.NewReader(c.file), "h.npy")
			runtime.ReadMemStats(&ms1)
			if err == nil {
				t.Fatal("Read accepted it")
			}
			// A hostile header must not buy a large allocation (1 MiB is
			// generous: Read's own buffers are 64 KiB plus 512 KiB of values).
			if d := ms1.TotalAlloc - ms0.TotalAlloc; d > 1<<20 {
				t.Errorf("Read allocated %d bytes", d)
			}
		})
	}
}

func TestPythonLiterals(t *testing.T) {
	// Spellings NumPy versions and hand-written headers use.
	for _, dict := range []string{
		`{'descr': '<f8', 'fortran_order': False, 'shape': (2,), }`,
		`{"descr":"<f8","fortran_order":False,"shape":(2,)}`,
		`{'shape': (2L,), 'fortran_order': False, 'descr': '<f8'}`,
		"{'descr': '<f8',\n 'fortran_order': False,\n 'shape': (2, )}",
	} {
		var h header
		if err := h.parseDict(dict); err != nil {
			t.Errorf("%s: %v", dict, err)
			continue
		}
		if h.dtype != "<f8" || !slices.Equal(h.shape, []int{2}) {
			t.Errorf("%s: dtype %s shape %v", dict, h.dtype, h.shape)
		}
	}
}

func BenchmarkReadRows(b *testing.B) {
	const h, w, c = 32, 32, 401
	data := make([]float64, h*w*c)
	for i := range data {
		data[i] = refValue(i % 997)
	}
	for _, dt := range []string{"f4", "f8"} {
		path := filepath.Join(b.TempDir(), "cube.npy")
		if err := WriteFile(path, []int{h, w, c}, data, dt); err != nil {
			b.Fatal(err)
		}
		r, err := Open(path)
		if err != nil {
			b.Fatal(err)
		}
		for _, tile := range []int{1, 64} {
			b.Run("dtype="+dt+"/pixels="+strconv.Itoa(tile), func(b *testing.B) {
				dst := make([]float64, tile*c)
				b.SetBytes(int64(tile * c * map[string]int{"f4": 4, "f8": 8}[dt]))
				b.ReportAllocs()
				p := 0
				for b.Loop() {
					if err := r.ReadRows(dst, p, tile); err != nil {
						b.Fatal(err)
					}
					p = (p + tile) % (h*w - tile)
				}
			})
		}
		r.Close()
	}
}
