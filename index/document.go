package index

import (
	"encoding/json"
	"fmt"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"statemix/library"
)

// maxFeatures is how many derivative minima an entry records in feature_ev.
const maxFeatures = 5

// fingerprint identifies the version of an entry a document was built
// from: its ID, the library revision of its last write and the vector
// layout.
func fingerprint(e *library.Entry) string {
	return fmt.Sprintf("%s/r%d/v%d", e.ID, e.Revision, vectorVersion)
}

// entryPath is where the library keeps an entry's file (DESIGN.md:
// refs/<id>.json for references, runs/<id>.json for measurements).
func entryPath(libDir string, kind library.Kind, id string) string {
	folder := "refs"
	if kind == library.KindMeasurement {
		folder = "runs"
	}
	return filepath.Join(libDir, folder, id+".json")
}

// document turns a library entry into the bleve document of the mapping.
// An entry whose spectrum cannot give a similarity vector is still indexed
// for field and text queries.
func document(e *library.Entry) map[string]any {
	kind := e.Kind
	if kind == "" {
		kind = library.KindReference
	}
	d := map[string]any{
		fieldRef:         e.ID,
		"kind":           string(kind),
		"name":           e.Name,
		fieldFingerprint: fingerprint(e),
	}
	put := func(k, v string) {
		if v != "" {
			d[k] = v
		}
	}
	putNum := func(k string, v float64) {
		if v != 0 {
			d[k] = v
		}
	}
	put("element", e.Element)
	put("transition", e.Transition)
	put("state", e.State)
	put("compound", e.Compound)
	put("note", e.Note)
	if len(e.Tags) > 0 {
		keys := make([]string, 0, len(e.Tags))
		for k := range e.Tags {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		var tags []string
		for _, k := range keys {
			tags = append(tags, k+"="+e.Tags[k], k)
		}
		d["tags"] = tags
	}
	a := e.Acquisition
	if !e.Provenance.ImportedAt.IsZero() {
		d["imported"] = e.Provenance.ImportedAt.UTC().Format(time.RFC3339Nano)
	}
	if s := e.Spectrum; s != nil {
		m := s.Meta
		if a.BeamEnergyKeV == 0 {
			a.BeamEnergyKeV = m.BeamEnergyKeV
		}
		if a.BeamCurrentNA == 0 {
			a.BeamCurrentNA = m.BeamCurrentNA
		}
		if a.ModulationEV == 0 {
			a.ModulationEV = m.ModulationEV
		}
		put("sample", m.Sample)
		if len(m.Comments) > 0 {
			d["comments"] = strings.Join(m.Comments, "\n")
		}
		if m.SputterTimeS != nil {
			d["sputter_time_s"] = *m.SputterTimeS
		}
		for _, k := range []string{"acquired", "date", "datetime", "acquired_at"} {
			if t, err := time.Parse(time.RFC3339, m.Extra[k]); err == nil {
				d["acquired"] = t.UTC().Format(time.RFC3339Nano)
				break
			}
		}
		d["mode"] = s.Mode.String()
		if s.Len() > 0 && s.Axis.Len() == s.Len() {
			d[fieldLo] = s.Axis.Lo()
			d[fieldHi] = s.Axis.Hi()
		}
		if v, err := newVector(s, a.ModulationEV); err == nil {
			d[fieldVector] = v.encode()
			if f := mainMinima(v, maxFeatures); len(f) > 0 {
				d[fieldPeak] = f[0]
				d[fieldFeatures] = f
			}
		}
	}
	putNum("beam_energy_kev", a.BeamEnergyKeV)
	putNum("beam_current_na", a.BeamCurrentNA)
	putNum("modulation_ev", a.ModulationEV)
	if len(e.Fit) > 0 {
		refs, states := fitComponents(e.Fit)
		if len(refs) > 0 {
			d["fit_refs"] = refs
		}
		if len(states) > 0 {
			d["fit_states"] = states
		}
	}
	return d
}

// fitComponents returns the references and states of the components with a
// nonzero coefficient in a statemix.fit/v1 document.
func fitComponents(raw json.RawMessage) (refs, states []string) {
	var f struct {
		Components []struct {
			Ref         string  `json:"ref"`
			State       string  `json:"state"`
			Coefficient float64 `json:"coefficient"`
			AtBound     bool    `json:"at_bound"`
		} `json:"components"`
	}
	if json.Unmarshal(raw, &f) != nil {
		return nil, nil
	}
	seen := map[string]bool{}
	for _, c := range f.Components {
		if c.AtBound || c.Coefficient == 0 {
			continue
		}
		if c.Ref != "" {
			refs = append(refs, c.Ref)
		}
		if c.State != "" && !seen[c.State] {
			seen[c.State] = true
			states = append(states, c.State)
		}
	}
	return refs, states
}
