package series

import (
	"bufio"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"statemix/lineshape"
	"statemix/lineshape/format"
)

// Step is one spectrum of a depth profile.
type Step struct {
	// Index is the 0-based position in the profile.
	Index int
	// SputterTimeS is the cumulative sputter time in s.
	SputterTimeS float64
	// Spectrum is the step's spectrum.
	Spectrum *lineshape.Spectrum
	// Source names where the step came from ("file: block 3" or
	// "manifest.csv: line 4").
	Source string
}

// ManifestName is the file a profile folder must hold.
const ManifestName = "manifest.csv"

// ReadSteps reads the steps of a depth profile from path: a multi-block
// file (ISO 14976 SDP or NORM blocks, or any file format.ReadFile reads
// that holds several spectra) or a folder with a manifest (see
// ReadManifest). In a file, the sputter time of a block is its
// Meta.SputterTimeS (the experimental variable labelled as a sputter or
// etch time). If no block has one, the steps are numbered 0, 1, 2, ... and
// that number is used as the time, which the returned warning says; if
// some blocks have one and others not, that is an error. Sputter times
// must increase strictly. Errors about the content are
// *lineshape.InputError values naming the file and block or line.
func ReadSteps(path string) ([]Step, []string, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, nil, err
	}
	if st.IsDir() {
		steps, err := ReadManifest(path)
		return steps, nil, err
	}
	specs, err := format.ReadFile(path, format.Options{})
	if err != nil {
		return nil, nil, err
	}
	if len(specs) < 2 {
		return nil, nil, lineshape.Errorf(path, 0, "a depth profile needs at least 2 spectra, the file holds %d", len(specs))
	}
	var warnings []string
	have := 0
	for _, s := range specs {
		if s.Meta.SputterTimeS != nil {
			have++
		}
	}
	steps := make([]Step, len(specs))
	for i, s := range specs {
		t := float64(i)
		if have > 0 {
			if s.Meta.SputterTimeS == nil {
				return nil, nil, &lineshape.InputError{File: path, Block: i, Err: errors.New("block has no sputter time, but other blocks do")}
			}
			t = *s.Meta.SputterTimeS
		}
		steps[i] = Step{Index: i, SputterTimeS: t, Spectrum: s, Source: fmt.Sprintf("%s: block %d", path, i+1)}
		if i > 0 && !(t > steps[i-1].SputterTimeS) {
			return nil, nil, &lineshape.InputError{File: path, Block: i, Err: fmt.Errorf("sputter time %g s does not increase (block %d has %g s): steps must be in order of increasing sputter time", t, i, steps[i-1].SputterTimeS)}
		}
	}
	if have == 0 {
		warnings = append(warnings, fmt.Sprintf("%s: no block gives a sputter time: steps are numbered 0 to %d and the number is used as the time in s", path, len(specs)-1))
	}
	return steps, warnings, nil
}

// ReadManifest reads a profile folder: dir/manifest.csv lists one step per
// line as "file,sputter_time_s" with an optional third field "block" (1 =
// first spectrum in the file, the default). File names are relative to
// dir. Blank lines and lines starting with '#' are skipped, and so is a
// first line whose second field is not a number (a header). Times must
// increase strictly. A missing file, a bad number or a time that does not
// increase is a *lineshape.InputError naming the manifest and line.
func ReadManifest(dir string) ([]Step, error) {
	mpath := filepath.Join(dir, ManifestName)
	f, err := os.Open(mpath)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, lineshape.Errorf(dir, 0, "a profile folder needs a %s listing file,sputter_time_s per line", ManifestName)
		}
		return nil, err
	}
	defer f.Close()
	var steps []Step
	sc := bufio.NewScanner(f)
	line := 0
	headerOK := true // only the first non-comment line may be a header
	for sc.Scan() {
		line++
		text := strings.TrimSpace(strings.TrimPrefix(sc.Text(), "\ufeff"))
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		header := headerOK
		headerOK = false
		fields := strings.Split(text, ",")
		for i := range fields {
			fields[i] = strings.TrimSpace(fields[i])
		}
		if len(fields) < 2 || len(fields) > 3 {
			return nil, lineshape.Errorf(mpath, line, "want file,sputter_time_s[,block], got %d fields", len(fields))
		}
		t, err := strconv.ParseFloat(fields[1], 64)
		if err != nil {
			if header {
				continue
			}
			return nil, lineshape.Errorf(mpath, line, "sputter time %q is not a number", fields[1])
		}
		if t < 0 || t != t || t > 1e12 {
			return nil, lineshape.Errorf(mpath, line, "sputter time %v s: want a finite time of 0 s or more", t)
		}
		block := 1
		if len(fields) == 3 {
			if block, err = strconv.Atoi(fields[2]); err != nil || block < 1 {
				return nil, lineshape.Errorf(mpath, line, "block %q: want a number from 1", fields[2])
			}
		}
		if n := len(steps); n > 0 && !(t > steps[n-1].SputterTimeS) {
			return nil, lineshape.Errorf(mpath, line, "sputter time %g s does not increase (the line before has %g s): steps must be in order of increasing sputter time", t, steps[n-1].SputterTimeS)
		}
		name := fields[0]
		if name == "" {
			return nil, lineshape.Errorf(mpath, line, "empty file name")
		}
		p := name
		if !filepath.IsAbs(p) {
			p = filepath.Join(dir, name)
		}
		if _, err := os.Stat(p); err != nil {
			if errors.Is(err, fs.ErrNotExist) {
				return nil, lineshape.Errorf(mpath, line, "file %s does not exist", name)
			}
			return nil, lineshape.Errorf(mpath, line, "file %s: %v", name, err)
		}
		specs, err := format.ReadFile(p, format.Options{Block: block})
		if err != nil {
			if errors.Is(err, format.ErrNoBlock) {
				return nil, lineshape.Errorf(mpath, line, "%v", err)
			}
			return nil, err
		}
		steps = append(steps, Step{Index: len(steps), SputterTimeS: t, Spectrum: specs[0], Source: fmt.Sprintf("%s: line %d", mpath, line)})
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s: %w", mpath, err)
	}
	if len(steps) < 2 {
		return nil, lineshape.Errorf(mpath, 0, "a depth profile needs at least 2 steps, the manifest lists %d", len(steps))
	}
	return steps, nil
}
