package statefile

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Decode takes a state file of this format and refuses others; FolderHash
// reads the marker's hash and refuses a folder without one; Check refuses
// a state without a hash or of another hash (the Q table's side is checked
// where tables are written, in package results).
func TestDecodeFolderHashCheck(t *testing.T) {
	for _, c := range []struct {
		name, text, err string
	}{
		{"this format", `{"format": "hoplore-state-1", "experiment_hash": "h", "agent": "q"}`, ""},
		{"another format", `{"format": "hoplore-state-0"}`, `format "hoplore-state-0", want "hoplore-state-1"`},
		{"not JSON", `{"format": `, "unexpected end of JSON input"},
	} {
		info, err := Decode("s.json", []byte(c.text))
		if c.err == "" && (err != nil || info.Agent != "q" || info.ExperimentHash != "h") {
			t.Errorf("%s: %+v, %v", c.name, info, err)
		}
		if c.err != "" && (err == nil || !strings.Contains(err.Error(), c.err)) {
			t.Errorf("%s: %v, want %q", c.name, err, c.err)
		}
	}
	dir := t.TempDir()
	if _, err := FolderHash(dir); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("no marker: %v", err)
	}
	for _, c := range []struct{ marker, hash, err string }{
		{`{"experiment": "e", "experiment_hash": "abc"}`, "abc", ""},
		{`{"experiment": "e"}`, "", "no experiment_hash"},
	} {
		if err := os.WriteFile(filepath.Join(dir, MarkFile), []byte(c.marker), 0o644); err != nil {
			t.Fatal(err)
		}
		h, err := FolderHash(dir)
		if h != c.hash || (err == nil) != (c.err == "") || err != nil && !strings.Contains(err.Error(), c.err) {
			t.Errorf("marker %s: %q, %v", c.marker, h, err)
		}
	}
	network := Info{Format: Format, Experiment: "e", ExperimentHash: "abc", Network: &Network{}}
	if err := Check("s.json", network, "abc"); err != nil {
		t.Errorf("a network state of the folder's hash: %v", err)
	}
	for _, c := range []struct {
		hash, err string
	}{{"", "carries no experiment hash"}, {"def", `was written by experiment "e" (hash def)`}} {
		i := network
		i.ExperimentHash = c.hash
		if err := Check("s.json", i, "abc"); !errors.Is(err, ErrOtherExperiment) || !strings.Contains(err.Error(), c.err) {
			t.Errorf("hash %q: %v, want %q", c.hash, err, c.err)
		}
	}
}
