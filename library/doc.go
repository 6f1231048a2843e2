// Package library is the lab's own collection of reference spectra and
// archived measurements, kept on disk as plain JSON files.
//
// # Layout
//
// A library is a folder:
//
//	<library>/library.json     manifest {"format":"statemix-library","version":1,"revision":N,...}
//	<library>/catalog.tsv      catalogue: one line of labels per entry file (derived)
//	<library>/refs/<id>.json   one reference: metadata and spectrum
//	<library>/runs/<id>.json   one archived measurement and its fit result
//	<library>/index/           owned by package index; library never writes it
//	<library>/.lock            writer lock (flock), holds the holder's PID
//
// The JSON entry files are the truth; the catalogue and the index are
// derived from them and can always be rebuilt. Every value written round trips
// bit-identically: float64 values are written by encoding/json in the
// shortest form that parses back to the same bits.
//
// # Identity
//
// An entry's ID is the first 12 hexadecimal digits of a SHA-256 digest over
// the entry's kind, the spectrum's mode, its energy axis and its values (as
// IEEE 754 bit patterns), and, for measurements, the compacted fit result
// (see [ComputeID]). Labels (name, element, transition, state, compound,
// tags, note, quantification fields, acquisition conditions) are not part of
// the ID, so correcting a label never changes an entry's address. An entry
// is addressed by its ID, a unique ID prefix of at least 4 characters, or
// its unique name ([Store.Resolve]).
//
// # Catalogue
//
// So that a write or a lookup need not read every entry file, the
// catalogue holds per entry file its id, kind, name, element, transition,
// state, spectrum mode, channel count, energy range and main-feature
// energy (see catalog.go for the format). library.json records the SHA-256
// of the catalogue written with it (field catalog_sha256; readers of
// version 1 ignore it). Add, Edit, Remove and Import check ids and names
// against the catalogue and read only the entry files they need: for the
// duplicate-state check, the references of the same element, another state
// and mode whose catalogued main feature is within the tolerance, after
// which the check on the spectra themselves decides. Resolve reads one
// entry file for a name or prefix. A writer trusts the catalogue only if
// its digest and revision match the manifest, the refs/ and runs/ folders
// have the mtimes it recorded, and it lists exactly the entry files present
// (one directory listing); otherwise (a library written by an older
// version, a write interrupted after an entry file was renamed into place,
// files added, removed or replaced by hand) it reads every entry file, as
// a repair would, and writes a fresh catalogue with its manifest.
// Readers without a matching catalogue read every entry file's head. Labels
// changed by hand in place (the folder's mtime unchanged) are not noticed
// by the catalogue until VerifyDir, which compares it with the files and reports ProblemCatalog;
// a repair rebuilds it (a rebuilt catalogue keeps the revision).
//
// # Safety
//
// Every write goes to a temporary file in the destination folder, is
// fsynced, renamed into place, and the folder is fsynced. Writers take an
// exclusive flock on <library>/.lock, waiting at most [Store.LockTimeout];
// a writer that times out names the holder's PID. Readers take no lock:
// they see each file either before or after a write. A corrupt entry file
// is reported by name by [Store.Entries] and [VerifyDir] and never stops
// the rest of the library from working.
//
// A write that is interrupted leaves the library valid: an entry file is
// either the old or the new one, and a temporary file may be left behind.
// Writers write entry files first, then the manifest, then the catalogue,
// so an interrupted Add or Edit can leave an entry whose revision is above
// the manifest's; VerifyDir reports both, and a repair removes the
// temporary file and raises the revision. A write interrupted after its
// manifest leaves a catalogue the manifest does not record: the write has
// landed, lookups read the entry files until the next write or a repair
// rebuilds the catalogue. An interrupted Remove leaves no trace in the
// manifest; the index check of verify finds the entry the index still
// holds.
//
// # Revisions and the index
//
// Each write operation (Add, Edit, Remove, Import) raises the manifest
// revision by one and records what changed in a bounded change log
// ([Store.ChangesSince]); a repair raises a lagging revision to the
// entries' and logs the entries it recovered, and a rebuilt manifest starts
// a fresh log (ChangesSince then reports it incomplete, so derived data is
// rebuilt). Package index reads entries and keeps its own
// files in [Store.IndexDir]; the command layer tells it what changed after
// each write, and [VerifyOptions.CheckIndex] lets verify check it.
//
// # Queries
//
// [ParseFilter] reads a simple selection, space-separated field:value terms
// that must all match (element:Ti state:nitride tag.lab:north), used by
// export --query until the index's query language replaces it there.
//
// # Units
//
// Energies are kinetic energies in eV, beam energy in keV, beam current in
// nA, dwell in s, density in g/cm3, band gap in eV.
package library
