package vamas

import (
	"bytes"
	"fmt"
	"math"
	"testing"

	"statemix/lineshape"
)

// mapFile is an invented MAP experiment of side x side pixels with n
// channels each.
func mapFile(b *testing.B, side, n int) *File {
	var specs []*lineshape.Spectrum
	for py := 0; py < side; py++ {
		for px := 0; px < side; px++ {
			y := make([]float64, n)
			for i := range y {
				y[i] = 1000 + 300*math.Sin(float64(i*(px+1))/50) + float64(py)
			}
			s, err := lineshape.NewUniform(100, 0.5, y, lineshape.Direct)
			if err != nil {
				b.Fatal(err)
			}
			x, yy := px, py
			s.Meta.PixelX, s.Meta.PixelY = &x, &yy
			specs = append(specs, s)
		}
	}
	f, err := FromSpectra(specs, ModeMAP)
	if err != nil {
		b.Fatal(err)
	}
	return f
}

func BenchmarkReadWrite(b *testing.B) {
	for _, c := range []struct{ side, n int }{{8, 400}, {32, 400}} {
		f := mapFile(b, c.side, c.n)
		var buf bytes.Buffer
		if err := Write(&buf, f); err != nil {
			b.Fatal(err)
		}
		data := buf.Bytes()
		b.Run(fmt.Sprintf("op=read/pixels=%d/channels=%d", c.side*c.side, c.n), func(b *testing.B) {
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				if _, err := Read(bytes.NewReader(data), "bench.vms"); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("op=write/pixels=%d/channels=%d", c.side*c.side, c.n), func(b *testing.B) {
			b.SetBytes(int64(len(data)))
			var out bytes.Buffer
			for b.Loop() {
				out.Reset()
				if err := Write(&out, f); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
