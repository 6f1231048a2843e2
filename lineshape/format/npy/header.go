package npy

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// magic opens every .npy file.
const magic = "\x93NUMPY"

// maxHeaderLen bounds the header dictionary in bytes. NumPy itself refuses
// headers over 10000 bytes unless told otherwise; 64 KiB leaves room for
// any real shape while keeping hostile files from costing memory.
const maxHeaderLen = 64 << 10

// maxRank is the largest number of dimensions accepted (NumPy 2 allows 64).
const maxRank = 64

// maxElements bounds the element count so that byte offsets fit in int64.
const maxElements = math.MaxInt64 / 16

// header is what the .npy header says.
type header struct {
	major, minor int
	dtype        string // "<f4" or "<f8"
	itemSize     int
	shape        []int
	n            int64 // number of elements
	dataOff      int64 // byte offset of the data
}

// readHeader reads and checks the magic, version and header dictionary.
func readHeader(r io.Reader) (*header, error) {
	var pre [10]byte
	if _, err := io.ReadFull(r, pre[:8]); err != nil {
		return nil, errors.New("too short for a .npy file")
	}
	if string(pre[:6]) != magic {
		return nil, errors.New("not a .npy file (no \\x93NUMPY magic)")
	}
	h := &header{major: int(pre[6]), minor: int(pre[7])}
	var hlen int
	switch h.major {
	case 1:
		if _, err := io.ReadFull(r, pre[8:10]); err != nil {
			return nil, errors.New("header length missing")
		}
		hlen = int(binary.LittleEndian.Uint16(pre[8:10]))
		h.dataOff = 10
	case 2, 3:
		var l [4]byte
		if _, err := io.ReadFull(r, l[:]); err != nil {
			return nil, errors.New("header length missing")
		}
		n := binary.LittleEndian.Uint32(l[:])
		if n > maxHeaderLen {
			return nil, fmt.Errorf("header of %d bytes is longer than the %d this reader accepts", n, maxHeaderLen)
		}
		hlen = int(n)
		h.dataOff = 12
	default:
		return nil, fmt.Errorf("format version %d.%d not supported (want 1.0, 2.0 or 3.0)", h.major, h.minor)
	}
	if h.minor != 0 {
		return nil, fmt.Errorf("format version %d.%d not supported (want 1.0, 2.0 or 3.0)", h.major, h.minor)
	}
	if hlen > maxHeaderLen {
		return nil, fmt.Errorf("header of %d bytes is longer than the %d this reader accepts", hlen, maxHeaderLen)
	}
	buf := make([]byte, hlen)
	if _, err := io.ReadFull(r, buf); err != nil {
		return nil, fmt.Errorf("file ends inside the %d-byte header", hlen)
	}
	h.dataOff += int64(hlen)
	text := string(buf)
	if h.major < 3 {
		for i := 0; i < len(text); i++ {
			if text[i] >= 0x80 {
				return nil, fmt.Errorf("header byte %d is not ASCII (only version 3.0 headers may be UTF-8)", i)
			}
		}
	}
	if err := h.parseDict(text); err != nil {
		return nil, fmt.Errorf("header: %w", err)
	}
	return h, nil
}

