// Package inputerr marks errors caused by bad input — a file that does not
// parse, a value out of range, an unknown name, a flag or argument the
// command line does not accept — as opposed to failures while running.
// Every such error matches ErrBadInput under errors.Is, whatever its type
// and however deeply it is wrapped; the command line alone maps it to exit
// status 2.
//
// An error type that carries more (a position in a file, a row, the holder
// of a lock) marks itself with an Is method:
//
//	func (e *RowError) Is(target error) bool { return target == inputerr.ErrBadInput }
//
// and a plain message is marked with Errorf or Wrap.
package inputerr

import (
	"errors"
	"fmt"
)

// ErrBadInput is matched by every bad-input error (errors.Is). Its own
// message is never shown: the marked error's is.
var ErrBadInput = errors.New("bad input")

// Error is an error marked as bad input. Its message is Err's.
type Error struct{ Err error }

func (e *Error) Error() string { return e.Err.Error() }

// Unwrap returns the marked error.
func (e *Error) Unwrap() error { return e.Err }

// Is reports whether target is ErrBadInput.
func (e *Error) Is(target error) bool { return target == ErrBadInput }

// Wrap marks err as bad input; nil stays nil.
func Wrap(err error) error {
	if err == nil {
		return nil
	}
	return &Error{err}
}

// Errorf formats an error as fmt.Errorf does (%w included) and marks it as
// bad input.
func Errorf(format string, args ...any) error {
	return &Error{fmt.Errorf(format, args...)}
}
