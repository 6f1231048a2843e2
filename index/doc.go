// Package index keeps a bleve full-text and numeric index over a statemix
// library and answers field, text, numeric-range and spectral-similarity
// queries on it.
//
// # Where it lives
//
// The index is derived data in <library>/index/: the bleve index (scorch)
// in index/bleve, and small notes in index/holders naming the processes
// that have it open. The JSON entry files of the library are the truth;
// Rebuild recreates the index from them at any time (library verify
// --repair) and Check says whether the index is stale.
//
// # Fields
//
// The mapping is static and explicit (see Fields): keyword fields (ref,
// kind, element, transition, state, compound, tags, mode, fit_refs,
// fit_states) match one whole value, case-insensitively; text fields (name,
// note, sample, comments) match words; numeric fields (beam_energy_kev,
// beam_current_na, modulation_ev, energy_lo_ev, energy_hi_ev, peak_ev,
// feature_ev, sputter_time_s) take ranges; imported and acquired are
// date-times. Energies are kinetic energies in eV, beam energy in keV,
// current in nA, times in s. Queries use bleve's query-string syntax with
// one rule of ours on top: a field clause (field:value) is required unless
// it carries its own "+" or "-" ("-" excludes), while free words and
// phrases only rank, so this selects Ti nitrides and ranks those that
// mention a diffusion barrier first:
//
//	element:Ti state:nitride "diffusion barrier"
//	+beam_energy_kev:>=9.5 +beam_energy_kev:<=10.5
//
// # Similarity
//
// Every entry with a spectrum of at least 10 eV also stores a similarity
// vector: the spectrum in derivative mode (a direct spectrum through
// lock-in emulation with its modulation, else DefaultModulationEV),
// averaged to and sampled on the global 0.5 eV grid E_k = k*0.5 eV, mean
// removed, unit norm, as float32 (4 bytes a channel, base64 in the stored
// field "vec"). Its deepest derivative minima are indexed as feature_ev
// and peak_ev. Like asks the index for candidates (overlapping energy
// range, optionally the same element, ranked by main minima within a
// tolerance of the unknown's) and ranks them exactly by the maximum Pearson
// correlation over integer shifts within +/-5 eV, refined to a sub-channel
// shift by a parabola through the best lag and its neighbours. Because all
// vectors share one grid, a candidate costs one pass of 21 dot products;
// prefix sums of the unknown make each overlap's normalisation O(1).
//
// # Suggestions
//
// Suggest proposes references for fit --suggest: candidates by similarity
// (and, for a given element, the index), subsets of up to K fitted with
// package lineshape/fit over one common window, grown from single
// references in a beam search, and the subset with the lowest BIC kept,
// n_eff ln(RSS/n) + p ln(n_eff), with n_eff the fitted channels divided by
// the residual autocorrelation factor. Every trial is reported, with a
// sentence on why the winner won.
//
// # Concurrency
//
// Queries open the index read-only (bleve's read_only with a shared lock on
// its root file), so any number of searches run side by side. A writer
// takes the exclusive lock, waiting at most DefaultTimeout; it leaves a
// note first, and new readers wait while a live writer's note exists, so
// a stream of searches cannot starve it. On timeout both sides return a
// *BusyError naming the holders. Each update is one atomic bleve batch
// that also records the library revision it brings the index to; an
// update of more than one batch marks the index incomplete until its last
// batch, so a writer killed half-way leaves an index Check reports stale.
package index