// parseDict reads the Python literal dictionary of the header.
func (h *header) parseDict(text string) error {
	p := &pyParser{s: text}
	v, err := p.value(0)
	if err != nil {
		return err
	}
	p.space()
	if p.i != len(p.s) {
		return fmt.Errorf("unexpected %q after the dictionary", clip(p.s[p.i:]))
	}
	d, ok := v.(pyDict)
	if !ok {
		return errors.New("not a dictionary")
	}
	seen := map[string]bool{}
	for _, kv := range d {
		if seen[kv.key] {
			return fmt.Errorf("key %q given twice", kv.key)
		}
		seen[kv.key] = true
		switch kv.key {
		case "descr":
			s, ok := kv.val.(string)
			if !ok {
				return errors.New("descr is not a simple type string: structured arrays are not supported")
			}
			switch s {
			case "<f8":
				h.itemSize = 8
			case "<f4":
				h.itemSize = 4
			default:
				return fmt.Errorf("data type %q not supported (want little-endian float: '<f4' or '<f8')", clip(s))
			}
			h.dtype = s
		case "fortran_order":
			b, ok := kv.val.(bool)
			if !ok {
				return errors.New("fortran_order is not True or False")
			}
			if b {
				return errors.New("fortran_order is True: only C-order arrays are supported (save with numpy.ascontiguousarray)")
			}
		case "shape":
			t, ok := kv.val.(pyTuple)
			if !ok {
				return errors.New("shape is not a tuple")
			}
			if len(t) > maxRank {
				return fmt.Errorf("shape has %d dimensions, more than %d", len(t), maxRank)
			}
			h.shape = make([]int, len(t))
			h.n = 1
			for i, x := range t {
				d, ok := x.(int64)
				if !ok || d < 0 {
					return fmt.Errorf("shape dimension %d is not a non-negative integer", i)
				}
				h.shape[i] = int(d)
				if d != 0 && h.n > maxElements/d {
					return errors.New("shape is too large")
				}
				h.n *= d
			}
		default:
			return fmt.Errorf("unexpected key %q", clip(kv.key))
		}
	}
	for _, k := range []string{"descr", "fortran_order", "shape"} {
		if !seen[k] {
			return fmt.Errorf("key %q missing", k)
		}
	}
	return nil
}

func clip(s string) string {
	if len(s) > 32 {
		return s[:32] + "..."
	}
	return s
}

// The Python literal subset of .npy headers: dicts, tuples, lists,
// strings, integers, True, False and None.
type (
	pyDict []pyPair
	pyPair struct {
		key string
		val any
	}
	pyTuple []any
	pyList  []any
)

type pyParser struct {
	s string
	i int
}

const maxDepth = 8

func (p *pyParser) space() {
	for p.i < len(p.s) && (p.s[p.i] == ' ' || p.s[p.i] == '\t' || p.s[p.i] == '\n' || p.s[p.i] == '\r') {
		p.i++
	}
}

func (p *pyParser) errf(format string, args ...any) error {
	return fmt.Errorf("byte %d: %s", p.i, fmt.Sprintf(format, args...))
}

