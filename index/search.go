package index

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/blevesearch/bleve/v2"
	"github.com/blevesearch/bleve/v2/search"
	"github.com/blevesearch/bleve/v2/search/query"

	"statemix/lineshape"
)

// DefaultTop is the number of hits returned when none is asked for.
const DefaultTop = 10

// Hit is one search result.
type Hit struct {
	Ref        string  `json:"ref"`
	Kind       string  `json:"kind"`
	Name       string  `json:"name"`
	Element    string  `json:"element"`
	Transition string  `json:"transition"`
	State      string  `json:"state"`
	Compound   string  `json:"compound"`
	Mode       string  `json:"mode"`
	EnergyLo   float64 `json:"energy_lo_ev"`
	EnergyHi   float64 `json:"energy_hi_ev"`
	// Score is bleve's relevance score of the query (for similarity search,
	// of the candidate query).
	Score float64 `json:"score"`
	// Ranked is true when Similarity and ShiftEV are set (similarity search).
	Ranked bool `json:"-"`
	// Similarity is the maximum normalised (Pearson) correlation with the
	// unknown over the shifts tried, in [-1, 1].
	Similarity float64 `json:"similarity"`
	// ShiftEV is the energy shift of the entry that best matches the
	// unknown, eV: positive when the unknown lies at higher energy.
	ShiftEV float64 `json:"shift_ev"`
}

// hitFields are loaded with every hit.
var hitFields = []string{fieldRef, "kind", "name", "element", "transition", "state", "compound", "mode", fieldLo, fieldHi}

// parseQuery turns the command line's query string into a bleve query;
// the empty string matches everything.
func parseQuery(q string) (query.Query, error) {
	q = strings.TrimSpace(q)
	if q == "" {
		return bleve.NewMatchAllQuery(), nil
	}
	qq := bleve.NewQueryStringQuery(requireFieldClauses(q))
	if _, err := qq.Parse(); err != nil {
		return nil, fmt.Errorf("query %q: %v", q, err)
	}
	return qq, nil
}

// requireFieldClauses marks every field clause (field:value) that has no
// + or - prefix as required, so that "element:Ti state:nitride" selects Ti
// nitrides, as an analyst reads it, instead of ranking everything that has
// either. Free-text terms and phrases stay optional and only rank. Quoted
// text is left alone.
func requireFieldClauses(q string) string {
	var b strings.Builder
	inQuote, start := false, true
	for i := 0; i < len(q); i++ {
		c := q[i]
		switch {
		case c == '\\' && i+1 < len(q):
			if start {
				start = false
				if fieldClause(q[i:]) {
					b.WriteByte('+')
				}
			}
			b.WriteByte(c)
			i++
			b.WriteByte(q[i])
			continue
		case c == '"':
			if start {
				start = false
			}
			inQuote = !inQuote
		case !inQuote && (c == ' ' || c == '\t' || c == '\n'):
			start = true
		case start:
			start = false
			if c != '+' && c != '-' && fieldClause(q[i:]) {
				b.WriteByte('+')
			}
		}
		b.WriteByte(c)
	}
	return b.String()
}

// fieldClause reports whether the token at the start of s is field:value.
func fieldClause(s string) bool {
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c == ':':
			return i > 0
		case c == '\\' || c == '"' || c == ' ' || c == '\t' || c == '\n':
			return false
		}
	}
	return false
}

// Search runs a query in bleve's query-string syntax (element:Ti
// state:nitride "diffusion barrier"; numeric ranges as
// beam_energy_kev:>=9.5), with field clauses required unless prefixed by
// + or - (see requireFieldClauses), and returns the top hits by relevance, and the
// total number of matches. top <= 0 means DefaultTop.
func (x *Index) Search(q string, top int) ([]Hit, int, error) {
	if top <= 0 {
		top = DefaultTop
	}
	qq, err := parseQuery(q)
	if err != nil {
		return nil, 0, err
	}
	req := bleve.NewSearchRequestOptions(qq, top, 0, false)
	req.Fields = hitFields
	req.SortBy([]string{"-_score", fieldRef})
	res, err := x.bi.Search(req)
	if err != nil {
		return nil, 0, fmt.Errorf("search %q: %w", q, err)
	}
	hits := make([]Hit, len(res.Hits))
	for i, h := range res.Hits {
		hits[i] = hitOf(h)
	}
	return hits, int(res.Total), nil
}

func hitOf(h *search.DocumentMatch) Hit {
	str := func(k string) string { s, _ := h.Fields[k].(string); return s }
	num := func(k string) float64 { f, _ := h.Fields[k].(float64); return f }
	return Hit{
		Ref: h.ID, Kind: str("kind"), Name: str("name"), Element: str("element"),
		Transition: str("transition"), State: str("state"), Compound: str("compound"),
		Mode: str("mode"), EnergyLo: num(fieldLo), EnergyHi: num(fieldHi), Score: h.Score,
	}
}

