package series

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"

	"statemix/lineshape/format/npy"
)

// MapSchema is the schema id of map.json.
const MapSchema = "statemix.map/v1"

// FractionNames returns the base name (without extension) of each
// component's fraction map: "fraction-<state>", the state lower-cased with
// characters other than letters, digits, '.', '_' and '-' replaced by '-'
// (the name or reference id when the state is empty), and "-2", "-3", ...
// appended to repeated names.
func (r *MapResult) FractionNames() []string {
	names := make([]string, len(r.Components))
	used := map[string]int{}
	for i, c := range r.Components {
		s := c.State
		if s == "" {
			s = c.Name
		}
		if s == "" {
			s = c.Ref
		}
		if s == "" {
			s = fmt.Sprintf("component%d", i+1)
		}
		s = "fraction-" + safeName(s)
		used[s]++
		if n := used[s]; n > 1 {
			s = fmt.Sprintf("%s-%d", s, n)
		}
		names[i] = s
	}
	return names
}

func safeName(s string) string {
	var b strings.Builder
	for _, c := range strings.ToLower(s) {
		switch {
		case c >= 'a' && c <= 'z', c >= '0' && c <= '9', c == '.', c == '_', c == '-':
			b.WriteRune(c)
		default:
			b.WriteByte('-')
		}
	}
	return b.String()
}

// mapJSON is the map.json document (statemix.map/v1).
type mapJSON struct {
	Schema     string         `json:"schema"`
	Width      int            `json:"width"`
	Height     int            `json:"height"`
	Components []mapComponent `json:"components"`
	Seconds    float64        `json:"seconds"`
	WindowEV   [2]float64     `json:"window_ev"`
	Mode       string         `json:"mode"`
	ShiftGrid  [3]float64     `json:"shift_grid_ev"` // first, last, step
	ShiftFile  string         `json:"shift_file"`
	Chi2File   string         `json:"chi2_file"`
	Failed     int            `json:"failed_pixels"`
	Warnings   []string       `json:"warnings"`
}

type mapComponent struct {
	MapComponent
	// MeanFraction shadows the embedded field: null when no pixel has a
	// fraction.
	MeanFraction *float64 `json:"mean_fraction"`
	File         string   `json:"file"`
}

// MarshalJSON returns the map.json document of r (statemix.map/v1).
func (r *MapResult) MarshalJSON() ([]byte, error) {
	doc := mapJSON{Schema: MapSchema, Width: r.Width, Height: r.Height, Seconds: r.Seconds,
		WindowEV: r.Window, Mode: r.Mode.String(), ShiftFile: "shift.npy", Chi2File: "chi2.npy",
		Failed: r.Failed, Warnings: r.Warnings}
	if doc.Warnings == nil {
		doc.Warnings = []string{}
	}
	if n := len(r.Shifts); n > 0 {
		step := 0.0
		if n > 1 {
			step = r.Shifts[1] - r.Shifts[0]
		}
		doc.ShiftGrid = [3]float64{r.Shifts[0], r.Shifts[n-1], step}
	}
	for i, name := range r.FractionNames() {
		c := mapComponent{MapComponent: r.Components[i], File: name + ".npy"}
		if m := r.Components[i].MeanFraction; !math.IsNaN(m) {
			c.MeanFraction = &m
		}
		doc.Components = append(doc.Components, c)
	}
	return json.MarshalIndent(doc, "", "  ")
}

// WriteDir writes the maps into dir (created if needed): one
// fraction-<state>.npy per component (FractionNames), shift.npy and
// chi2.npy, each float64 of shape (height, width), and map.json. If extra
// is not nil it is called with a temporary folder to add files of its own
// (figures). Everything is written into that temporary folder inside dir
// first and renamed into place only when all files are complete, so an
// error or interruption leaves no half-written output; files of the same
// names already in dir are replaced. It returns the names written.
func (r *MapResult) WriteDir(dir string, extra func(tmp string) error) (written []string, err error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	tmp, err := os.MkdirTemp(dir, ".statemix-map-*")
	if err != nil {
		return nil, err
	}
	defer os.RemoveAll(tmp)
	shape := []int{r.Height, r.Width}
	names := r.FractionNames()
	for i, name := range names {
		if err := npy.WriteFile(filepath.Join(tmp, name+".npy"), shape, r.Fractions[i], "<f8"); err != nil {
			return nil, err
		}
	}
	if err := npy.WriteFile(filepath.Join(tmp, "shift.npy"), shape, r.Shift, "<f8"); err != nil {
		return nil, err
	}
	if err := npy.WriteFile(filepath.Join(tmp, "chi2.npy"), shape, r.Chi2, "<f8"); err != nil {
		return nil, err
	}
	if extra != nil {
		if err := extra(tmp); err != nil {
			return nil, err
		}
	}
	b, err := r.MarshalJSON()
	if err != nil {
		return nil, err
	}
	if err := os.WriteFile(filepath.Join(tmp, "map.json"), append(b, '\n'), 0o644); err != nil {
		return nil, err
	}
	ents, err := os.ReadDir(tmp)
	if err != nil {
		return nil, err
	}
	// map.json last, so that a reader who sees it sees the rest.
	for _, pass := range []bool{false, true} {
		for _, e := range ents {
			if (e.Name() == "map.json") != pass {
				continue
			}
			if err := os.Rename(filepath.Join(tmp, e.Name()), filepath.Join(dir, e.Name())); err != nil {
				return written, err
			}
			written = append(written, e.Name())
		}
	}
	return written, nil
}
