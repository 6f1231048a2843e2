package series

import (
	"errors"
	"os"
	"path/filepath"
	"testing"

	"statemix/lineshape"
	"statemix/lineshape/format"
)

// FuzzReadManifest feeds manifests to ReadManifest in a folder holding two
// valid step files: it must never panic, and every error about the
// content must be a *lineshape.InputError.
func FuzzReadManifest(f *testing.F) {
	for _, seed := range []string{
		"file,sputter_time_s\na.csv,0\nb.csv,10\n",
		"a.csv,0\nb.csv,10,1\n",
		"# comment\n\na.csv , 0\nb.csv, 1e1\n",
		"a.csv,0\nb.csv,-1\n",
		"a.csv,0\na.csv,0\n",
		"a.csv,NaN\nb.csv,Inf\n",
		"a.csv\n",
		",,,\n",
		"a.csv,0,99\n",
		"\ufeffa.csv,0\nmissing.csv,1\n",
		"../a.csv,0\n/etc/passwd,1\n",
	} {
		f.Add(seed)
	}
	dir := f.TempDir()
	for i, name := range []string{"a.csv", "b.csv"} {
		s, err := lineshape.NewUniform(100, 1, []float64{1, 2, 3, float64(i)}, lineshape.Direct)
		if err != nil {
			f.Fatal(err)
		}
		if err := format.WriteFile(filepath.Join(dir, name), []*lineshape.Spectrum{s}, format.FormatCSV); err != nil {
			f.Fatal(err)
		}
	}
	f.Fuzz(func(t *testing.T, manifest string) {
		if err := os.WriteFile(filepath.Join(dir, ManifestName), []byte(manifest), 0o644); err != nil {
			t.Fatal(err)
		}
		steps, err := ReadManifest(dir)
		if err != nil {
			var ie *lineshape.InputError
			var pe *os.PathError
			if !errors.As(err, &ie) && !errors.As(err, &pe) {
				t.Fatalf("error %v (%T) is not an InputError", err, err)
			}
			return
		}
		for i := 1; i < len(steps); i++ {
			if !(steps[i].SputterTimeS > steps[i-1].SputterTimeS) {
				t.Fatalf("times not increasing: %v then %v", steps[i-1].SputterTimeS, steps[i].SputterTimeS)
			}
		}
	})
}
