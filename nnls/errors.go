package nnls

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// ErrNonFinite is reported (possibly wrapped; test with errors.Is) when A
// or b holds a NaN or an infinity, or when finite input is so large that
// the factorization overflows.
var ErrNonFinite = errors.New("nnls: non-finite input")

// nonFiniteError names where the first non-finite value was found. It
// matches ErrNonFinite under errors.Is.
type nonFiniteError struct {
	where string // "a[3,1]", "b[12]" or "" for an overflow of finite input
	v     float64
}

func (e *nonFiniteError) Error() string {
	if e.where == "" {
		return "nnls: non-finite input: factorization overflows (scale the data)"
	}
	return fmt.Sprintf("nnls: non-finite input: %s is %v", e.where, e.v)
}

func (e *nonFiniteError) Is(target error) bool { return target == ErrNonFinite }

// RankError reports that the columns of A are numerically linearly
// dependent, so that the split of the fit between them is not determined
// by the data. Two identical references, a reference equal to a sum of
// others, or a zero column all give a RankError.
type RankError struct {
	// Columns holds the ascending 0-based indices of the columns that take
	// part in the dependency (the support of the right singular vectors of
	// the column-scaled A whose singular values fall below the limit).
	Columns []int
	// Cond is the 2-norm condition number of A with unit-norm columns; it
	// is +Inf for an exactly singular matrix or a zero column.
	Cond float64
	// Limit is the condition number above which A counts as rank
	// deficient (Settings.MaxCond or its default).
	Limit float64
}

func (e *RankError) Error() string {
	if len(e.Columns) == 1 {
		if math.IsInf(e.Cond, 1) {
			return fmt.Sprintf("nnls: column %d is zero", e.Columns[0])
		}
		return fmt.Sprintf("nnls: column %d is negligible (condition %.1g)", e.Columns[0], e.Cond)
	}
	var sb strings.Builder
	sb.WriteString("nnls: columns ")
	for i, c := range e.Columns {
		switch {
		case i == 0:
		case i == len(e.Columns)-1:
			sb.WriteString(" and ")
		default:
			sb.WriteString(", ")
		}
		sb.WriteString(strconv.Itoa(c))
	}
	fmt.Fprintf(&sb, " are collinear (condition %.1g)", e.Cond)
	return sb.String()
}

// ConvergenceError reports that the active-set iteration did not reach
// optimality within the iteration limit. The Result filled alongside holds
// the last feasible iterate.
type ConvergenceError struct {
	Iterations int // outer iterations performed (the limit)
}

func (e *ConvergenceError) Error() string {
	return fmt.Sprintf("nnls: no convergence after %d iterations", e.Iterations)
}
