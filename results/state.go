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

	"hoplore/internal/statefile"
)

// StateDir is the folder, inside a result folder, that holds the final
// state of every learning run: DIR/state/<run_id>.json (StateInfo) and, for
// a tabular learner, DIR/state/<run_id>.qtable.parquet (QRow). Run ids are
// escaped as in parts. The layout is package statefile's.
const StateDir = statefile.Dir

// StateFormat names the layout of the state files this version writes.
const StateFormat = statefile.Format

// StateInfo is a learning run's state file, JSON: which run it ended, of
// which experiment (name and hash), on which topology, and for a network
// learner the parameters themselves (statefile.Info).
type StateInfo = statefile.Info

// NetworkState is every node's network (statefile.Network).
type NetworkState = statefile.Network

// QRow is one row of a learned Q table: at node, for destination, through
// channel (towards neighbour), the delivery-time estimate value in seconds.
// confidence is the confidence variant's, best and recovery_rate the
// predictive variant's for the delivery-time estimate (0 otherwise). Under
// objectives that learn loss, channel_loss is the channel's observed drop
// frequency and loss_beyond the learned loss probability beyond the
// neighbour (the loss estimate is 1 − (1 − channel_loss)(1 − loss_beyond));
// utilisation is the utilisation estimate of objectives that learn it. These
// three columns are written only for a state whose StateInfo.Objective is
// set, and read as 0 from a file without them.
type QRow struct {
	Node         string  `parquet:"node,dict"`
	Destination  string  `parquet:"destination,dict"`
	Neighbour    string  `parquet:"neighbour,dict"`
	Channel      int     `parquet:"channel"`
	Value        float64 `parquet:"value"`
	Confidence   float64 `parquet:"confidence"`
	Best         float64 `parquet:"best"`
	RecoveryRate float64 `parquet:"recovery_rate"`
	ChannelLoss  float64 `parquet:"channel_loss"`
	LossBeyond   float64 `parquet:"loss_beyond"`
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
// The Q table's key-value metadata carries the experiment's name and hash
// (s.Info's) and version, as the result tables do.
func writeState(dir string, s *LearnedState, version string) error {
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
			meta := Meta{Version: version, Experiment: info.Experiment, ExperimentHash: info.ExperimentHash}
			kv := meta.kv(tableQ)
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
	info, _, err := statefile.Read(path)
	if err != nil {
		return info, fmt.Errorf("results: %w", err)
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

// ReadQTable reads the Q table of the state file at path (see
// StateInfo.Table); an error when the table's experiment hash is not the
// state file's.
func ReadQTable(path string, info StateInfo) ([]QRow, error) {
	tp := statefile.TablePath(path, info)
	if tp == "" {
		return nil, fmt.Errorf("results: %s: no Q table", path)
	}
	if h, err := statefile.TableHash(tp); err != nil {
		return nil, fmt.Errorf("results: %w", err)
	} else if h != info.ExperimentHash {
		return nil, fmt.Errorf("results: %s: Q table of experiment hash %q, its state file has %q: %w", tp, h, info.ExperimentHash, statefile.ErrOtherExperiment)
	}
	return readTable[QRow](tp, tableQ)
}
