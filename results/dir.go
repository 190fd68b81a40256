package results

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"sync"

	"hoplore/internal/statefile"
)

// MarkFile is the marker, in a result folder, naming the experiment whose
// results the folder holds (JSON of Meta; statefile.FolderHash reads its
// hash).
const MarkFile = statefile.MarkFile

// ErrOtherExperiment is wrapped by the errors that refuse to mix the results
// of different experiments in one folder.
var ErrOtherExperiment = errors.New("results of another experiment")

// MarkDir creates DIR if needed and writes its marker (atomically). It
// refuses a DIR already marked with another experiment hash.
func MarkDir(dir string, meta Meta) error {
	if meta.ExperimentHash == "" {
		return errors.New("results: empty experiment hash")
	}
	if err := CheckDir(dir, meta.ExperimentHash); err != nil {
		return err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("results: %w", err)
	}
	b, err := json.MarshalIndent(meta, "", "  ")
	if err != nil {
		return fmt.Errorf("results: %w", err)
	}
	b = append(b, '\n')
	return writeFileAtomic(filepath.Join(dir, MarkFile), func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}

// ReadMark returns the marker of result folder DIR; the error wraps
// fs.ErrNotExist when DIR has none.
func ReadMark(dir string) (Meta, error) {
	path := filepath.Join(dir, MarkFile)
	b, err := os.ReadFile(path)
	if err != nil {
		return Meta{}, fmt.Errorf("results: %w", err)
	}
	var m Meta
	if err := json.Unmarshal(b, &m); err != nil {
		return Meta{}, fmt.Errorf("results: %s: %w", path, err)
	}
	if m.ExperimentHash == "" {
		return Meta{}, fmt.Errorf("results: %s: no experiment_hash", path)
	}
	return m, nil
}

// CheckDir returns nil when DIR may receive the results of the experiment
// with the given hash: it does not exist, holds no results, or is marked with
// the same hash. Otherwise the error wraps ErrOtherExperiment (DIR marked
// with another hash, or holding results with no marker).
func CheckDir(dir, hash string) error {
	m, err := ReadMark(dir)
	if errors.Is(err, fs.ErrNotExist) {
		if holdsResults(dir) {
			return fmt.Errorf("results: %s holds results but no %s: %w", dir, MarkFile, ErrOtherExperiment)
		}
		return nil
	}
	if err != nil {
		return err
	}
	if m.ExperimentHash != hash {
		return fmt.Errorf("results: %s holds experiment %q (hash %s), not this one (hash %s): %w",
			dir, m.Experiment, m.ExperimentHash, hash, ErrOtherExperiment)
	}
	return nil
}

func holdsResults(dir string) bool {
	if ids, err := ListParts(dir); err != nil || len(ids) > 0 {
		return true
	}
	_, err := os.Stat(filepath.Join(dir, RunsFile))
	return err == nil
}

// Merge merges result folders (shards of one sweep, or pieces of a resumed
// one) into OUT, which may already hold results of the same experiment. Every
// folder must carry a marker with the same experiment hash (else the error
// wraps ErrOtherExperiment). Runs are taken from each folder's parts, or from
// its tables when it has no parts. A run present more than once must be the
// same everywhere, wall_s aside (a conflicting duplicate is an error); it is
// kept once. Nothing is written before every check has passed. OUT is then
// finalized with the runs ordered by run_index, then run_id, so the result
// does not depend on the order of dirs.
func Merge(out string, dirs []string) error {
	if len(dirs) == 0 {
		return errors.New("results: nothing to merge")
	}
	var meta Meta
	for i, d := range dirs {
		m, err := ReadMark(d)
		if errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("results: %s is not a result folder (no %s)", d, MarkFile)
		}
		if err != nil {
			return err
		}
		if i == 0 {
			meta = m
		} else if m.ExperimentHash != meta.ExperimentHash {
			return fmt.Errorf("results: %s holds experiment %q (hash %s), %s holds %q (hash %s): %w",
				dirs[0], meta.Experiment, meta.ExperimentHash, d, m.Experiment, m.ExperimentHash, ErrOtherExperiment)
		}
	}
	if err := CheckDir(out, meta.ExperimentHash); err != nil {
		return err
	}

	// Sources: OUT's own parts first, then each folder's.
	var srcs []mergeSource
	from := map[string]int{} // run id -> index of the source that provides it
	absOut, _ := filepath.Abs(out)
	add := func(dir string) error {
		ids, err := ListParts(dir)
		if err != nil {
			return err
		}
		src := mergeSource{dir: dir}
		// A folder with no parts is read from its tables; one with neither
		// (a shard that finished no run) contributes nothing.
		_, statErr := os.Stat(filepath.Join(dir, RunsFile))
		if len(ids) == 0 && statErr == nil {
			if src.tables, err = splitTables(dir); err != nil {
				return err
			}
			ids = map[string]bool{}
			for id := range src.tables {
				ids[id] = true
			}
		}
		srcs = append(srcs, src)
		k := len(srcs) - 1
		sorted := make([]string, 0, len(ids))
		for id := range ids {
			sorted = append(sorted, id)
		}
		slices.Sort(sorted)
		for _, id := range sorted {
			j, dup := from[id]
			if !dup {
				from[id] = k
				continue
			}
			a, err := srcs[j].load(id)
			if err != nil {
				return err
			}
			b, err := src.load(id)
			if err != nil {
				return err
			}
			if !SameRun(a, b) {
				return fmt.Errorf("results: run %q differs between %s and %s", id, srcs[j].dir, dir)
			}
		}
		return nil
	}
	if err := add(out); err != nil {
		return err
	}
	for _, d := range dirs {
		if a, _ := filepath.Abs(d); a == absOut {
			continue
		}
		if err := add(d); err != nil {
			return err
		}
	}

	if err := MarkDir(out, meta); err != nil {
		return err
	}
	var todo []string
	for id, k := range from {
		if k != 0 || srcs[0].tables != nil { // not yet a part in OUT
			todo = append(todo, id)
		}
	}
	slices.Sort(todo)
	// Parts are written by a few goroutines at once: each is synced, and
	// concurrent syncs share the file system's journal commits.
	const writers = 8
	errs := make([]error, writers)
	var wg sync.WaitGroup
	for w := range writers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := w; i < len(todo) && errs[w] == nil; i += writers {
				t, err := srcs[from[todo[i]]].load(todo[i])
				if err == nil {
					err = WritePart(out, t)
				}
				errs[w] = err
			}
		}()
	}
	wg.Wait()
	if err := errors.Join(errs...); err != nil {
		return err
	}
	return Finalize(out, nil, meta)
}

