package results

import (
	"cmp"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// PartsDir is the folder, inside a result folder, that holds one part per
// finished run.
const PartsDir = "parts"

// WritePart stores one finished run's rows durably in
// DIR/parts/<run_id>/{runs,series,links,recoveries}.parquet, so that a killed
// sweep can resume and Finalize can assemble the tables later.
//
// The part is written into a temporary folder inside DIR/parts whose name
// starts with a dot, every file is synced, and the folder is renamed into
// place in one step: a part is visible completely or not at all, and
// leftovers of a crash (dot-folders) are ignored by ListParts and Finalize.
// A run id may be any non-empty string; characters other than ASCII letters,
// digits, '-', '_' and inner '.' are escaped as %XX in the folder name.
// Rewriting a finished run replaces its part. Safe for concurrent use on
// different runs.
func WritePart(dir string, t *RunTables) error { return writePart(dir, t, true) }

func writePart(dir string, t *RunTables, sync bool) (err error) {
	id := t.Run.RunID
	if id == "" {
		return errors.New("results: run has no run id")
	}
	for i := range t.Series {
		if t.Series[i].RunID != id {
			return fmt.Errorf("results: run %q: series row %d has run id %q", id, i, t.Series[i].RunID)
		}
	}
	for i := range t.Links {
		if t.Links[i].RunID != id {
			return fmt.Errorf("results: run %q: links row %d has run id %q", id, i, t.Links[i].RunID)
		}
	}
	for i := range t.Recoveries {
		if t.Recoveries[i].RunID != id {
			return fmt.Errorf("results: run %q: recoveries row %d has run id %q", id, i, t.Recoveries[i].RunID)
		}
	}
	parts := filepath.Join(dir, PartsDir)
	if err := os.MkdirAll(parts, 0o755); err != nil {
		return fmt.Errorf("results: %w", err)
	}
	tmp, err := os.MkdirTemp(parts, ".tmp-")
	if err != nil {
		return fmt.Errorf("results: %w", err)
	}
	defer func() {
		if err != nil {
			os.RemoveAll(tmp)
		}
	}()
	kv := [][2]string{{KeyTable, ""}, {"hoplore.run_id", id}}
	put := func(table string, write func(io.Writer, [][2]string) error) error {
		kv[0][1] = table
		path := filepath.Join(tmp, partFileName(table))
		f, err := os.Create(path)
		if err != nil {
			return fmt.Errorf("results: %w", err)
		}
		if err := write(f, kv); err != nil {
			f.Close()
			return fmt.Errorf("results: writing %s: %w", path, err)
		}
		if sync {
			if err := f.Sync(); err != nil {
				f.Close()
				return fmt.Errorf("results: %w", err)
			}
		}
		if err := f.Close(); err != nil {
			return fmt.Errorf("results: %w", err)
		}
		return nil
	}
	if err := put(tableRuns, func(w io.Writer, kv [][2]string) error {
		return writeTable(w, []RunRow{t.Run}, kv)
	}); err != nil {
		return err
	}
	if err := put(tableSeries, func(w io.Writer, kv [][2]string) error { return writeTable(w, t.Series, kv) }); err != nil {
		return err
	}
	if err := put(tableLinks, func(w io.Writer, kv [][2]string) error { return writeTable(w, t.Links, kv) }); err != nil {
		return err
	}
	if err := put(tableRecoveries, func(w io.Writer, kv [][2]string) error { return writeTable(w, t.Recoveries, kv) }); err != nil {
		return err
	}
	if sync {
		if err := syncDir(tmp); err != nil {
			return err
		}
	}
	if testHookInstall != nil {
		if err := testHookInstall(tmp); err != nil {
			return err
		}
	}
	return installPart(parts, tmp, id, sync)
}

// testHookInstall, when set by a test, runs when a part is complete in its
// temporary folder, just before the rename that makes it visible.
var testHookInstall func(tmp string) error

// installPart renames the complete part folder tmp to its final name in
// parts, replacing an older part of the same run.
func installPart(parts, tmp, id string, sync bool) error {
	final := filepath.Join(parts, escapeID(id))
	if err := os.Rename(tmp, final); err != nil {
		// An older part of the run is in the way: move it aside first.
		old, err2 := os.MkdirTemp(parts, ".old-")
		if err2 != nil {
			return fmt.Errorf("results: %w", err)
		}
		aside := filepath.Join(old, "part")
		if err2 := os.Rename(final, aside); err2 != nil {
			os.Remove(old)
			return fmt.Errorf("results: %w", err)
		}
		if err := os.Rename(tmp, final); err != nil {
			return fmt.Errorf("results: %w", err)
		}
		os.RemoveAll(old)
	}
	if sync {
		return syncDir(parts)
	}
	return nil
}

func partFileName(table string) string {
	switch table {
	case tableRuns:
		return RunsFile
	case tableSeries:
		return SeriesFile
	case tableLinks:
		return LinksFile
	default:
		return RecoveriesFile
	}
}

// ListParts returns the ids of the runs whose parts DIR holds (an empty set
// when it holds none). It reads only the folder listing: cost O(parts).
func ListParts(dir string) (map[string]bool, error) {
	ents, err := os.ReadDir(filepath.Join(dir, PartsDir))
	if errors.Is(err, fs.ErrNotExist) {
		return map[string]bool{}, nil
	}
	if err != nil {
		return nil, fmt.Errorf("results: %w", err)
	}
	ids := make(map[string]bool, len(ents))
	for _, e := range ents {
		name := e.Name()
		if !e.IsDir() || strings.HasPrefix(name, ".") {
			continue
		}
		id, err := unescapeID(name)
		if err != nil {
			continue // not a part folder of ours
		}
		ids[id] = true
	}
	return ids, nil
}

// ReadPart reads the part of run id from result folder DIR.
func ReadPart(dir, id string) (*RunTables, error) {
	p := filepath.Join(dir, PartsDir, escapeID(id))
	runs, err := readTable[RunRow](filepath.Join(p, RunsFile), tableRuns)
	if err != nil {
		return nil, err
	}
	if len(runs) != 1 || runs[0].RunID != id {
		return nil, fmt.Errorf("results: part %s does not hold run %q", p, id)
	}
	t := &RunTables{Run: runs[0]}
	if t.Series, err = readPartTable[SeriesRow](p, tableSeries, id); err != nil {
		return nil, err
	}
	if t.Links, err = readPartTable[LinkRow](p, tableLinks, id); err != nil {
		return nil, err
	}
	if t.Recoveries, err = readPartTable[RecoveryRow](p, tableRecoveries, id); err != nil {
		return nil, err
	}
	return t, nil
}

// runIDer is implemented by every per-run row type (through Dims).
type runIDer interface{ runID() string }

func (d *Dims) runID() string { return d.RunID }

func readPartTable[T any, PT interface {
	*T
	runIDer
}](p, table, id string) ([]T, error) {
	rows, err := readTable[T](filepath.Join(p, partFileName(table)), table)
	if err != nil {
		return nil, err
	}
	for i := range rows {
		if got := PT(&rows[i]).runID(); got != id {
			return nil, fmt.Errorf("results: part %s: %s row %d has run id %q, want %q", p, table, i, got, id)
		}
	}
	return rows, nil
}

// Finalize assembles the parts in DIR into runs.parquet, series.parquet,
// links.parquet, recoveries.parquet and summary.parquet, each written
// atomically and carrying meta as key-value metadata. Rows follow order (run
// ids); every listed run must have a part and other parts are left out. With
// a nil order, every part is taken, ordered by run_index then run_id. The
// output depends only on the parts' content and the order, never on the
// order in which parts were written, so it is byte-identical across worker
// counts but for runs.parquet's wall_s column (the measured wall-clock time,
// kept as measured). The parts stay in place for resuming and merging.
//
// Memory: the runs rows plus one run's rows of one table at a time.
func Finalize(dir string, order []string, meta Meta) error {
	if order == nil {
		ids, err := ListParts(dir)
		if err != nil {
			return err
		}
		order = make([]string, 0, len(ids))
		for id := range ids {
			order = append(order, id)
		}
		slices.Sort(order)
		runs := make([]RunRow, len(order))
		for i, id := range order {
			r, err := readTable[RunRow](filepath.Join(dir, PartsDir, escapeID(id), RunsFile), tableRuns)
			if err != nil {
				return err
			}
			if len(r) != 1 || r[0].RunID != id {
				return fmt.Errorf("results: part %s does not hold run %q", id, id)
			}
			runs[i] = r[0]
		}
		slices.SortStableFunc(runs, func(a, b RunRow) int {
			return cmp.Or(cmp.Compare(a.Index, b.Index), cmp.Compare(a.RunID, b.RunID))
		})
		for i := range runs {
			order[i] = runs[i].RunID
		}
	}
	seen := make(map[string]bool, len(order))
	for _, id := range order {
		if seen[id] {
			return fmt.Errorf("results: run %q listed twice", id)
		}
		seen[id] = true
	}
	parts := filepath.Join(dir, PartsDir)

	runs := make([]RunRow, len(order))
	for i, id := range order {
		p := filepath.Join(parts, escapeID(id))
		r, err := readTable[RunRow](filepath.Join(p, RunsFile), tableRuns)
		if errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("results: run %q has no part in %s: %w", id, dir, err)
		}
		if err != nil {
			return err
		}
		if len(r) != 1 || r[0].RunID != id {
			return fmt.Errorf("results: part %s does not hold run %q", p, id)
		}
		runs[i] = r[0]
	}
	// Write every table to a synced temporary file first and rename them
	// together, so that a bad part leaves the folder's tables untouched.
	var ps []pending
	add := func(p pending, err error) error {
		if err != nil {
			discard(ps)
			return err
		}
		ps = append(ps, p)
		return nil
	}
	if err := add(writeTemp(filepath.Join(dir, RunsFile), func(w io.Writer) error {
		return writeTable(w, runs, meta.kv(tableRuns))
	})); err != nil {
		return err
	}
	if err := add(finalizeTable[SeriesRow](dir, order, tableSeries, meta)); err != nil {
		return err
	}
	if err := add(finalizeTable[LinkRow](dir, order, tableLinks, meta)); err != nil {
		return err
	}
	if err := add(finalizeTable[RecoveryRow](dir, order, tableRecoveries, meta)); err != nil {
		return err
	}
	sum := Summarize(runs)
	if err := add(writeTemp(filepath.Join(dir, SummaryFile), func(w io.Writer) error {
		return writeTable(w, sum, meta.kv(tableSummary))
	})); err != nil {
		return err
	}
	return commit(ps)
}

