package results

import (
	"cmp"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"hoplore/internal/atomicfile"
)

// PartsDir is the folder, inside a result folder, that holds one part per
// finished run.
const PartsDir = "parts"

// WritePart stores one finished run's rows durably in
// DIR/parts/<run_id>.part, so that a killed sweep can resume and Finalize
// can assemble the tables later. Every row must carry the run's dimensions.
// A learning run's final state (t.State) is stored first, under StateDir.
//
// The part is written to a temporary file in DIR/parts whose name starts
// with a dot, synced, and renamed into place: a part is visible complete or
// not at all, and leftovers of a crash (dot-files) are ignored by ListParts
// and Finalize. Parts end with a checksum, so damage is detected, never read
// as rows. A run id may be any non-empty string; characters other than
// ASCII letters, digits, '-', '_' and inner '.' are escaped as %XX in the
// file name. Rewriting a finished run replaces its part. Safe for concurrent
// use on different runs. Cost: one file write, two syncs.
func WritePart(dir string, t *RunTables) error {
	id := t.Run.RunID
	if id == "" {
		return errors.New("results: run has no run id")
	}
	d := t.Run.Dims
	for i := range t.Series {
		if t.Series[i].Dims != d {
			return fmt.Errorf("results: run %q: series row %d has other dimensions", id, i)
		}
	}
	for i := range t.Links {
		if t.Links[i].Dims != d {
			return fmt.Errorf("results: run %q: links row %d has other dimensions", id, i)
		}
	}
	for i := range t.Recoveries {
		if t.Recoveries[i].Dims != d {
			return fmt.Errorf("results: run %q: recoveries row %d has other dimensions", id, i)
		}
	}
	for i := range t.Flows {
		if t.Flows[i].Dims != d {
			return fmt.Errorf("results: run %q: flows row %d has other dimensions", id, i)
		}
	}
	if t.State != nil {
		// before the part: a finished run has its state
		if err := writeState(dir, t.State, t.Run.Version); err != nil {
			return err
		}
	}
	parts := filepath.Join(dir, PartsDir)
	if err := os.MkdirAll(parts, 0o755); err != nil {
		return fmt.Errorf("results: %w", err)
	}
	b := encodePart(t)
	path := partPath(dir, id)
	f, err := createFile(path)
	if err != nil {
		return err
	}
	if _, err := f.Write(b); err != nil {
		f.Abort()
		return fmt.Errorf("results: writing %s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("results: %w", err)
	}
	if testHookInstall != nil {
		if err := testHookInstall(f.TempName()); err != nil {
			f.Abort()
			return err
		}
	}
	return commit(f)
}

// PartExt is the file name extension of parts.
const PartExt = ".part"

// testHookInstall, when set by a test, runs when a part is complete in its
// temporary file, just before the rename that makes it visible.
var testHookInstall func(tmp string) error

func partPath(dir, id string) string {
	return filepath.Join(dir, PartsDir, escapeID(id)+PartExt)
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
		if !e.Type().IsRegular() || strings.HasPrefix(name, ".") || !strings.HasSuffix(name, PartExt) {
			continue
		}
		id, err := unescapeID(strings.TrimSuffix(name, PartExt))
		if err != nil || id == "" {
			continue // not a part of ours
		}
		ids[id] = true
	}
	return ids, nil
}

// ReadPart reads the part of run id from result folder DIR.
func ReadPart(dir, id string) (*RunTables, error) {
	path := partPath(dir, id)
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("results: run %q: %w", id, err)
	}
	t, err := decodePart(b)
	if err != nil {
		return nil, fmt.Errorf("results: %s: %w", path, err)
	}
	if t.Run.RunID != id {
		return nil, fmt.Errorf("results: %s holds run %q, not %q", path, t.Run.RunID, id)
	}
	return t, nil
}