// mergeSource is one folder Merge reads runs from.
type mergeSource struct {
	dir    string
	tables map[string]*RunTables // runs split from the folder's tables; nil: read its parts
}

func (s *mergeSource) load(id string) (*RunTables, error) {
	var t *RunTables
	if s.tables != nil {
		t = s.tables[id]
	} else {
		var err error
		if t, err = ReadPart(s.dir, id); err != nil {
			return nil, err
		}
	}
	// a learning run's state goes with it
	st, err := readLearnedState(s.dir, id)
	if err != nil {
		return nil, err
	}
	if st != nil {
		c := *t
		c.State = st
		t = &c
	}
	return t, nil
}

// splitTables reads a finalized result folder's tables and splits them by run.
func splitTables(dir string) (map[string]*RunTables, error) {
	runs, err := ReadRuns(filepath.Join(dir, RunsFile))
	if err != nil {
		return nil, err
	}
	out := make(map[string]*RunTables, len(runs))
	for _, r := range runs {
		if out[r.RunID] != nil {
			return nil, fmt.Errorf("results: %s: run %q appears twice", dir, r.RunID)
		}
		out[r.RunID] = &RunTables{Run: r}
	}
	get := func(table, id string) (*RunTables, error) {
		t := out[id]
		if t == nil {
			return nil, fmt.Errorf("results: %s: %s row of unknown run %q", dir, table, id)
		}
		return t, nil
	}
	series, err := ReadSeries(filepath.Join(dir, SeriesFile))
	if err != nil {
		return nil, err
	}
	for _, r := range series {
		t, err := get(tableSeries, r.RunID)
		if err != nil {
			return nil, err
		}
		t.Series = append(t.Series, r)
	}
	links, err := ReadLinks(filepath.Join(dir, LinksFile))
	if err != nil {
		return nil, err
	}
	for _, r := range links {
		t, err := get(tableLinks, r.RunID)
		if err != nil {
			return nil, err
		}
		t.Links = append(t.Links, r)
	}
	recs, err := ReadRecoveries(filepath.Join(dir, RecoveriesFile))
	if err != nil {
		return nil, err
	}
	for _, r := range recs {
		t, err := get(tableRecoveries, r.RunID)
		if err != nil {
			return nil, err
		}
		t.Recoveries = append(t.Recoveries, r)
	}
	if _, err := os.Stat(filepath.Join(dir, OptimumFile)); err == nil {
		rows, err := ReadOptimum(filepath.Join(dir, OptimumFile))
		if err != nil {
			return nil, err
		}
		byCell := map[optimumCell][]OptimumRow{}
		for _, r := range rows {
			byCell[r.cell()] = append(byCell[r.cell()], r)
		}
		for _, t := range out {
			t.Optimum = byCell[optimumCellOf(t.Run.Dims)]
		}
	}
	if _, err := os.Stat(filepath.Join(dir, FlowsFile)); err == nil {
		flows, err := ReadFlows(filepath.Join(dir, FlowsFile))
		if err != nil {
			return nil, err
		}
		for _, r := range flows {
			t, err := get(tableFlows, r.RunID)
			if err != nil {
				return nil, err
			}
			t.Flows = append(t.Flows, r)
		}
	}
	return out, nil
}

// SameRun reports whether a and b hold the same rows, wall_s aside (the
// one column that differs between two executions of the same run). Empty and
// nil row lists are the same. The cell's optimum rows are compared when both
// carry them (a run from a folder without optimum.parquet carries none).
func SameRun(a, b *RunTables) bool {
	ra, rb := a.Run, b.Run
	ra.WallS, rb.WallS = 0, 0
	return reflect.DeepEqual(ra, rb) &&
		sameRows(a.Series, b.Series) && sameRows(a.Links, b.Links) && sameRows(a.Recoveries, b.Recoveries) &&
		sameRows(a.Flows, b.Flows) &&
		(len(a.Optimum) == 0 || len(b.Optimum) == 0 || sameRows(a.Optimum, b.Optimum))
}

func sameRows[T any](a, b []T) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if !reflect.DeepEqual(a[i], b[i]) {
			return false
		}
	}
	return true
}
