package format

import (
	"io"

	"statemix/lineshape"
	"statemix/lineshape/format/vamas"
)

// readVAMAS reads every block of an ISO 14976 file as a spectrum.
func readVAMAS(path string) ([]*lineshape.Spectrum, error) {
	f, err := vamas.ReadFile(path)
	if err != nil {
		return nil, err
	}
	return f.Spectra()
}

// writeVAMAS writes specs as ISO 14976 in the experiment mode VAMASMode
// picks.
func writeVAMAS(w io.Writer, specs []*lineshape.Spectrum) error {
	f, err := vamas.FromSpectra(specs, VAMASMode(specs))
	if err != nil {
		return err
	}
	return vamas.Write(w, f)
}
