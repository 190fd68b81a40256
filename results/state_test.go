package results

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"hoplore/internal/statefile"
)

// A learning run's state carries the experiment's hash in its JSON file and
// in its Q table's key-value metadata (with the name, version and table
// name, as the result tables); statefile reads the hash of the folder's
// marker as MarkDir writes it, Check accepts the pair there and refuses it
// under another hash, a state without a hash, and a Q table of another
// experiment.
func TestStateCarriesExperimentHash(t *testing.T) {
	dir := t.TempDir()
	meta := Meta{Version: "v7", Experiment: "train", ExperimentHash: "h1"}
	if err := MarkDir(dir, meta); err != nil {
		t.Fatal(err)
	}
	run := synthTables(1)
	run.Run.Version = "v7"
	run.State = &LearnedState{
		Info: StateInfo{Experiment: "train", ExperimentHash: "h1", RunID: run.Run.RunID, Agent: "q", Kind: "q-routing", Topology: "grid", TopologyKey: "k"},
		Q:    []QRow{{Node: "a", Destination: "b", Neighbour: "c", Value: 0.5}},
	}
	if err := WritePart(dir, run); err != nil {
		t.Fatal(err)
	}
	path := StatePath(dir, run.Run.RunID)
	info, err := ReadStateInfo(path)
	if err != nil {
		t.Fatal(err)
	}
	tp := filepath.Join(dir, StateDir, info.Table)
	if m, err := ReadMeta(tp); err != nil || m != (Meta{Version: "v7", Experiment: "train", ExperimentHash: "h1"}) {
		t.Errorf("Q table metadata %+v, %v; want the experiment's name, hash and version", m, err)
	}
	if h, err := statefile.FolderHash(dir); err != nil || h != "h1" {
		t.Errorf("folder hash %q, %v; want h1", h, err)
	}
	if err := statefile.Check(path, info, "h1"); err != nil {
		t.Errorf("own folder: %v", err)
	}
	if rows, err := ReadQTable(path, info); err != nil || len(rows) != 1 {
		t.Errorf("ReadQTable: %d rows, %v", len(rows), err)
	}
	bad := []struct {
		name string
		info StateInfo
		want string
		msg  string
	}{
		{"another folder's hash", info, "h2", "was written by experiment \"train\" (hash h1)"},
		{"no hash", func() StateInfo { i := info; i.ExperimentHash = ""; return i }(), "h1", "carries no experiment hash"},
		{"Q table of another experiment", func() StateInfo { i := info; i.ExperimentHash = "h2"; return i }(), "h2", "Q table of experiment hash \"h1\""},
	}
	for _, b := range bad {
		err := statefile.Check(path, b.info, b.want)
		if !errors.Is(err, statefile.ErrOtherExperiment) || !strings.Contains(err.Error(), b.msg) {
			t.Errorf("%s: %v; want %q", b.name, err, b.msg)
		}
	}
	other := info
	other.ExperimentHash = "h2"
	if _, err := ReadQTable(path, other); !errors.Is(err, statefile.ErrOtherExperiment) {
		t.Errorf("ReadQTable of a foreign table: %v", err)
	}
	if err := os.Remove(filepath.Join(dir, MarkFile)); err != nil {
		t.Fatal(err)
	}
	if _, err := statefile.FolderHash(dir); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("no marker: %v", err)
	}
}
