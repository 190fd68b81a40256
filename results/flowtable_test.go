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

// withFlows adds n flow rows to t.
func withFlows(t *RunTables, n int) *RunTables {
	for k := 0; k < n; k++ {
		row := FlowRow{Dims: t.Run.Dims, FlowID: int64(3 * k), Source: "n0", Destination: "n1", SizeBytes: 10_000,
			Class: "mice", StartS: float64(k), IdealFCTS: ptr(0.002), Packets: 7, DeliveredPackets: 7, Outcome: "completed"}
		if k%2 == 0 {
			row.EndS, row.FCTS, row.Slowdown = ptr(float64(k)+0.004), ptr(0.004), ptr(2)
		} else {
			row.DeliveredPackets, row.Outcome = 5, "failed"
		}
		t.Flows = append(t.Flows, row)
	}
	return t
}

// A part with flow rows reads back whole; a part without any stays in the
// five-section layout (TestPartCodecMatchesColumnsByName reads one).
func TestPartCodecFlows(t *testing.T) {
	want := withFlows(synthTables(2), 5)
	got, err := decodePart(encodePart(want))
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("round trip differs:\n got %+v\nwant %+v", got.Flows, want.Flows)
	}
	plain := synthTables(2)
	if a, b := len(encodePart(plain)), len(encodePart(withFlows(synthTables(2), 0))); a != b {
		t.Errorf("a run without flows encodes to %d bytes, %d with an empty flow list", a, b)
	}
}

// Finalize writes flows.parquet, listed in the manifest, when some run has
// flow rows (in run order, with the run's dimensions), and removes an
// earlier one when none has.
func TestFinalizeFlows(t *testing.T) {
	dir := t.TempDir()
	meta := Meta{Version: "v", Experiment: "e", ExperimentHash: "h"}
	if err := MarkDir(dir, meta); err != nil {
		t.Fatal(err)
	}
	runs := []*RunTables{withFlows(synthTables(0), 3), synthTables(1), withFlows(synthTables(2), 2)}
	var want []FlowRow
	for _, r := range runs {
		if err := WritePart(dir, r); err != nil {
			t.Fatal(err)
		}
		want = append(want, r.Flows...)
	}
	if err := Finalize(dir, nil, meta); err != nil {
		t.Fatal(err)
	}
	got, err := ReadFlows(filepath.Join(dir, FlowsFile))
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("flows.parquet holds %d rows, want %d:\n got %+v\nwant %+v", len(got), len(want), got, want)
	}
	m, err := CheckTables(dir)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.ContainsFunc(m.Tables, func(x ManifestTable) bool { return x.File == FlowsFile }) {
		t.Errorf("manifest %+v does not list %s", m.Tables, FlowsFile)
	}
	if err := Finalize(dir, []string{runs[1].Run.RunID}, meta); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(dir, FlowsFile)); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("flows.parquet of the earlier set is still there: %v", err)
	}
	if m, err = CheckTables(dir); err != nil || slices.ContainsFunc(m.Tables, func(x ManifestTable) bool { return x.File == FlowsFile }) {
		t.Errorf("manifest %+v, %v: lists %s with no flow rows", m.Tables, err, FlowsFile)
	}
}

// Merge takes a folder's flow rows from its parts or, a folder without
// parts, from its flows.parquet: the merged table is the one Finalize
// writes from all the parts.
func TestMergeFlows(t *testing.T) {
	meta := Meta{Version: "v", Experiment: "e", ExperimentHash: "h"}
	var shards []string
	var want []FlowRow
	for s := 0; s < 2; s++ {
		dir := t.TempDir()
		if err := MarkDir(dir, meta); err != nil {
			t.Fatal(err)
		}
		for i := 2 * s; i < 2*s+2; i++ {
			r := withFlows(synthTables(i), i+1)
			if err := WritePart(dir, r); err != nil {
				t.Fatal(err)
			}
			want = append(want, r.Flows...)
		}
		if err := Finalize(dir, nil, meta); err != nil {
			t.Fatal(err)
		}
		shards = append(shards, dir)
	}
	if err := os.RemoveAll(filepath.Join(shards[1], PartsDir)); err != nil {
		t.Fatal(err)
	}
	out := t.TempDir()
	if err := Merge(out, shards); err != nil {
		t.Fatal(err)
	}
	got, err := ReadFlows(filepath.Join(out, FlowsFile))
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("merged flows.parquet: %d rows, want %d:\n got %+v\nwant %+v", len(got), len(want), got, want)
	}
}
