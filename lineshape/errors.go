package lineshape

import (
	"fmt"
	"strings"
)

// InputError is bad input data: a malformed file, a value that is not a
// number, an axis that cannot be used. It names the file and, where known,
// the 1-based line and the 0-based block, so the command line can print
// "FILE: line N: block B: why" and exit with status 3.
type InputError struct {
	File  string // file name as given by the user; may be empty
	Line  int    // 1-based line number, 0 if not known
	Block int    // 0-based block index, -1 if not applicable
	Err   error
}

// Error formats the error as "file: line N: block B: why", leaving out the
// parts that are not known.
func (e *InputError) Error() string {
	var parts []string
	if e.File != "" {
		parts = append(parts, e.File)
	}
	if e.Line > 0 {
		parts = append(parts, fmt.Sprintf("line %d", e.Line))
	}
	if e.Block >= 0 {
		parts = append(parts, fmt.Sprintf("block %d", e.Block+1))
	}
	parts = append(parts, e.Err.Error())
	return strings.Join(parts, ": ")
}

// Unwrap returns the underlying error.
func (e *InputError) Unwrap() error { return e.Err }

// Errorf returns an *InputError for file and line (0 if unknown), with no
// block, formatted like fmt.Errorf.
func Errorf(file string, line int, format string, args ...any) error {
	return &InputError{File: file, Line: line, Block: -1, Err: fmt.Errorf(format, args...)}
}
