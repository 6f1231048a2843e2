package npy

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"sync"

	"statemix/internal/atomicfile"
	"statemix/lineshape"
)

// Reader reads the values of a .npy array in pieces, by io.ReaderAt, so a
// cube larger than memory can be processed tile by tile. Its methods are
// safe for concurrent use.
type Reader struct {
	ra   io.ReaderAt
	c    io.Closer
	name string
	h    *header

	mu  sync.Mutex
	buf []byte
}

// Open opens the .npy file at path and reads its header. Errors about the
// file's content are *lineshape.InputError values naming path.
func Open(path string) (*Reader, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	st, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, err
	}
	r, err := NewReader(f, st.Size(), path)
	if err != nil {
		f.Close()
		return nil, err
	}
	r.c = f
	return r, nil
}

// NewReader reads the header of a .npy array of size bytes held in ra.
// name is used in errors. The data must fill the rest of the size exactly.
func NewReader(ra io.ReaderAt, size int64, name string) (*Reader, error) {
	h, err := readHeader(io.NewSectionReader(ra, 0, size))
	if err != nil {
		return nil, lineshape.Errorf(name, 0, "npy: %v", err)
	}
	want := h.dataOff + h.n*int64(h.itemSize)
	if size != want {
		return nil, lineshape.Errorf(name, 0, "npy: shape %v of %s needs %d data bytes, file has %d",
			h.shape, h.dtype, want-h.dataOff, size-h.dataOff)
	}
	return &Reader{ra: ra, name: name, h: h}, nil
}

// Close closes the file Open opened; for a Reader from NewReader it does
// nothing.
func (r *Reader) Close() error {
	if r.c == nil {
		return nil
	}
	return r.c.Close()
}

// Shape returns a copy of the array's shape.
func (r *Reader) Shape() []int { return append([]int{}, r.h.shape...) }

// DType returns the element type as written in the header: "<f4" or "<f8".
func (r *Reader) DType() string { return r.h.dtype }

// Version returns the format version of the file (1, 2 or 3; minor 0).
func (r *Reader) Version() (major, minor int) { return r.h.major, r.h.minor }

// Len returns the number of elements.
func (r *Reader) Len() int { return int(r.h.n) }

// Channels returns the length of the last axis, the number of values per
// pixel spectrum; it is 1 for a 0-dimensional array.
func (r *Reader) Channels() int {
	if len(r.h.shape) == 0 {
		return 1
	}
	return r.h.shape[len(r.h.shape)-1]
}

// Pixels returns the number of pixel spectra: the product of all axes but
// the last (height*width for a (height, width, channels) cube).
func (r *Reader) Pixels() int {
	p := 1
	for i := 0; i < len(r.h.shape)-1; i++ {
		p *= r.h.shape[i]
	}
	return p
}

// ReadRows fills dst[:nPixels*Channels()] with the spectra of pixels
// firstPixel .. firstPixel+nPixels-1 in C order (pixel p of a (H, W, C) cube
// is row p/W, column p%W; its C values start at element p*C). It panics if
// the range is outside the array or dst is too short.
func (r *Reader) ReadRows(dst []float64, firstPixel, nPixels int) error {
	c := r.Channels()
	if firstPixel < 0 || nPixels < 0 || firstPixel > r.Pixels()-nPixels {
		panic(fmt.Sprintf("npy: pixels %d..%d outside 0..%d", firstPixel, firstPixel+nPixels-1, r.Pixels()-1))
	}
	if len(dst) < nPixels*c {
		panic(fmt.Sprintf("npy: destination of %d values for %d pixels of %d channels", len(dst), nPixels, c))
	}
	return r.ReadValues(dst[:nPixels*c], firstPixel*c)
}

// ReadValues fills dst with the len(dst) elements that start at element
// first, in C order. It panics if they are not all inside the array.
// Values are returned as stored, NaN and infinities included.
func (r *Reader) ReadValues(dst []float64, first int) error {
	if first < 0 || int64(first)+int64(len(dst)) > r.h.n {
		panic(fmt.Sprintf("npy: elements %d..%d outside 0..%d", first, first+len(dst)-1, r.h.n-1))
	}
	r.mu.Lock()
	defer r.mu.Unlock()
	const chunk = 1 << 16
	if r.buf == nil {
		r.buf = make([]byte, chunk)
	}
	size := r.h.itemSize
	per := chunk / size
	off := r.h.dataOff + int64(first)*int64(size)
	for len(dst) > 0 {
		k := min(per, len(dst))
		b := r.buf[:k*size]
		n, err := r.ra.ReadAt(b, off)
		if n < len(b) {
			if err == nil || err == io.EOF {
				return lineshape.Errorf(r.name, 0, "npy: file ends inside the data")
			}
			return fmt.Errorf("npy: %s: %w", r.name, err)
		}
		decode(dst[:k], b, size)
		dst = dst[k:]
		off += int64(len(b))
	}
	return nil
}

