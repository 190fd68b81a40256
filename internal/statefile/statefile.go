// Package statefile is the layout of a learning run's final state in a
// result folder, in one place for the package that writes it (results)
// and the packages that read it before any run (experiments, for an
// agent's start_from): the JSON state file (Info), its format name, the
// experiment hash every file of the state carries, and where the result
// folder names its own (MarkFile).
//
// A result folder's state folder holds, per learning run,
//
//	state/<run_id>.json            Info (Format), the network's
//	                               parameters inline for a network learner
//	state/<run_id>.qtable.parquet  a tabular learner's Q table, whose
//	                               key-value metadata holds the experiment
//	                               hash under KeyExperimentHash
//
// Both carry the hash of the experiment that wrote them (the folder's,
// as its result tables do), so a state file copied from another training,
// or a Q table from another run, is refused when loaded (Check).
package statefile

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"

	"github.com/parquet-go/parquet-go"
)

// Dir is the state folder inside a result folder.
const Dir = "state"

// Format names the layout of the state files this version writes.
const Format = "hoplore-state-1"

// KeyExperimentHash is the Parquet key-value metadata key holding the
// experiment hash, in the Q table as in every result table.
const KeyExperimentHash = "hoplore.experiment_hash"

// Info is a learning run's state file, JSON: which run it ended, of which
// experiment, on which topology, and for a network learner the parameters
// themselves.
type Info struct {
	Format     string `json:"format"` // Format
	Experiment string `json:"experiment"`
	// ExperimentHash is the hash of the experiment that wrote the state
	// (empty in files written before it was stored).
	ExperimentHash string  `json:"experiment_hash,omitempty"`
	RunID          string  `json:"run_id"`
	RunIndex       int     `json:"run_index"` // position in the training's grid
	Agent          string  `json:"agent"`     // the agent column's value
	Kind           string  `json:"kind"`
	Variant        string  `json:"variant,omitempty"`
	Topology       string  `json:"topology"`
	Load           float64 `json:"load"`
	Failure        string  `json:"failure"`
	Replicate      int     `json:"replicate"`
	// TopologyKey identifies the topology's structure (names, links,
	// capacities, delays, buffers): a state loads only where it matches.
	TopologyKey string `json:"topology_key"`
	// Table is the Q table's file name beside this one (tabular learners).
	Table string `json:"table,omitempty"`
	// Network holds a network learner's parameters.
	Network *Network `json:"network,omitempty"`
	// Objective is a tabular learner's objective as labels write it,
	// omitted for delay (files without it are delay states); a state loads
	// only into an agent of the same objective.
	Objective string `json:"objective,omitempty"`
}

// Network is every node's network: Sizes are the layer widths (input,
// hidden..., 1); Params[v] and Target[v] are node v's online and target
// parameters, layer by layer, each layer's weights (row-major, output by
// input) then its biases. Numbers are written in the shortest form that
// reads back to the same float64.
type Network struct {
	Sizes  []int       `json:"sizes"`
	Params [][]float64 `json:"params"`
	Target [][]float64 `json:"target"`
}

// Decode decodes the state file read from path; an error unless it is a
// state file of Format.
func Decode(path string, b []byte) (Info, error) {
	var info Info
	if err := json.Unmarshal(b, &info); err != nil {
		return info, fmt.Errorf("statefile: %s: %w", path, err)
	}
	if info.Format != Format {
		return info, fmt.Errorf("statefile: %s: format %q, want %q", path, info.Format, Format)
	}
	return info, nil
}

// Read reads and decodes the state file at path, returning its bytes too.
func Read(path string) (Info, []byte, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return Info{}, nil, fmt.Errorf("statefile: %w", err)
	}
	info, err := Decode(path, b)
	return info, b, err
}

// TablePath returns the path of the Q table of the state file at path,
// "" for a state without one.
func TablePath(path string, info Info) string {
	if info.Table == "" {
		return ""
	}
	return filepath.Join(filepath.Dir(path), filepath.Base(info.Table))
}

// MarkFile is a result folder's marker (package results writes it): JSON
// naming the experiment whose results the folder holds, its hash under
// "experiment_hash".
const MarkFile = "experiment.json"

// FolderHash returns the experiment hash in the marker of result folder
// dir; the error wraps fs.ErrNotExist when dir has no marker.
func FolderHash(dir string) (string, error) {
	path := filepath.Join(dir, MarkFile)
	b, err := os.ReadFile(path)
	if err != nil {
		return "", fmt.Errorf("statefile: %w", err)
	}
	var m struct {
		Hash string `json:"experiment_hash"`
	}
	if err := json.Unmarshal(b, &m); err != nil {
		return "", fmt.Errorf("statefile: %s: %w", path, err)
	}
	if m.Hash == "" {
		return "", fmt.Errorf("statefile: %s: no experiment_hash", path)
	}
	return m.Hash, nil
}

// ErrOtherExperiment is wrapped by Check's refusals.
var ErrOtherExperiment = errors.New("learned state of another experiment")

// Check verifies that the state file at path (decoded as info) and its Q
// table were written by the experiment of hash want (the result folder's):
// the state file's hash, and the Q table's KeyExperimentHash metadata, must
// both be want. A state written before the hash was stored is refused too,
// since nothing ties it to the folder. The error wraps ErrOtherExperiment.
func Check(path string, info Info, want string) error {
	switch info.ExperimentHash {
	case want:
	case "":
		return fmt.Errorf("statefile: %s carries no experiment hash (written by an older version): run the training again: %w", path, ErrOtherExperiment)
	default:
		return fmt.Errorf("statefile: %s was written by experiment %q (hash %s), not by the one whose results hold it (hash %s): %w",
			path, info.Experiment, info.ExperimentHash, want, ErrOtherExperiment)
	}
	tp := TablePath(path, info)
	if tp == "" {
		return nil
	}
	got, err := TableHash(tp)
	if err != nil {
		return err
	}
	if got != want {
		return fmt.Errorf("statefile: %s: Q table of experiment hash %q, its state file %s has %s: %w", tp, got, filepath.Base(path), want, ErrOtherExperiment)
	}
	return nil
}

// TableHash returns the KeyExperimentHash metadata of the Parquet file at
// path ("" when it has none).
func TableHash(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", fmt.Errorf("statefile: %w", err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return "", fmt.Errorf("statefile: %w", err)
	}
	pf, err := parquet.OpenFile(f, st.Size(), parquet.SkipPageIndex(true), parquet.SkipBloomFilters(true))
	if err != nil {
		return "", fmt.Errorf("statefile: %s: %w", path, err)
	}
	h, _ := pf.Lookup(KeyExperimentHash)
	return h, nil
}
