package results

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"testing"
)

// withOptimum gives t its cell's optimum rows: the intact state and a cut
// from 300 s (values derived from the load, so that cells differ).
func withOptimum(t *RunTables) *RunTables {
	d := t.Run.Dims
	base := OptimumRow{Experiment: d.Experiment, Topology: d.Topology, Load: d.Load, Failure: d.Failure}
	intact, cut := base, base
	intact.TEndS, intact.OptUtilMax, intact.OptDelayMeanS = 300, ptr(d.Load+0.1), ptr(0.01)
	cut.State, cut.TStartS, cut.TEndS, cut.Down, cut.UnroutableShare = 1, 300, 600, "n3-n4", 0.25
	cut.OptUtilMax, cut.OptLoadLimit = ptr(2*d.Load+0.1), ptr(d.Load/(2*d.Load+0.1))
	t.Optimum = []OptimumRow{intact, cut}
	return t
}

// A part carries its cell's optimum rows, with or without flow rows, and
// reads them back whole.
func TestPartCodecOptimum(t *testing.T) {
	for _, want := range []*RunTables{withOptimum(synthTables(3)), withOptimum(withFlows(synthTables(4), 3))} {
		got, err := decodePart(encodePart(want))
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("round trip differs:\n got %+v\nwant %+v", got.Optimum, want.Optimum)
		}
	}
}

// Finalize writes optimum.parquet from the parts, each cell's rows once (from
// its first run in order), listed in the manifest; rows given as an extra
// table take precedence; a set whose runs carry none removes an earlier one.
func TestFinalizeOptimum(t *testing.T) {
	dir := t.TempDir()
	meta := Meta{Version: "v", Experiment: "e", ExperimentHash: "h"}
	if err := MarkDir(dir, meta); err != nil {
		t.Fatal(err)
	}
	var want []OptimumRow
	var order []string
	for i := range 7 { // runs 5 and 6 share the cells of runs 0 and 1
		r := withOptimum(synthTables(i))
		if err := WritePart(dir, r); err != nil {
			t.Fatal(err)
		}
		if i < 5 {
			want = append(want, r.Optimum...)
		}
		order = append(order, r.Run.RunID)
	}
	if err := Finalize(dir, order, meta); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, OptimumFile)
	got, err := ReadOptimum(path)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("optimum.parquet: %d rows, want %d:\n got %+v\nwant %+v", len(got), len(want), got, want)
	}
	listed := func() bool {
		m, err := CheckTables(dir)
		if err != nil {
			t.Fatal(err)
		}
		return slices.ContainsFunc(m.Tables, func(x ManifestTable) bool { return x.File == OptimumFile })
	}
	if !listed() {
		t.Errorf("manifest does not list %s", OptimumFile)
	}
	extra := want[:1]
	if err := Finalize(dir, order, meta, ExtraTable(OptimumFile, TableOptimum, extra)); err != nil {
		t.Fatal(err)
	}
	if got, err := ReadOptimum(path); err != nil || !reflect.DeepEqual(got, extra) {
		t.Errorf("with an extra optimum table: %+v, %v; want the extra's %+v", got, err, extra)
	}
	plain := synthTables(9)
	if err := WritePart(dir, plain); err != nil {
		t.Fatal(err)
	}
	if err := Finalize(dir, []string{plain.Run.RunID}, meta); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(path); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("optimum.parquet of the earlier set is still there: %v", err)
	}
	if listed() {
		t.Errorf("manifest lists %s with no optimum rows", OptimumFile)
	}
}

// Merge writes optimum.parquet from the shards' parts, or from the
// optimum.parquet of a shard that has only tables: the same table as
// Finalize of all the parts in one folder.
func TestMergeOptimum(t *testing.T) {
	meta := Meta{Version: "v", Experiment: "e", ExperimentHash: "h"}
	whole := t.TempDir()
	if err := MarkDir(whole, meta); err != nil {
		t.Fatal(err)
	}
	var shards []string
	for s := range 2 {
		dir := t.TempDir()
		if err := MarkDir(dir, meta); err != nil {
			t.Fatal(err)
		}
		for i := s; i < 8; i += 2 {
			r := withOptimum(synthTables(i))
			for _, d := range []string{dir, whole} {
				if err := WritePart(d, r); err != nil {
					t.Fatal(err)
				}
			}
		}
		if err := Finalize(dir, nil, meta); err != nil {
			t.Fatal(err)
		}
		shards = append(shards, dir)
	}
	if err := os.RemoveAll(filepath.Join(shards[1], PartsDir)); err != nil {
		t.Fatal(err)
	}
	if err := Finalize(whole, nil, meta); err != nil {
		t.Fatal(err)
	}
	want, err := ReadOptimum(filepath.Join(whole, OptimumFile))
	if err != nil {
		t.Fatal(err)
	}
	out := t.TempDir()
	if err := Merge(out, []string{shards[1], shards[0]}); err != nil {
		t.Fatal(err)
	}
	got, err := ReadOptimum(filepath.Join(out, OptimumFile))
	if err != nil {
		t.Fatal(err)
	}
	if len(want) != 10 || !reflect.DeepEqual(got, want) {
		t.Errorf("merged optimum.parquet: %d rows, want %d (10):\n got %+v\nwant %+v", len(got), len(want), got, want)
	}
}
