package main

import (
	"encoding/json"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"statemix/index"
)

// searchOptions holds the flag values of statemix search.
type searchOptions struct {
	Query  string
	Like   string
	Block  int // 1-based; 0: the file's only block
	Top    int
	Fields bool
}

func newSearchCmd(app *App) *cobra.Command {
	o := &searchOptions{}
	cmd := &cobra.Command{
		Use:   "search [QUERY]",
		Short: "Find references and past measurements by field, text or spectral similarity",
		Long: `search queries the library index with bleve's query-string syntax:

  statemix search 'element:Ti state:nitride "diffusion barrier"'
  statemix search '+element:Ti +beam_energy_kev:>=9.5 +beam_energy_kev:<=10.5'

A field clause (field:value) must match unless it starts with + or -
(- excludes); free words and quoted phrases without a field only rank the
matches. Keyword fields match whole values case-insensitively, text fields
match words, numeric fields take >, >=, <, <= and dates quoted RFC 3339
times. Without a query (or with --fields) it lists the fields.

With --like FILE it ranks entries by spectral similarity to the spectrum in
FILE: the maximum normalised correlation over energy shifts within +/-5 eV
on a common 0.5 eV grid in derivative mode (lock-in emulation where modes
differ), reporting the similarity and the best shift (positive: FILE lies
at higher energy). A QUERY given with --like restricts the candidates.`,
		Example: `  # Titanium nitride references that mention a diffusion barrier
  statemix search 'element:Ti state:nitride "diffusion barrier"'

  # The five entries whose lineshape is most like an unknown spectrum
  statemix search --like spot1.vms --top 5

  # Only oxide references, ranked by similarity, as JSON for a script
  statemix search --like spot1.vms 'state:oxide' --json

  # The fields a query can use
  statemix search --fields`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if len(args) == 1 {
				o.Query = args[0]
			}
			if o.Block < 0 {
				return usageErrorf("search: --block %d: blocks count from 1", o.Block)
			}
			if o.Top < 1 {
				return usageErrorf("search: --top %d: need a positive number", o.Top)
			}
			if o.Block > 0 && o.Like == "" {
				return usageErrorf("search: --block needs --like FILE")
			}
			return runSearch(app, o)
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.Like, "like", "", "rank by similarity to the spectrum in `FILE`")
	f.IntVar(&o.Block, "block", 0, "block `N` of the --like file (1-based; default: its only block)")
	f.IntVar(&o.Top, "top", index.DefaultTop, "show the best `N` hits")
	f.BoolVar(&o.Fields, "fields", false, "list the searchable fields and exit")
	_ = cmd.MarkFlagFilename("like")
	return cmd
}

// searchJSON is the statemix.search/v1 document.
type searchJSON struct {
	Schema string          `json:"schema"`
	Total  int             `json:"total"`
	Hits   []searchHitJSON `json:"hits"`
}

type searchHitJSON struct {
	Ref        string      `json:"ref"`
	Kind       string      `json:"kind"`
	Name       string      `json:"name"`
	Element    string      `json:"element"`
	State      string      `json:"state"`
	Score      float64     `json:"score"`
	Similarity *float64    `json:"similarity"` // null without --like
	ShiftEV    *float64    `json:"shift_ev"`   // null without --like
	Transition string      `json:"transition,omitempty"`
	EnergyEV   *[2]float64 `json:"energy_ev,omitempty"`
}

func runSearch(app *App, o *searchOptions) error {
	if o.Fields || (o.Query == "" && o.Like == "") {
		return printFields(app)
	}
	store, err := app.openLibrary(false)
	if err != nil {
		return err
	}
	x, err := app.openSearchIndex(store)
	if err != nil {
		return err
	}
	defer x.Close()
	for _, f := range index.UnknownFields(o.Query) {
		app.Warn(fmt.Sprintf("search: the index has no field %q; it matches nothing (statemix search --fields lists them)", f))
	}
	var hits []index.Hit
	total := 0
	if o.Like != "" {
		s, err := readSpectrumBlock(o.Like, o.Block)
		if err != nil {
			return err
		}
		hits, err = x.Like(s, index.LikeOptions{Query: o.Query, Top: o.Top})
		if err != nil {
			return badInput(fmt.Errorf("%s: %w", o.Like, err))
		}
		total = len(hits)
	} else {
		hits, total, err = x.Search(o.Query, o.Top)
		if err != nil {
			return usageErrorf("search: %v", err)
		}
	}
	if app.JSON {
		return writeSearchJSON(app.Out, hits, total)
	}
	return writeSearchTable(app.Out, hits, total, o.Like != "")
}

func writeSearchJSON(w io.Writer, hits []index.Hit, total int) error {
	doc := searchJSON{Schema: "statemix.search/v1", Total: total, Hits: make([]searchHitJSON, len(hits))}
	for i, h := range hits {
		j := searchHitJSON{Ref: h.Ref, Kind: h.Kind, Name: h.Name, Element: h.Element, State: h.State,
			Score: h.Score, Transition: h.Transition}
		if h.Ranked {
			sim, sh := h.Similarity, h.ShiftEV
			j.Similarity, j.ShiftEV = &sim, &sh
		}
		if h.EnergyHi > h.EnergyLo {
			j.EnergyEV = &[2]float64{h.EnergyLo, h.EnergyHi}
		}
		doc.Hits[i] = j
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(doc)
}

func writeSearchTable(w io.Writer, hits []index.Hit, total int, like bool) error {
	if len(hits) == 0 {
		_, err := fmt.Fprintln(w, "no matches")
		return err
	}
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	if like {
		fmt.Fprintln(tw, "REF\tNAME\tKIND\tELEMENT\tSTATE\tSIMILARITY\tSHIFT eV")
		for _, h := range hits {
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%.4f\t%+.2f\n", h.Ref, h.Name, h.Kind, dash(h.Element), dash(h.State), h.Similarity, h.ShiftEV)
		}
	} else {
		fmt.Fprintln(tw, "REF\tNAME\tKIND\tELEMENT\tSTATE\tENERGY eV\tSCORE")
		for _, h := range hits {
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%.0f-%.0f\t%.3f\n", h.Ref, h.Name, h.Kind, dash(h.Element), dash(h.State), h.EnergyLo, h.EnergyHi, h.Score)
		}
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if !like && total > len(hits) {
		_, err := fmt.Fprintf(w, "%d of %d matches (--top shows more)\n", len(hits), total)
		return err
	}
	return nil
}

func printFields(app *App) error {
	fs := index.Fields()
	if app.JSON {
		enc := json.NewEncoder(app.Out)
		enc.SetIndent("", "  ")
		return enc.Encode(struct {
			Schema string        `json:"schema"`
			Fields []index.Field `json:"fields"`
		}{"statemix.search-fields/v1", fs})
	}
	tw := tabwriter.NewWriter(app.Out, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "FIELD\tKIND\tUNIT\tWHAT\tEXAMPLE")
	for _, f := range fs {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\n", f.Name, f.Kind, dash(f.Unit), f.Doc, f.Example)
	}
	return tw.Flush()
}

func dash(s string) string {
	if strings.TrimSpace(s) == "" {
		return "-"
	}
	return s
}
