package library

import (
	"errors"
	"fmt"
	"strings"
	"time"
)

// Sentinel errors; the typed errors below wrap them, so callers test with
// errors.Is.
var (
	ErrNotFound      = errors.New("no such entry")
	ErrAmbiguous     = errors.New("ambiguous reference")
	ErrExists        = errors.New("entry already in the library")
	ErrNameTaken     = errors.New("name already taken")
	ErrInvalid       = errors.New("invalid entry")
	ErrCorrupt       = errors.New("corrupt library file")
	ErrLocked        = errors.New("library is locked")
	ErrNotLibrary    = errors.New("not a statemix library")
	ErrBadBundle     = errors.New("bad bundle")
	ErrBundleClash   = errors.New("bundle clashes with the library")
	ErrLibraryExists = errors.New("library already exists")
)

// NotFoundError says a reference string matched nothing.
type NotFoundError struct{ Ref string }

func (e *NotFoundError) Error() string {
	return fmt.Sprintf("no entry %q (give an id, an id prefix of at least %d characters, or a name)", e.Ref, minPrefix)
}

// Unwrap returns ErrNotFound.
func (e *NotFoundError) Unwrap() error { return ErrNotFound }

// AmbiguousError says a reference string matched more than one entry; IDs
// lists them.
type AmbiguousError struct {
	Ref string
	IDs []string
}

func (e *AmbiguousError) Error() string {
	return fmt.Sprintf("%q is ambiguous: it matches %s", e.Ref, strings.Join(e.IDs, ", "))
}

// Unwrap returns ErrAmbiguous.
func (e *AmbiguousError) Unwrap() error { return ErrAmbiguous }

// ValidationError is an entry whose labels or spectrum are not acceptable:
// bad data, not a program error. Entry names the entry (its name or, before
// it has one, its source and block).
type ValidationError struct {
	Entry string
	Field string // e.g. "element", "transition", "state", "spectrum"
	Err   error
}

func (e *ValidationError) Error() string {
	if e.Entry == "" {
		return fmt.Sprintf("%s: %v", e.Field, e.Err)
	}
	return fmt.Sprintf("%s: %s: %v", e.Entry, e.Field, e.Err)
}

// Unwrap returns both the cause and ErrInvalid.
func (e *ValidationError) Unwrap() []error { return []error{e.Err, ErrInvalid} }

// ExistsError says an entry with the same ID is already in the library.
type ExistsError struct {
	ID   string
	Name string // name of the entry already there
}

func (e *ExistsError) Error() string {
	return fmt.Sprintf("this spectrum is already in the library as %s (%q)", e.ID, e.Name)
}

// Unwrap returns ErrExists.
func (e *ExistsError) Unwrap() error { return ErrExists }

// NameTakenError says a name is already used by another entry.
type NameTakenError struct {
	Name string
	ID   string // entry holding the name; empty if it is another new entry
}

func (e *NameTakenError) Error() string {
	if e.ID == "" {
		return fmt.Sprintf("name %q given to more than one new entry", e.Name)
	}
	return fmt.Sprintf("name %q is already taken by %s", e.Name, e.ID)
}

// Unwrap returns ErrNameTaken.
func (e *NameTakenError) Unwrap() error { return ErrNameTaken }

// CorruptError is a library file that cannot be read as what it should be.
type CorruptError struct {
	Path string
	Err  error
}

func (e *CorruptError) Error() string { return fmt.Sprintf("%s: %v", e.Path, e.Err) }

// Unwrap returns both the cause and ErrCorrupt.
func (e *CorruptError) Unwrap() []error { return []error{e.Err, ErrCorrupt} }

// LockError says the writer lock could not be taken in time.
type LockError struct {
	Path   string        // the lock file
	Holder string        // what the holder wrote: "pid N since TIME", or empty
	Waited time.Duration // how long we waited
}

func (e *LockError) Error() string {
	h := e.Holder
	if h == "" {
		h = "another process"
	}
	return fmt.Sprintf("library is locked by %s (lock file %s); gave up after %v", h, e.Path, e.Waited.Round(time.Millisecond))
}

// Unwrap returns ErrLocked.
func (e *LockError) Unwrap() error { return ErrLocked }

// BundleError is a bundle that cannot be imported: truncated, damaged, a
// checksum mismatch, a bad manifest. Nothing was changed.
type BundleError struct {
	Bundle string // bundle file name if known
	Member string // member of the archive, if the problem is in one
	Err    error
}

func (e *BundleError) Error() string {
	var parts []string
	if e.Bundle != "" {
		parts = append(parts, e.Bundle)
	} else {
		parts = append(parts, "bundle")
	}
	if e.Member != "" {
		parts = append(parts, e.Member)
	}
	parts = append(parts, e.Err.Error())
	return strings.Join(parts, ": ")
}

// Unwrap returns both the cause and ErrBadBundle.
func (e *BundleError) Unwrap() []error { return []error{e.Err, ErrBadBundle} }