// Finalize assembles the parts in DIR into runs.parquet, series.parquet,
// links.parquet, recoveries.parquet, summary.parquet, when some run has
// flow rows flows.parquet, and when some run carries its cell's optimum
// rows (and extras hold no optimum table) optimum.parquet, each cell's rows
// once from its first run in order; each carries meta as key-value
// metadata, and extras are written in the same set. Rows follow order (run ids); every listed run must
// have a part and other parts are left out. With a nil order, every part is
// taken, ordered by run_index then run_id. The output depends only on the
// parts' content and the order, never on the order in which parts were
// written, so it is byte-identical across worker counts but for
// runs.parquet's wall_s column (each run's measured wall-clock time, kept
// as measured). All five files are written to synced temporary files first
// and renamed only when all are complete: a bad part leaves the folder's
// previous tables untouched. The parts stay in place for resuming and
// merging.
//
// Cost: one read of every part; memory: the runs rows plus one row group
// of each table.
func Finalize(dir string, order []string, meta Meta, extras ...Extra) error {
	if order == nil {
		var err error
		if order, err = partOrder(dir); err != nil {
			return err
		}
	}
	seen := make(map[string]bool, len(order))
	for _, id := range order {
		if seen[id] {
			return fmt.Errorf("results: run %q listed twice", id)
		}
		seen[id] = true
	}

	var files []*atomicfile.File // series, links, recoveries, runs, summary
	fail := func(err error) error {
		for _, f := range files {
			f.Abort()
		}
		return err
	}
	create := func(name string) (*atomicfile.File, error) {
		f, err := createFile(filepath.Join(dir, name))
		if err == nil {
			files = append(files, f)
		}
		return f, err
	}
	for _, name := range []string{SeriesFile, LinksFile, RecoveriesFile} {
		if _, err := create(name); err != nil {
			return fail(err)
		}
	}
	sw := newTableWriter[SeriesRow](files[0], meta.kv(tableSeries))
	lw := newTableWriter[LinkRow](files[1], meta.kv(tableLinks))
	cw := newTableWriter[RecoveryRow](files[2], meta.kv(tableRecoveries))
	var (
		flowFile *atomicfile.File // created at the first flow row
		fw       *tableWriter[FlowRow]
	)
	runs := make([]RunRow, len(order))
	var opt []OptimumRow // each cell's optimum rows, from its first run
	optCells := map[optimumCell]bool{}
	for i, id := range order {
		t, err := ReadPart(dir, id)
		if err != nil {
			return fail(err)
		}
		runs[i] = t.Run
		if len(t.Optimum) > 0 {
			if c := optimumCellOf(t.Run.Dims); !optCells[c] {
				optCells[c] = true
				opt = append(opt, t.Optimum...)
			}
		}
		if len(t.Flows) > 0 && fw == nil {
			if flowFile, err = create(FlowsFile); err != nil {
				return fail(err)
			}
			fw = newTableWriter[FlowRow](flowFile, meta.kv(tableFlows))
		}
		if fw != nil {
			if err := fw.write(t.Flows); err != nil {
				return fail(fmt.Errorf("results: %s: %w", FlowsFile, err))
			}
		}
		if err := sw.write(t.Series); err != nil {
			return fail(fmt.Errorf("results: %s: %w", SeriesFile, err))
		}
		if err := lw.write(t.Links); err != nil {
			return fail(fmt.Errorf("results: %s: %w", LinksFile, err))
		}
		if err := cw.write(t.Recoveries); err != nil {
			return fail(fmt.Errorf("results: %s: %w", RecoveriesFile, err))
		}
	}
	for i, c := range []interface{ close() error }{sw, lw, cw} {
		if err := c.close(); err != nil {
			return fail(fmt.Errorf("results: writing %s: %w", files[i].Path(), err))
		}
		if err := files[i].Close(); err != nil {
			return fail(fmt.Errorf("results: %w", err))
		}
	}
	if fw != nil {
		if err := fw.close(); err != nil {
			return fail(fmt.Errorf("results: writing %s: %w", flowFile.Path(), err))
		}
		if err := flowFile.Close(); err != nil {
			return fail(fmt.Errorf("results: %w", err))
		}
	}
	rf, err := create(RunsFile)
	if err != nil {
		return fail(err)
	}
	if err := writeTable(rf, runs, meta.kv(tableRuns)); err != nil {
		return fail(fmt.Errorf("results: writing %s: %w", rf.Path(), err))
	}
	sf, err := create(SummaryFile)
	if err != nil {
		return fail(err)
	}
	if err := writeSummary(sf, Summarize(runs), meta.kv(tableSummary)); err != nil {
		return fail(fmt.Errorf("results: writing %s: %w", sf.Path(), err))
	}
	hasOpt := slices.ContainsFunc(extras, func(x Extra) bool { return x.File == OptimumFile })
	if len(opt) > 0 && !hasOpt {
		extras = append(slices.Clone(extras), ExtraTable(OptimumFile, TableOptimum, opt))
		hasOpt = true
	}
	for _, x := range extras {
		xf, err := create(x.File)
		if err != nil {
			return fail(err)
		}
		if err := x.Write(xf, meta); err != nil {
			return fail(fmt.Errorf("results: writing %s: %w", xf.Path(), err))
		}
	}
	if err := commitTables(dir, files, Manifest{
		Experiment: meta.Experiment, ExperimentHash: meta.ExperimentHash,
		Runs: len(runs), ExpectedRuns: meta.Runs,
	}); err != nil {
		return err
	}
	// a flows or optimum table of an earlier set is not of this one
	for _, stale := range []struct {
		file    string
		written bool
	}{{FlowsFile, fw != nil}, {OptimumFile, hasOpt}} {
		if stale.written {
			continue
		}
		if err := os.Remove(filepath.Join(dir, stale.file)); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("results: %w", err)
		}
	}
	return nil
}

// partOrder returns the ids of every part in DIR ordered by run_index, then
// run_id.
func partOrder(dir string) ([]string, error) {
	ids, err := ListParts(dir)
	if err != nil {
		return nil, err
	}
	type key struct {
		index int
		id    string
	}
	keys := make([]key, 0, len(ids))
	for id := range ids {
		t, err := ReadPart(dir, id)
		if err != nil {
			return nil, err
		}
		keys = append(keys, key{t.Run.Index, id})
	}
	slices.SortFunc(keys, func(a, b key) int { return cmp.Or(cmp.Compare(a.index, b.index), cmp.Compare(a.id, b.id)) })
	order := make([]string, len(keys))
	for i, k := range keys {
		order[i] = k.id
	}
	return order, nil
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