// decode turns little-endian floats of size bytes into float64s.
func decode(dst []float64, b []byte, size int) {
	if size == 8 {
		for i := range dst {
			dst[i] = math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:]))
		}
		return
	}
	for i := range dst {
		dst[i] = float64(math.Float32frombits(binary.LittleEndian.Uint32(b[4*i:])))
	}
}

// Array is a whole .npy array in memory, its values in C order.
type Array struct {
	Shape []int
	DType string // "<f4" or "<f8"
	Data  []float64
}

// ReadFile reads the whole array in the file at path. Use Open for arrays
// too large to hold in memory.
func ReadFile(path string) (*Array, error) {
	r, err := Open(path)
	if err != nil {
		return nil, err
	}
	defer r.Close()
	a := &Array{Shape: r.Shape(), DType: r.DType(), Data: make([]float64, r.Len())}
	if err := r.ReadValues(a.Data, 0); err != nil {
		return nil, err
	}
	return a, nil
}

// Read reads a whole array from a stream; name is used in errors. Memory
// grows with the data actually read, so a header that claims a huge shape
// costs nothing before the data is there. Bytes after the data are an
// error.
func Read(rd io.Reader, name string) (*Array, error) {
	br := bufio.NewReader(rd)
	h, err := readHeader(br)
	if err != nil {
		return nil, lineshape.Errorf(name, 0, "npy: %v", err)
	}
	a := &Array{Shape: h.shape, DType: h.dtype, Data: make([]float64, 0, min(h.n, 1<<16))}
	buf := make([]byte, 1<<16)
	per := int64(len(buf) / h.itemSize)
	for left := h.n; left > 0; {
		k := min(per, left)
		b := buf[:k*int64(h.itemSize)]
		if _, err := io.ReadFull(br, b); err != nil {
			if errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) {
				return nil, lineshape.Errorf(name, 0, "npy: file ends after %d of %d values", int64(len(a.Data)), h.n)
			}
			return nil, err
		}
		n := len(a.Data)
		a.Data = append(a.Data, make([]float64, k)...)
		decode(a.Data[n:], b, h.itemSize)
		left -= k
	}
	if _, err := br.ReadByte(); err == nil {
		return nil, lineshape.Errorf(name, 0, "npy: bytes after the %d values of shape %v", h.n, h.shape)
	}
	return a, nil
}

// canonicalDType maps the accepted spellings to the header form.
func canonicalDType(dtype string) (string, int, error) {
	switch dtype {
	case "<f8", "f8", "float64":
		return "<f8", 8, nil
	case "<f4", "f4", "float32":
		return "<f4", 4, nil
	}
	return "", 0, fmt.Errorf("npy: data type %q not supported (want <f4 or <f8)", dtype)
}

// Write writes data of the given shape (C order) as a .npy array of dtype
// "<f4" or "<f8" ("f4", "float32", "f8" and "float64" are accepted too),
// with the header numpy.save writes: format version 1.0 (2.0 if the
// shape is too long for it), padded to a multiple of 64 bytes. Values are
// written as given; NaN and infinities stay, and with "<f4" each value is
// rounded to the nearest float32. It panics if len(data) is not the
// product of shape or a dimension is negative.
func Write(w io.Writer, shape []int, data []float64, dtype string) error {
	dt, size, err := canonicalDType(dtype)
	if err != nil {
		return err
	}
	n := 1
	for _, d := range shape {
		if d < 0 {
			panic(fmt.Sprintf("npy: negative dimension in shape %v", shape))
		}
		n *= d
	}
	if n != len(data) {
		panic(fmt.Sprintf("npy: shape %v holds %d values, data has %d", shape, n, len(data)))
	}
	if _, err := w.Write(encodeHeader(shape, dt)); err != nil {
		return err
	}
	buf := make([]byte, 0, 1<<16)
	for len(data) > 0 {
		k := min(len(data), cap(buf)/size)
		buf = buf[:0]
		for _, v := range data[:k] {
			if size == 8 {
				buf = binary.LittleEndian.AppendUint64(buf, math.Float64bits(v))
			} else {
				buf = binary.LittleEndian.AppendUint32(buf, math.Float32bits(float32(v)))
			}
		}
		if _, err := w.Write(buf); err != nil {
			return err
		}
		data = data[k:]
	}
	return nil
}

// WriteFile writes the array to path atomically: to a temporary file in the
// same folder, synced to disk, then renamed over path, so readers see the
// old file or the complete new one.
func WriteFile(path string, shape []int, data []float64, dtype string) error {
	if _, _, err := canonicalDType(dtype); err != nil {
		return err
	}
	return atomicfile.WriteFile(path, func(w io.Writer) error { return Write(w, shape, data, dtype) })
}
