package index

import (
	"regexp"
	"strings"

	"github.com/blevesearch/bleve/v2"
	"github.com/blevesearch/bleve/v2/analysis/analyzer/custom"
	"github.com/blevesearch/bleve/v2/analysis/analyzer/standard"
	"github.com/blevesearch/bleve/v2/analysis/token/lowercase"
	"github.com/blevesearch/bleve/v2/analysis/tokenizer/single"
	"github.com/blevesearch/bleve/v2/mapping"
)

// FieldKind says how a field is indexed.
type FieldKind string

// Field kinds.
const (
	Keyword  FieldKind = "keyword"  // one exact token, compared case-insensitively
	Text     FieldKind = "text"     // words, standard analyzer
	Numeric  FieldKind = "numeric"  // number; ranges with >, >=, <, <=
	DateTime FieldKind = "datetime" // RFC 3339 time; ranges with quoted dates
)

// Field describes one searchable field of the index.
type Field struct {
	Name    string    `json:"name"`
	Kind    FieldKind `json:"kind"`
	Unit    string    `json:"unit,omitempty"`
	Doc     string    `json:"doc"`
	Example string    `json:"example"`
}

// keywordAnalyzer keeps a value as one token, lower-cased, so element:Ti and
// element:ti both match.
const keywordAnalyzer = "statemix_keyword"

// Stored-only fields (not searchable).
const (
	fieldVector      = "vec"          // base64 similarity vector, see vector.encode
	fieldFingerprint = "fingerprint"  // hash of the entry's metadata, for Sync
	fieldRef         = "ref"          // the entry id (also searchable)
	fieldPeak        = "peak_ev"      // deepest derivative minimum
	fieldFeatures    = "feature_ev"   // main derivative minima
	fieldLo          = "energy_lo_ev" // lowest energy of the spectrum
	fieldHi          = "energy_hi_ev" // highest energy of the spectrum
)

// fields lists every searchable field, in the order the field listing
// prints them.
var fields = []Field{
	{fieldRef, Keyword, "", "entry id (12 hex digits)", "ref:3fa9c0d1e2b4"},
	{"kind", Keyword, "", "reference or measurement", "kind:measurement"},
	{"element", Keyword, "", "element symbol", "element:Ti"},
	{"transition", Keyword, "", "Auger transition", "transition:LMM"},
	{"state", Keyword, "", "chemical state", "state:nitride"},
	{"compound", Keyword, "", "compound formula", "compound:TiN"},
	{"tags", Keyword, "", "tags as key=value, and each key alone (escape = as \\=)", `tags:site\=lab2`},
	{"mode", Keyword, "", "spectrum mode: direct or derivative", "mode:derivative"},
	{"fit_refs", Keyword, "", "references a measurement was fitted with", "fit_refs:3fa9c0d1e2b4"},
	{"fit_states", Keyword, "", "states a measurement was fitted with", "fit_states:oxide"},
	{"name", Text, "", "entry name", "name:standard"},
	{"note", Text, "", "free-text note", `note:"diffusion barrier"`},
	{"sample", Text, "", "sample identifier from the source file", "sample:wafer"},
	{"comments", Text, "", "comment lines from the source file", "comments:sputtered"},
	{"beam_energy_kev", Numeric, "keV", "primary beam energy", "+beam_energy_kev:>=9.5 +beam_energy_kev:<=10.5"},
	{"beam_current_na", Numeric, "nA", "primary beam current", "beam_current_na:>5"},
	{"modulation_ev", Numeric, "eV", "modulation peak-to-peak", "modulation_ev:<=2"},
	{fieldLo, Numeric, "eV", "lowest kinetic energy of the spectrum", "energy_lo_ev:<=380"},
	{fieldHi, Numeric, "eV", "highest kinetic energy of the spectrum", "energy_hi_ev:>=420"},
	{fieldPeak, Numeric, "eV", "energy of the deepest derivative minimum", "+peak_ev:>=380 +peak_ev:<=395"},
	{fieldFeatures, Numeric, "eV", "energies of the main derivative minima (up to 5)", "+feature_ev:>=415 +feature_ev:<=421"},
	{"sputter_time_s", Numeric, "s", "cumulative sputter time", "sputter_time_s:>0"},
	{"imported", DateTime, "", "when the entry was added (RFC 3339)", `imported:>="2026-01-01T00:00:00Z"`},
	{"acquired", DateTime, "", "when the spectrum was recorded, if known (RFC 3339)", `acquired:<"2025-06-01T00:00:00Z"`},
}

// Fields returns the searchable fields of the index.
func Fields() []Field { return append([]Field(nil), fields...) }

// newMapping builds the explicit, static index mapping: only the fields
// listed above are indexed; text and keyword fields also feed the default
// (_all) field that terms without a field name search.
func newMapping() (*mapping.IndexMappingImpl, error) {
	im := bleve.NewIndexMapping()
	if err := im.AddCustomAnalyzer(keywordAnalyzer, map[string]any{
		"type":          custom.Name,
		"tokenizer":     single.Name,
		"token_filters": []any{lowercase.Name},
	}); err != nil {
		return nil, err
	}
	im.DefaultAnalyzer = standard.Name
	im.IndexDynamic = false
	im.StoreDynamic = false
	im.DocValuesDynamic = false

	doc := bleve.NewDocumentStaticMapping()
	for _, f := range fields {
		var fm *mapping.FieldMapping
		switch f.Kind {
		case Keyword:
			fm = bleve.NewKeywordFieldMapping()
			fm.Analyzer = keywordAnalyzer
		case Text:
			fm = bleve.NewTextFieldMapping()
			fm.Analyzer = standard.Name
		case Numeric:
			fm = bleve.NewNumericFieldMapping()
			fm.IncludeInAll = false
		case DateTime:
			fm = bleve.NewDateTimeFieldMapping()
			fm.IncludeInAll = false
		}
		fm.Store = true
		fm.DocValues = f.Kind == Numeric || f.Kind == DateTime
		doc.AddFieldMappingsAt(f.Name, fm)
	}
	for _, name := range []string{fieldVector, fieldFingerprint} {
		fm := bleve.NewTextFieldMapping()
		fm.Index = false
		fm.Store = true
		fm.IncludeInAll = false
		fm.IncludeTermVectors = false
		fm.DocValues = false
		doc.AddFieldMappingsAt(name, fm)
	}
	im.DefaultMapping = doc
	im.DefaultField = "_all"
	return im, nil
}

// clauseField matches "name:" at the start of a query clause.
var clauseField = regexp.MustCompile(`(?:^|[\s+\-])([A-Za-z_][A-Za-z0-9_.]*):`)

// UnknownFields returns the field names a query string uses that the index
// does not have (such clauses silently match nothing), in order of
// appearance. Text inside double quotes is ignored.
func UnknownFields(q string) []string {
	var b strings.Builder
	in := false
	for i := 0; i < len(q); i++ {
		c := q[i]
		if c == '\\' && i+1 < len(q) {
			i++
			b.WriteString("  ")
			continue
		}
		if c == '"' {
			in = !in
		}
		if in {
			b.WriteByte(' ')
		} else {
			b.WriteByte(c)
		}
	}
	known := map[string]bool{"_all": true, "_id": true}
	for _, f := range fields {
		known[f.Name] = true
	}
	var out []string
	seen := map[string]bool{}
	for _, m := range clauseField.FindAllStringSubmatch(b.String(), -1) {
		if !known[m[1]] && !seen[m[1]] {
			seen[m[1]] = true
			out = append(out, m[1])
		}
	}
	return out
}
