package results

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// StateDir is the folder, inside a result folder, that holds the final
// state of every learning run: DIR/state/<run_id>.json (StateInfo) and, for
// a tabular learner, DIR/state/<run_id>.qtable.parquet (QRow). Run ids are
// escaped as in parts.
const StateDir = "state"

// StateFormat names the layout of the state files this version writes.
const StateFormat = "hoplore-state-1"

// StateInfo is a learning run's state file, JSON: which run it ended, on
// which topology, and for a network learner the parameters themselves.
type StateInfo struct {
	Format     string  `json:"format"` // StateFormat
	Experiment string  `json:"experiment"`
	RunID      string  `json:"run_id"`
	RunIndex   int     `json:"run_index"` // position in the training's grid
	Agent      string  `json:"agent"`     // the agent column's value
	Kind       string  `json:"kind"`
	Variant    string  `json:"variant,omitempty"`
	Topology   string  `json:"topology"`
	Load       float64 `json:"load"`
	Failure    string  `json:"failure"`
	Replicate  int     `json:"replicate"`
	// TopologyKey identifies the topology's structure (names, links,
	// capacities, delays, buffers): a state loads only where it matches.
	TopologyKey string `json:"topology_key"`
	// Table is the Q table's file name beside this one (tabular learners).
	Table string `json:"table,omitempty"`
	// Network holds a network learner's parameters.
	Network *NetworkState `json:"network,omitempty"`
	// Objective is a tabular learner's objective as labels write it,
	// omitted for delay (files without it are delay states); a state loads
	// only into an agent of the same objective.
	Objective string `json:"objective,omitempty"`
}

// NetworkState is every node's network: Sizes are the layer widths (input,
// hidden..., 1); Params[v] and Target[v] are node v's online and target
// parameters, layer by layer, each layer's weights (row-major, output by
// input) then its biases. Numbers are written in the shortest form that
// reads back to the same float64.
type NetworkState struct {
	Sizes  []int       `json:"sizes"`
	Params [][]float64 `json:"params"`
	Target [][]float64 `json:"target"`
}

// QRow is one row of a learned Q table: at node, for destination, through
// channel (towards neighbour), the delivery-time estimate value in seconds.
// confidence is the confidence variant's, best and recovery_rate the
// predictive variant's for the delivery-time estimate (0 otherwise). loss
// and utilisation are the estimates of objectives that learn them: the
// columns are written only for a state whose StateInfo.Objective is set,
// and read as 0 from a file without them.
type QRow struct {
	Node         string  `parquet:"node,dict"`
	Destination  string  `parquet:"destination,dict"`
	Neighbour    string  `parquet:"neighbour,dict"`
	Channel      int     `parquet:"channel"`
	Value        float64 `parquet:"value"`
	Confidence   float64 `parquet:"confidence"`
	Best         float64 `parquet:"best"`
	RecoveryRate float64 `parquet:"recovery_rate"`
	Loss         float64 `parquet:"loss"`
	Utilisation  float64 `parquet:"utilisation"`
}

// qRowDelay is QRow without the loss and utilisation columns: the layout
// of a delay state's table, unchanged from earlier versions.
type qRowDelay struct {
	Node         string  `parquet:"node,dict"`
	Destination  string  `parquet:"destination,dict"`
	Neighbour    string  `parquet:"neighbour,dict"`
	Channel      int     `parquet:"channel"`
	Value        float64 `parquet:"value"`
	Confidence   float64 `parquet:"confidence"`
	Best         float64 `parquet:"best"`
	RecoveryRate float64 `parquet:"recovery_rate"`
}

// LearnedState is what a learning run leaves for WritePart to store.
type LearnedState struct {
	Info StateInfo
	Q    []QRow // tabular learners
}

const tableQ = "qtable"

// StatePath returns the path of run id's state file in result folder dir.
func StatePath(dir, id string) string {
	return filepath.Join(dir, StateDir, escapeID(id)+".json")
}

// writeState stores s under DIR/state: the Q table first, then the JSON
// file, each atomically, so that a JSON file present means its table is.
func writeState(dir string, s *LearnedState) error {
	sd := filepath.Join(dir, StateDir)
	if err := os.MkdirAll(sd, 0o755); err != nil {
		return fmt.Errorf("results: %w", err)
	}
	stem := escapeID(s.Info.RunID)
	info := s.Info
	info.Format = StateFormat
	if info.Network == nil {
		info.Table = stem + ".qtable.parquet"
		if err := writeFileAtomic(filepath.Join(sd, info.Table), func(w io.Writer) error {
			kv := [][2]string{{KeyTable, tableQ}}
			if info.Objective != "" {
				return writeTable(w, s.Q, kv)
			}
			rows := make([]qRowDelay, len(s.Q))
			for i, q := range s.Q {
				rows[i] = qRowDelay{q.Node, q.Destination, q.Neighbour, q.Channel, q.Value, q.Confidence, q.Best, q.RecoveryRate}
			}
			return writeTable(w, rows, kv)
		}); err != nil {
			return err
		}
	}
	b, err := json.MarshalIndent(info, "", " ")
	if err != nil {
		return fmt.Errorf("results: %w", err)
	}
	return writeFileAtomic(StatePath(dir, s.Info.RunID), func(w io.Writer) error {
		_, err := w.Write(append(b, '\n'))
		return err
	})
}

// ReadStates returns the state files of result folder dir, by run index;
// an empty list when it has none.
func ReadStates(dir string) ([]StateInfo, error) {
	sd := filepath.Join(dir, StateDir)
	ents, err := os.ReadDir(sd)
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, fmt.Errorf("results: %w", err)
	}
	var out []StateInfo
	for _, e := range ents {
		name := e.Name()
		if !e.Type().IsRegular() || strings.HasPrefix(name, ".") || !strings.HasSuffix(name, ".json") {
			continue
		}
		info, err := ReadStateInfo(filepath.Join(sd, name))
		if err != nil {
			return nil, err
		}
		out = append(out, info)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].RunIndex < out[j].RunIndex })
	return out, nil
}

// ReadStateInfo reads one state file.
func ReadStateInfo(path string) (StateInfo, error) {
	var info StateInfo
	b, err := os.ReadFile(path)
	if err != nil {
		return info, fmt.Errorf("results: %w", err)
	}
	if err := json.Unmarshal(b, &info); err != nil {
		return info, fmt.Errorf("results: %s: %w", path, err)
	}
	if info.Format != StateFormat {
		return info, fmt.Errorf("results: %s: format %q, want %q", path, info.Format, StateFormat)
	}
	return info, nil
}

// readLearnedState reads run id's state from result folder dir, nil when
// it has none.
func readLearnedState(dir, id string) (*LearnedState, error) {
	path := StatePath(dir, id)
	if _, err := os.Stat(path); errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	info, err := ReadStateInfo(path)
	if err != nil {
		return nil, err
	}
	ls := &LearnedState{Info: info}
	if info.Network == nil {
		if ls.Q, err = ReadQTable(path, info); err != nil {
			return nil, err
		}
	}
	return ls, nil
}

// ReadQTable reads the Q table of the state file at path (see StateInfo.Table).
func ReadQTable(path string, info StateInfo) ([]QRow, error) {
	if info.Table == "" {
		return nil, fmt.Errorf("results: %s: no Q table", path)
	}
	return readTable[QRow](filepath.Join(filepath.Dir(path), info.Table), tableQ)
}
