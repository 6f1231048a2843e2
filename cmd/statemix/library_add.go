package main

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"statemix/library"
	"statemix/lineshape"
	"statemix/lineshape/format"
)

// libraryAddOptions holds the flag values of library add.
type libraryAddOptions struct {
	Files      []string
	Element    string
	Transition string
	State      string
	Name       string
	Compound   string
	Tags       []string // key=value
	Note       string
	Block      int // 1-based; 0: the file's only block
	AllBlocks  bool
	Mode       string // "", "direct" or "derivative"
}

func newLibraryAddCmd(app *App) *cobra.Command {
	o := &libraryAddOptions{}
	cmd := &cobra.Command{
		Use:   "add FILE... --element EL --transition T --state S",
		Short: "Add reference spectra from ISO 14976 or delimited text files",
		Long: `add reads reference spectra and stores them in the library with their
labels, provenance (the file's SHA-256, block, time, program version) and
the acquisition conditions the file records (beam energy and current,
modulation, dwell, scans, analyser mode).

FILE is an ISO 14976 (VAMAS) file, from which add takes its only block, the
block given by --block (counted from 1), or every block with --all-blocks;
or a delimited text file (CSV, TSV or whitespace columns: energy in eV,
then one or more value columns, chosen like blocks); or a statemix
spectrum JSON file. --mode says whether values are direct N(E) or derivative
dN/dE when the file does not.

The element must have Auger transitions (not H or He), the transition is
IUPAC notation (KLL, KL23L23, L3M45M45, LVV, MNN ...), and the state is
one of metal, oxide, nitride, carbide, silicide, sulfide, hydroxide,
fluoride, boride, or other:<text>. add warns when the spectrum reaches
outside 20 eV - 3 keV, when its main derivative feature lies more than
20 eV from the Chung-Jenkins estimate of the transition energy, and when
its lineshape matches, within noise, a reference of the same element in
another state. All files are added in one operation, or none.

Without --name an entry is named "<element> <state> <transition>"; with
--name and several spectra each gets "NAME (FILE block N)".`,
		Example: `  statemix library add tin-film.vms --element Ti --transition L3M23M23 --state nitride --name "TiN film 2026"
  statemix library add foils.vms --all-blocks --element Cu --transition L3M45M45 --state metal --tag lab=north
  statemix library add al2o3.csv --mode derivative --element Al --transition KL23L23 --state oxide --compound Al2O3`,
		Args: cobra.MinimumNArgs(1),
		ValidArgsFunction: func(cmd *cobra.Command, args []string, toComplete string) ([]string, cobra.ShellCompDirective) {
			return []string{"vms", "vamas", "csv", "tsv", "txt", "dat"}, cobra.ShellCompDirectiveFilterFileExt
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.Files = args
			if o.Block < 0 {
				return usageErrorf("library add: --block %d: blocks count from 1", o.Block)
			}
			if o.Mode != "" {
				if _, err := lineshape.ParseMode(o.Mode); err != nil {
					return usageErrorf("library add: --mode: %v", err)
				}
			}
			if _, err := library.ParseState(o.State); err != nil {
				return badInput(fmt.Errorf("library add: --state: %w", err))
			}
			if _, err := parseTags(o.Tags); err != nil {
				return usageErrorf("library add: %v", err)
			}
			return runLibraryAdd(app, o)
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.Element, "element", "", "element `SYMBOL`, e.g. Ti (required)")
	f.StringVar(&o.Transition, "transition", "", "Auger transition `T` in IUPAC notation, e.g. L3M23M23 (required)")
	f.StringVar(&o.State, "state", "", "chemical `STATE`: metal, oxide, nitride, carbide, silicide, sulfide, hydroxide, fluoride, boride, other:<text> (required)")
	f.StringVar(&o.Name, "name", "", "entry `NAME` (default \"<element> <state> <transition>\")")
	f.StringVar(&o.Compound, "compound", "", "compound `FORMULA`, e.g. TiN")
	f.StringArrayVar(&o.Tags, "tag", nil, "label `KEY=VALUE` (repeatable)")
	f.StringVar(&o.Note, "note", "", "free `TEXT`")
	f.IntVar(&o.Block, "block", 0, "take spectrum `N` (ISO 14976 block or delimited value column, from 1; default: the only one)")
	f.BoolVar(&o.AllBlocks, "all-blocks", false, "take every spectrum of the file")
	f.StringVar(&o.Mode, "mode", "", "values are `MODE` direct or derivative (default: what the file says)")
	for _, r := range []string{"element", "transition", "state"} {
		_ = cmd.MarkFlagRequired(r)
	}
	cmd.MarkFlagsMutuallyExclusive("block", "all-blocks")
	_ = cmd.RegisterFlagCompletionFunc("state", completeStates)
	_ = cmd.RegisterFlagCompletionFunc("mode", completeModes)
	return cmd
}

// completeModes completes --mode values.
func completeModes(cmd *cobra.Command, args []string, toComplete string) ([]string, cobra.ShellCompDirective) {
	return []string{"direct", "derivative"}, cobra.ShellCompDirectiveNoFileComp
}

// parseTags parses key=value labels.
func parseTags(kvs []string) (map[string]string, error) {
	if len(kvs) == 0 {
		return nil, nil
	}
	m := map[string]string{}
	for _, kv := range kvs {
		k, v, ok := strings.Cut(kv, "=")
		k = strings.TrimSpace(k)
		if !ok || k == "" {
			return nil, fmt.Errorf("--tag %q: want KEY=VALUE", kv)
		}
		m[k] = strings.TrimSpace(v)
	}
	return m, nil
}

// addedJSON is the statemix.added/v1 document.
type addedJSON struct {
	Schema   string        `json:"schema"`
	Added    []refJSON     `json:"added"`
	Revision int           `json:"revision"`
	Warnings []warningJSON `json:"warnings"`
}

func runLibraryAdd(app *App, o *libraryAddOptions) error {
	var mode *lineshape.Mode
	if o.Mode != "" {
		m, _ := lineshape.ParseMode(o.Mode)
		mode = &m
	}
	tags, _ := parseTags(o.Tags)
	type source struct {
		file  string
		sum   string
		block int
		spec  *lineshape.Spectrum
	}
	var srcs []source
	for _, path := range o.Files {
		sum, err := fileSHA256(path)
		if err != nil {
			return fmt.Errorf("library add: %w", err)
		}
		specs, err := readSpectraFile(path, mode)
		if err != nil {
			return err
		}
		blocks, err := chooseBlocks(path, len(specs), o.Block, o.AllBlocks)
		if err != nil {
			return err
		}
		for _, b := range blocks {
			srcs = append(srcs, source{file: path, sum: sum, block: b, spec: specs[b]})
		}
	}
	entries := make([]*library.Entry, len(srcs))
	for i, s := range srcs {
		name := o.Name
		if name != "" && len(srcs) > 1 {
			name = fmt.Sprintf("%s (%s block %d)", o.Name, filepath.Base(s.file), s.block+1)
		}
		var t map[string]string
		if tags != nil {
			t = map[string]string{}
			for k, v := range tags {
				t[k] = v
			}
		}
		entries[i] = &library.Entry{
			Kind: library.KindReference, Name: name,
			Element: o.Element, Transition: o.Transition, State: o.State,
			Compound: o.Compound, Tags: t, Note: o.Note,
			Provenance: library.Provenance{
				SourceFile: s.file, SourceSHA256: s.sum, Block: s.block, BlockID: s.spec.Meta.BlockID,
				ImportedAt: app.Now().UTC(), ToolVersion: "statemix " + Version,
			},
			Acquisition: library.AcquisitionFromMeta(s.spec.Meta),
			Spectrum:    s.spec,
		}
	}
	st, err := app.openLibrary(true)
	if err != nil {
		return err
	}
	added, warns, err := st.Add(entries...)
	if err != nil {
		return libraryError(fmt.Errorf("library add: %w", err))
	}
	app.afterLibraryWrite(st)
	printWarnings(app, warns)
	if app.JSON {
		return writeJSON(app.Out, addedJSON{Schema: "statemix.added/v1", Added: refsOf(added), Revision: st.Revision(), Warnings: warningsOf(warns)})
	}
	tw := newTable(app.Out)
	fmt.Fprintln(tw, "REF\tNAME\tELEMENT\tTRANSITION\tSTATE\tENERGY (eV)\tSOURCE")
	for _, e := range added {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s block %d\n", e.ID, e.Name, e.Element, e.Transition, e.State,
			energyRange(e), filepath.Base(e.Provenance.SourceFile), e.Provenance.Block+1)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	app.Infof("added %d %s (library revision %d)\n", len(added), plural(len(added), "entry", "entries"), st.Revision())
	return nil
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// chooseBlocks returns the 0-based blocks to take from a file of n blocks:
// block (1-based) if given, all with all, else the only one.
func chooseBlocks(path string, n, block int, all bool) ([]int, error) {
	switch {
	case all:
		out := make([]int, n)
		for i := range out {
			out[i] = i
		}
		return out, nil
	case block > 0:
		if block > n {
			return nil, &lineshape.InputError{File: path, Block: -1, Err: fmt.Errorf("no block %d: the file has %d", block, n)}
		}
		return []int{block - 1}, nil
	case n != 1:
		return nil, &lineshape.InputError{File: path, Block: -1, Err: fmt.Errorf("%d blocks: choose one with --block N or take all with --all-blocks", n)}
	}
	return []int{0}, nil
}

// fileSHA256 returns the hex SHA-256 of a file's bytes.
func fileSHA256(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// readSpectraFile reads every spectrum of a file: each block of an ISO
// 14976 file, each spectrum of a statemix spectrum JSON file, each value
// column of a delimited text file (package format tells them apart by
// content). mode, if not nil, overrides the mode the file gives.
func readSpectraFile(path string, mode *lineshape.Mode) ([]*lineshape.Spectrum, error) {
	specs, err := format.ReadFile(path, format.Options{Mode: mode})
	if err != nil {
		return nil, err
	}
	if len(specs) == 0 {
		return nil, &lineshape.InputError{File: path, Block: -1, Err: fmt.Errorf("no spectra in the file")}
	}
	return specs, nil
}
