package yamlx

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"syscall"

	"hoplore/internal/inputerr"
)

// Limits on what an input file may make hoplore do before any check of its
// content: bad or hostile input is refused in time and memory linear in its
// size.
const (
	// MaxFileBytes is the largest input file read (experiment, topology,
	// traffic or condition files): 256 MiB.
	MaxFileBytes = 256 << 20
	// MaxDepth is the deepest nesting of YAML collections accepted.
	MaxDepth = 64
	// MaxAliases is the most alias uses (*name) accepted in one YAML file,
	// so that alias expansion stays small (k uses can at most expand a
	// file by a factor of about e^(k/e); 16 uses: at most 2^8 = 256 copies).
	MaxAliases = 16
)

// bom is the UTF-8 byte order mark, accepted and ignored at the start of a file.
var bom = []byte{0xEF, 0xBB, 0xBF}

// ReadFile reads an input file: it must be a regular file (not a folder,
// device or FIFO: opening never blocks) of at most MaxFileBytes. A leading
// UTF-8 byte order mark is dropped. Errors name the file and are bad input
// (inputerr.ErrBadInput).
func ReadFile(path string) ([]byte, error) {
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, &FileError{Path: path, Err: err}
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, &FileError{Path: path, Err: err}
	}
	if !st.Mode().IsRegular() {
		return nil, &FileError{Path: path, Err: errors.New("not a regular file")}
	}
	if st.Size() > MaxFileBytes {
		return nil, &FileError{Path: path, Err: fmt.Errorf("%d bytes, above the limit of %d MiB for input files", st.Size(), MaxFileBytes>>20)}
	}
	// The size may change while reading: read at most one byte past the limit.
	b, err := io.ReadAll(io.LimitReader(f, MaxFileBytes+1))
	if err != nil {
		return nil, &FileError{Path: path, Err: err}
	}
	if len(b) > MaxFileBytes {
		return nil, &FileError{Path: path, Err: fmt.Errorf("above the limit of %d MiB for input files", MaxFileBytes>>20)}
	}
	return bytes.TrimPrefix(b, bom), nil
}

// FileError is an input file that cannot be read or is refused unread.
type FileError struct {
	Path string
	Err  error
}

func (e *FileError) Error() string {
	err := e.Err
	var pe *os.PathError
	if errors.As(err, &pe) {
		err = pe.Err
	}
	return fmt.Sprintf("cannot read %s: %v", e.Path, err)
}

func (e *FileError) Unwrap() error { return e.Err }

// Is marks the error as bad input (inputerr.ErrBadInput).
func (e *FileError) Is(target error) bool { return target == inputerr.ErrBadInput }

// CheckShape refuses YAML nested deeper than MaxDepth (flow brackets or
// block indentation levels) or with more than MaxAliases alias uses, in one
// pass over the bytes, before the YAML library sees them (its parser is
// quadratic in nesting depth and expands aliases). The error is an *Error at
// the offending position.
func CheckShape(file string, data []byte) error {
	line, col := 1, 0
	flow := 0         // open [ and {
	var indents []int // block indentation stack
	aliases := 0
	inSingle, inDouble, inComment := false, false, false
	atLineStart, indent := true, 0
	prev := byte('\n')
	seqs := 0 // "- " sequence entries opened on the current line
	for i := 0; i < len(data); i++ {
		c := data[i]
		col++
		if c == '\n' {
			line, col = line+1, 0
			inComment = false
			if flow == 0 {
				inSingle, inDouble = false, false // quoted block scalars are not multi-line here
			}
			atLineStart, indent, prev, seqs = true, 0, c, 0
			continue
		}
		if atLineStart {
			if c == ' ' {
				indent++
				prev = c
				continue
			}
			atLineStart = false
			if c != '#' && flow == 0 {
				for len(indents) > 0 && indents[len(indents)-1] >= indent {
					indents = indents[:len(indents)-1]
				}
				indents = append(indents, indent)
				if len(indents) > MaxDepth {
					return Errorf(file, Pos{Line: line, Col: col}, "nested more than %d levels deep", MaxDepth)
				}
			}
		}
		switch {
		case inComment:
		case inSingle:
			if c == '\'' {
				inSingle = false
			}
		case inDouble:
			if c == '\\' {
				i++
				col++
			} else if c == '"' {
				inDouble = false
			}
		case c == '#' && (prev == ' ' || prev == '\t' || prev == '\n'):
			inComment = true
		case c == '\'' && isValueStart(prev):
			inSingle = true
		case c == '"' && isValueStart(prev):
			inDouble = true
		case c == '-' && flow == 0 && isValueStart(prev) && i+1 < len(data) && data[i+1] == ' ':
			seqs++
			if seqs+len(indents) > MaxDepth {
				return Errorf(file, Pos{Line: line, Col: col}, "nested more than %d levels deep", MaxDepth)
			}
		case c == '[' || c == '{':
			flow++
			if flow+len(indents) > MaxDepth {
				return Errorf(file, Pos{Line: line, Col: col}, "nested more than %d levels deep", MaxDepth)
			}
		case c == ']' || c == '}':
			if flow > 0 {
				flow--
			}
		case c == '*' && isValueStart(prev):
			aliases++
			if aliases > MaxAliases {
				return Errorf(file, Pos{Line: line, Col: col}, "more than %d alias uses (*name)", MaxAliases)
			}
		}
		prev = c
	}
	return nil
}

// isValueStart reports whether a character after prev starts a YAML token.
func isValueStart(prev byte) bool {
	switch prev {
	case ' ', '\t', '\n', '[', '{', ',', ':', '-':
		return true
	}
	return false
}
