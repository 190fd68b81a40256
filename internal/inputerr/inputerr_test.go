package inputerr_test

import (
	"errors"
	"fmt"
	"io/fs"
	"testing"

	"hoplore/internal/inputerr"
)

type posError struct{ line int }

func (e *posError) Error() string        { return fmt.Sprintf("f.yaml:%d:1: bad", e.line) }
func (e *posError) Is(target error) bool { return target == inputerr.ErrBadInput }

func TestIs(t *testing.T) {
	tests := []struct {
		name string
		err  error
		bad  bool
		msg  string
	}{
		{"Errorf", inputerr.Errorf("run: --workers %d: want 1 to 64", 0), true, "run: --workers 0: want 1 to 64"},
		{"Wrap", inputerr.Wrap(errors.New("merge: two experiments")), true, "merge: two experiments"},
		{"wrapped deeper", fmt.Errorf("cmd: %w", inputerr.Errorf("x")), true, "cmd: x"},
		{"own type", fmt.Errorf("experiments: %w", &posError{3}), true, "experiments: f.yaml:3:1: bad"},
		{"keeps the cause", inputerr.Errorf("report: %w", fs.ErrNotExist), true, "report: file does not exist"},
		{"plain", errors.New("disk full"), false, "disk full"},
		{"nil", inputerr.Wrap(nil), false, ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := errors.Is(tc.err, inputerr.ErrBadInput); got != tc.bad {
				t.Errorf("errors.Is(%v, ErrBadInput) = %v, want %v", tc.err, got, tc.bad)
			}
			if tc.err != nil && tc.err.Error() != tc.msg {
				t.Errorf("message %q, want %q", tc.err.Error(), tc.msg)
			}
		})
	}
	if !errors.Is(inputerr.Errorf("report: %w", fs.ErrNotExist), fs.ErrNotExist) {
		t.Error("the marked error's cause is lost")
	}
}

func ExampleErrorf() {
	err := fmt.Errorf("run: %w", inputerr.Errorf("--shard %q: want I/N", "3"))
	fmt.Println(err, errors.Is(err, inputerr.ErrBadInput))
	// Output:
	// run: --shard "3": want I/N true
}