// LikeOptions configure a similarity search. The zero value searches the
// whole library with the defaults below.
type LikeOptions struct {
	// Query, in query-string syntax, restricts the candidates
	// ("kind:reference"); empty means no restriction.
	Query string
	// Element, when not empty, restricts the candidates to entries of that
	// element.
	Element string
	// Top is the number of hits returned; 0 means DefaultTop.
	Top int
	// MaxShiftEV is the largest shift tried, eV; 0 means MaxShiftEV (5 eV).
	MaxShiftEV float64
	// FeatureTolEV is how far, eV, a candidate's main derivative minimum may
	// lie from one of the unknown's; 0 means MaxShiftEV + 3 eV.
	FeatureTolEV float64
	// MaxCandidates is how many candidates the index proposes for exact
	// ranking; 0 means 2000.
	MaxCandidates int
	// ModulationEV is the modulation to emulate when the unknown is direct
	// and a candidate does not say its own; 0 means the unknown's metadata,
	// else DefaultModulationEV.
	ModulationEV float64
}

// Like finds the entries most similar to the spectrum s: the index proposes
// candidates (same element if given, energy range overlapping s's by at
// least half the shorter of the two, ranked first when one of their main
// derivative minima lies within FeatureTolEV of one of s's), and each
// candidate is ranked by the maximum normalised correlation between it and
// s over shifts within +/-MaxShiftEV, on the common 0.5 eV grid in
// derivative mode (a direct spectrum is compared through lock-in emulation
// with the derivative side's modulation). Hits come best first.
func (x *Index) Like(s *lineshape.Spectrum, o LikeOptions) ([]Hit, error) {
	if o.Top <= 0 {
		o.Top = DefaultTop
	}
	if o.MaxShiftEV <= 0 {
		o.MaxShiftEV = MaxShiftEV
	}
	if o.FeatureTolEV <= 0 {
		o.FeatureTolEV = o.MaxShiftEV + 3
	}
	if o.MaxCandidates <= 0 {
		o.MaxCandidates = 2000
	}
	mod := o.ModulationEV
	if mod <= 0 {
		mod = s.Meta.ModulationEV
	}
	if mod <= 0 {
		mod = DefaultModulationEV
	}
	qv, err := newVector(s, mod)
	if err != nil {
		return nil, fmt.Errorf("similarity search: %v", err)
	}
	qlo, qhi := float64(qv.K0)*GridStepEV, float64(qv.hi()-1)*GridStepEV
	// Overlap of at least half the unknown's range or 10 eV, whichever is
	// less, is a cheap necessary filter; correlate checks the real overlap.
	need := math.Min((qhi-qlo)/2, float64(minVectorLen)*GridStepEV)
	inc := true
	hiMin := qlo + need
	loMax := qhi - need
	must := []query.Query{
		&query.NumericRangeQuery{Min: &hiMin, InclusiveMin: &inc, FieldVal: fieldHi},
		&query.NumericRangeQuery{Max: &loMax, InclusiveMax: &inc, FieldVal: fieldLo},
	}
	if o.Element != "" {
		tq := bleve.NewTermQuery(strings.ToLower(o.Element))
		tq.SetField("element")
		must = append(must, tq)
	}
	if strings.TrimSpace(o.Query) != "" {
		qq, err := parseQuery(o.Query)
		if err != nil {
			return nil, err
		}
		must = append(must, qq)
	}
	var should []query.Query
	for _, f := range mainMinima(qv, 3) {
		lo, hi := f-o.FeatureTolEV, f+o.FeatureTolEV
		should = append(should, &query.NumericRangeQuery{Min: &lo, Max: &hi, InclusiveMin: &inc, InclusiveMax: &inc, FieldVal: fieldFeatures})
	}
	bq := bleve.NewBooleanQuery()
	bq.AddMust(must...)
	if len(should) > 0 {
		bq.AddShould(should...)
	}
	req := bleve.NewSearchRequestOptions(bq, o.MaxCandidates, 0, false)
	req.Fields = append(append([]string(nil), hitFields...), fieldVector, "modulation_ev")
	req.SortBy([]string{"-_score", fieldRef})
	res, err := x.bi.Search(req)
	if err != nil {
		return nil, fmt.Errorf("similarity search: %w", err)
	}
	maxLag := int(math.Round(o.MaxShiftEV / GridStepEV))
	derivProbe := newProbe(qv)
	// A direct unknown is compared through lock-in emulation with each
	// candidate's own modulation; probes are cached per modulation.
	probes := map[float64]*probe{}
	probeFor := func(k float64) *probe {
		if s.Mode == lineshape.Derivative {
			return derivProbe
		}
		if !(k > 0) {
			k = mod
		}
		k = math.Round(k*10) / 10
		if p, ok := probes[k]; ok {
			return p
		}
		v, err := newVector(s, k)
		p := derivProbe
		if err == nil {
			p = newProbe(v)
		}
		probes[k] = p
		return p
	}
	var hits []Hit
	for _, h := range res.Hits {
		enc, _ := h.Fields[fieldVector].(string)
		if enc == "" {
			continue
		}
		v, err := decodeVector(enc)
		if err != nil {
			continue
		}
		k, _ := h.Fields["modulation_ev"].(float64)
		m, ok := probeFor(k).correlate(v, maxLag)
		if !ok {
			continue
		}
		hit := hitOf(h)
		hit.Ranked = true
		hit.Similarity = m.Similarity
		hit.ShiftEV = math.Round(m.ShiftEV*1000) / 1000 // 0.001 eV: far below what the grid resolves
		hits = append(hits, hit)
	}
	sort.SliceStable(hits, func(i, j int) bool {
		if hits[i].Similarity != hits[j].Similarity {
			return hits[i].Similarity > hits[j].Similarity
		}
		return hits[i].Ref < hits[j].Ref
	})
	if len(hits) > o.Top {
		hits = hits[:o.Top]
	}
	return hits, nil
}