// finalizeTable streams one table's rows from the parts, in order, into a
// temporary file for DIR/<table>.parquet.
func finalizeTable[T any, PT interface {
	*T
	runIDer
}](dir string, order []string, table string, meta Meta) (pending, error) {
	name := partFileName(table)
	return writeTemp(filepath.Join(dir, name), func(w io.Writer) error {
		tw := newTableWriter[T](w, meta.kv(table))
		for _, id := range order {
			rows, err := readPartTable[T, PT](filepath.Join(dir, PartsDir, escapeID(id)), table, id)
			if err != nil {
				return err
			}
			if err := tw.write(rows); err != nil {
				return err
			}
		}
		return tw.close()
	})
}

// escapeID turns a run id into a folder name: ASCII letters, digits, '-',
// '_' and '.' (but not a leading '.') stay, every other byte becomes %XX.
func escapeID(id string) string {
	var b strings.Builder
	for i := 0; i < len(id); i++ {
		c := id[i]
		if 'a' <= c && c <= 'z' || 'A' <= c && c <= 'Z' || '0' <= c && c <= '9' || c == '-' || c == '_' || c == '.' && i > 0 {
			b.WriteByte(c)
			continue
		}
		fmt.Fprintf(&b, "%%%02X", c)
	}
	return b.String()
}

func unescapeID(name string) (string, error) {
	if !strings.Contains(name, "%") {
		return name, nil
	}
	var b strings.Builder
	for i := 0; i < len(name); i++ {
		c := name[i]
		if c != '%' {
			b.WriteByte(c)
			continue
		}
		if i+2 >= len(name) {
			return "", fmt.Errorf("results: bad part name %q", name)
		}
		v, err := strconv.ParseUint(name[i+1:i+3], 16, 8)
		if err != nil {
			return "", fmt.Errorf("results: bad part name %q", name)
		}
		b.WriteByte(byte(v))
		i += 2
	}
	return b.String(), nil
}
