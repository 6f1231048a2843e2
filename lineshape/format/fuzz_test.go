package format

import (
	"bytes"
	"errors"
	"testing"

	"statemix/lineshape"
)

// FuzzSpectrumJSON checks that any bytes give spectra or an
// *lineshape.InputError, and that accepted spectra are written and read
// back in every format without error.
func FuzzSpectrumJSON(f *testing.F) {
	f.Add([]byte(`{"schema":"statemix.spectrum/v1","spectra":[{"axis":{"start_ev":100,"step_ev":0.5,"n":3},"values":[1,2,3],"mode":"derivative","meta":{}}]}`))
	f.Add([]byte(`{"schema":"statemix.spectrum/v1","spectra":[{"axis":{"values_ev":[1,2.5,3]},"values":[1,2,3],"mode":"direct","meta":{"sputter_time_s":0,"pixel_x":1,"pixel_y":2}}]}`))
	f.Add([]byte(`{"schema":"statemix.spectrum/v1","spectra":[{"axis":{"start_ev":1e308,"step_ev":1e308,"n":2},"values":[1,2]}]}`))
	f.Add([]byte(`{"schema":"statemix.spectrum/v1","spectra":[null]}`))
	f.Add([]byte(`{"schema":"other"}`))
	f.Add([]byte(`{`))
	f.Fuzz(func(t *testing.T, data []byte) {
		specs, err := decodeJSON(data, "fuzz.json")
		if err != nil {
			var ie *lineshape.InputError
			if !errors.As(err, &ie) {
				t.Fatalf("error %v (%T) is not an InputError", err, err)
			}
			return
		}
		var buf bytes.Buffer
		if err := Write(&buf, specs, FormatJSON); err != nil {
			t.Fatalf("json: %v", err)
		}
		back, err := decodeJSON(buf.Bytes(), "again.json")
		if err != nil {
			t.Fatalf("written JSON does not read back: %v", err)
		}
		if len(back) != len(specs) {
			t.Fatalf("%d spectra read back, want %d", len(back), len(specs))
		}
		buf.Reset()
		if err := Write(&buf, specs[:1], FormatCSV); err != nil {
			t.Fatalf("csv: %v", err)
		}
	})
}