func (p *pyParser) value(depth int) (any, error) {
	if depth > maxDepth {
		return nil, p.errf("nested too deeply")
	}
	p.space()
	if p.i >= len(p.s) {
		return nil, p.errf("unexpected end")
	}
	switch c := p.s[p.i]; {
	case c == '{':
		p.i++
		var d pyDict
		for {
			p.space()
			if p.i < len(p.s) && p.s[p.i] == '}' {
				p.i++
				return d, nil
			}
			k, err := p.value(depth + 1)
			if err != nil {
				return nil, err
			}
			key, ok := k.(string)
			if !ok {
				return nil, p.errf("dictionary key is not a string")
			}
			p.space()
			if p.i >= len(p.s) || p.s[p.i] != ':' {
				return nil, p.errf("missing ':' after key %q", clip(key))
			}
			p.i++
			v, err := p.value(depth + 1)
			if err != nil {
				return nil, err
			}
			d = append(d, pyPair{key, v})
			if len(d) > 16 {
				return nil, p.errf("too many keys")
			}
			if err := p.sepOrClose('}'); err != nil {
				return nil, err
			}
		}
	case c == '(' || c == '[':
		closer := byte(')')
		if c == '[' {
			closer = ']'
		}
		p.i++
		var items []any
		commas := 0
		for {
			p.space()
			if p.i < len(p.s) && p.s[p.i] == closer {
				p.i++
				break
			}
			v, err := p.value(depth + 1)
			if err != nil {
				return nil, err
			}
			items = append(items, v)
			if len(items) > maxRank {
				return nil, p.errf("more than %d items", maxRank)
			}
			p.space()
			if p.i < len(p.s) && p.s[p.i] == ',' {
				commas++
			}
			if err := p.sepOrClose(closer); err != nil {
				return nil, err
			}
		}
		if c == '(' {
			if len(items) == 1 && commas == 0 {
				return items[0], nil // (x) is x in Python
			}
			return pyTuple(items), nil
		}
		return pyList(items), nil
	case c == '\'' || c == '"':
		j := strings.IndexByte(p.s[p.i+1:], c)
		if j < 0 {
			return nil, p.errf("string not closed")
		}
		s := p.s[p.i+1 : p.i+1+j]
		if strings.IndexByte(s, '\\') >= 0 {
			return nil, p.errf("escapes in strings are not supported")
		}
		p.i += j + 2
		return s, nil
	case c >= '0' && c <= '9' || c == '-' || c == '+':
		j := p.i + 1
		for j < len(p.s) && p.s[j] >= '0' && p.s[j] <= '9' {
			j++
		}
		n, err := strconv.ParseInt(p.s[p.i:j], 10, 64)
		if err != nil {
			return nil, p.errf("bad integer %q", clip(p.s[p.i:j]))
		}
		if j < len(p.s) && (p.s[j] == 'L' || p.s[j] == 'l') { // Python 2 long
			j++
		}
		p.i = j
		return n, nil
	default:
		for _, w := range []struct {
			word string
			val  any
		}{{"True", true}, {"False", false}, {"None", nil}} {
			if strings.HasPrefix(p.s[p.i:], w.word) {
				p.i += len(w.word)
				return w.val, nil
			}
		}
		return nil, p.errf("unexpected %q", clip(p.s[p.i:]))
	}
}

// sepOrClose consumes a ',' or leaves a closing bracket for the caller.
func (p *pyParser) sepOrClose(closer byte) error {
	p.space()
	if p.i >= len(p.s) {
		return p.errf("unexpected end, want ',' or %q", closer)
	}
	switch p.s[p.i] {
	case ',':
		p.i++
		return nil
	case closer:
		return nil
	}
	return p.errf("unexpected %q, want ',' or %q", clip(p.s[p.i:]), closer)
}

// encodeHeader returns the complete header (magic, version, length,
// dictionary, padding) NumPy 1.24's numpy.save writes for a C-order array:
// keys sorted, spare spaces after the dictionary for growing the first axis,
// and space padding plus a newline to a multiple of 64 bytes. It uses format
// version 1.0 unless the header is too long for it.
func encodeHeader(shape []int, dtype string) []byte {
	var b strings.Builder
	b.WriteString("{'descr': '")
	b.WriteString(dtype)
	b.WriteString("', 'fortran_order': False, 'shape': (")
	for i, d := range shape {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(strconv.Itoa(d))
	}
	if len(shape) == 1 {
		b.WriteString(",")
	}
	b.WriteString("), }")
	if len(shape) > 0 {
		// NumPy's GROWTH_AXIS_MAX_DIGITS is 21.
		if pad := 21 - len(strconv.Itoa(shape[0])); pad > 0 {
			b.WriteString(strings.Repeat(" ", pad))
		}
	}
	dict := b.String()
	const align = 64
	hlen := len(dict) + 1
	pre := 10
	if hlen+align-(pre+hlen)%align > math.MaxUint16 {
		pre = 12
	}
	padlen := align - (pre+hlen)%align
	out := make([]byte, 0, pre+hlen+padlen)
	out = append(out, magic...)
	if pre == 10 {
		out = append(out, 1, 0)
		out = binary.LittleEndian.AppendUint16(out, uint16(hlen+padlen))
	} else {
		out = append(out, 2, 0)
		out = binary.LittleEndian.AppendUint32(out, uint32(hlen+padlen))
	}
	out = append(out, dict...)
	for range padlen {
		out = append(out, ' ')
	}
	return append(out, '\n')
}
