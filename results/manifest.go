package results

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"

	"hoplore/internal/atomicfile"
	"hoplore/internal/inputerr"
)

// ManifestFile lists, in a result folder, the tables of its last complete
// Finalize with their sizes and SHA-256 sums. Finalize removes it before it
// replaces any table and writes it after the last one is in place, so a
// reader that verifies it (CheckTables) never takes a half-replaced set of
// tables for a whole one: a kill between two renames leaves no manifest, or
// one whose sums no longer match.
const ManifestFile = "tables.json"

// Manifest is the content of ManifestFile.
type Manifest struct {
	Experiment     string          `json:"experiment"`
	ExperimentHash string          `json:"experiment_hash"`
	Runs           int             `json:"runs"`          // runs in the tables
	ExpectedRuns   int             `json:"expected_runs"` // runs of the whole experiment; 0 when unknown
	Tables         []ManifestTable `json:"tables"`
}

// ManifestTable is one table of a Manifest.
type ManifestTable struct {
	File   string `json:"file"`
	Bytes  int64  `json:"bytes"`
	SHA256 string `json:"sha256"`
}

// Missing returns how many of the experiment's runs the tables lack (0 when
// the expected count is unknown).
func (m Manifest) Missing() int {
	if m.ExpectedRuns <= m.Runs {
		return 0
	}
	return m.ExpectedRuns - m.Runs
}

// ErrTables is wrapped by the errors of CheckTables: the folder's tables are
// not a complete set of one experiment's tables.
var ErrTables = errors.New("tables not usable")

// TablesError is a CheckTables refusal; it is about the folder given, so it
// counts as bad input (exit status 2).
type TablesError struct{ msg string }

func (e *TablesError) Error() string { return e.msg }
func (e *TablesError) Unwrap() error { return ErrTables }

// Is marks the refusal as bad input (inputerr.ErrBadInput).
func (e *TablesError) Is(target error) bool { return target == inputerr.ErrBadInput }

func tablesErrorf(format string, a ...any) error {
	return &TablesError{msg: fmt.Sprintf(format, a...)}
}

// CheckTables verifies that DIR holds a complete set of tables written by
// one Finalize, of the experiment its marker names: the manifest exists, its
// experiment hash is the marker's, and every table it lists has the listed
// size and SHA-256 sum. Cost: one read of every table.
func CheckTables(dir string) (Manifest, error) {
	var m Manifest
	mark, err := ReadMark(dir)
	if errors.Is(err, fs.ErrNotExist) {
		return m, tablesErrorf("results: %s is not a result folder (no %s)", dir, MarkFile)
	}
	if err != nil {
		return m, err
	}
	b, err := os.ReadFile(filepath.Join(dir, ManifestFile))
	if errors.Is(err, fs.ErrNotExist) {
		return m, tablesErrorf("results: %s has no complete set of tables (no %s: the last write was interrupted, or none finished); rerun the same hoplore run (or merge) into it to rewrite them", dir, ManifestFile)
	}
	if err != nil {
		return m, fmt.Errorf("results: %w", err)
	}
	if err := json.Unmarshal(b, &m); err != nil {
		return m, tablesErrorf("results: %s: %v", filepath.Join(dir, ManifestFile), err)
	}
	if m.ExperimentHash != mark.ExperimentHash {
		return m, tablesErrorf("results: %s: the tables are of experiment %q (hash %s) but %s names %q (hash %s); rerun the experiment into a fresh folder",
			dir, m.Experiment, m.ExperimentHash, MarkFile, mark.Experiment, mark.ExperimentHash)
	}
	for _, t := range m.Tables {
		size, sum, err := hashFile(filepath.Join(dir, t.File))
		if errors.Is(err, fs.ErrNotExist) {
			return m, tablesErrorf("results: %s: %s is missing; rerun the same hoplore run (or merge) into it to rewrite the tables", dir, t.File)
		}
		if err != nil {
			return m, fmt.Errorf("results: %w", err)
		}
		if size != t.Bytes || sum != t.SHA256 {
			return m, tablesErrorf("results: %s: %s is not the one written with the other tables (an interrupted or foreign write); rerun the same hoplore run (or merge) into it to rewrite the tables", dir, t.File)
		}
	}
	return m, nil
}

func hashFile(path string) (int64, string, error) {
	f, err := os.Open(path)
	if err != nil {
		return 0, "", err
	}
	defer f.Close()
	h := sha256.New()
	n, err := io.Copy(h, f)
	if err != nil {
		return 0, "", err
	}
	return n, hex.EncodeToString(h.Sum(nil)), nil
}

// commitTables replaces a set of tables: it removes DIR's manifest (durably),
// puts every table file into place, then writes the new manifest.
func commitTables(dir string, files []*atomicfile.File, m Manifest) error {
	abort := func(err error) error {
		for _, f := range files {
			f.Abort()
		}
		return err
	}
	m.Tables = m.Tables[:0]
	for _, f := range files {
		if err := f.Close(); err != nil {
			return abort(fmt.Errorf("results: %w", err))
		}
		size, sum, err := hashFile(f.TempName())
		if err != nil {
			return abort(fmt.Errorf("results: %w", err))
		}
		m.Tables = append(m.Tables, ManifestTable{File: filepath.Base(f.Path()), Bytes: size, SHA256: sum})
	}
	mpath := filepath.Join(dir, ManifestFile)
	if err := os.Remove(mpath); err != nil && !errors.Is(err, fs.ErrNotExist) {
		return abort(fmt.Errorf("results: %w", err))
	}
	if err := atomicfile.SyncDir(dir); err != nil {
		return abort(fmt.Errorf("results: %w", err))
	}
	if testHookTables != nil && testHookTables(files) {
		return errors.New("results: stopped by a test")
	}
	if err := commit(files...); err != nil {
		return err
	}
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return fmt.Errorf("results: %w", err)
	}
	return writeFileAtomic(mpath, func(w io.Writer) error {
		_, err := w.Write(append(b, '\n'))
		return err
	})
}

// testHookTables, when set by a test, runs after the old manifest is gone and
// before the first table is renamed into place; returning true stops the
// commit there, as a kill would.
var testHookTables func(files []*atomicfile.File) bool

// Extra is a table that Finalize writes with the others, in the same set
// (the manifest covers it): File is its name in the result folder, Write
// writes the whole table with meta's key-value metadata.
type Extra struct {
	File  string
	Write func(w io.Writer, meta Meta) error
}

// ExtraTable returns an Extra that writes rows as the named table.
func ExtraTable[T any](file, table string, rows []T) Extra {
	return Extra{File: file, Write: func(w io.Writer, meta Meta) error {
		return writeTable(w, rows, meta.kv(table))
	}}
}
