package sweep

import (
	"fmt"
	"path/filepath"

	"hoplore/agents"
	"hoplore/experiments"
	"hoplore/internal/statefile"
	"hoplore/results"
	"hoplore/sim"
)

// learnedState returns the final state of run r's agent a, nil for an agent
// that learns nothing.
func learnedState(r *experiments.Run, net *sim.Net, a sim.Agent) *results.LearnedState {
	st, ok := agents.ExportState(a)
	if !ok {
		return nil
	}
	ls := &results.LearnedState{Info: results.StateInfo{
		Experiment: r.Dims.Experiment, ExperimentHash: r.Exp.Hash, RunID: r.Dims.RunID, RunIndex: r.Dims.Index, Agent: r.Dims.Agent,
		Kind: st.Kind, Variant: st.Variant, Objective: st.Objective, Topology: r.Dims.Topology, Load: r.Dims.Load, Failure: r.Dims.Failure,
		Replicate: r.Dims.Replicate, TopologyKey: net.Graph.Key(),
	}}
	if st.Kind == agents.QNetworkKind {
		ls.Info.Network = &results.NetworkState{Sizes: st.Sizes, Params: st.Params, Target: st.Target}
		return ls
	}
	ls.Q = make([]results.QRow, len(st.Q))
	for i, e := range st.Q {
		ls.Q[i] = results.QRow{Node: net.Name(e.Node), Destination: net.Name(e.Destination), Neighbour: net.Name(e.Neighbour),
			Channel: e.Channel, Value: e.Value, Confidence: e.Confidence, Best: e.Best, RecoveryRate: e.Rate,
			ChannelLoss: e.ChannelLoss, LossBeyond: e.LossBeyond, Utilisation: e.Utilisation}
	}
	return ls
}

// startFrom loads the state file at path into agent a of a run on net. The
// state and its Q table must carry the experiment hash of the result folder
// holding them (statefile.Check).
func startFrom(path string, net *sim.Net, a sim.Agent) error {
	info, err := results.ReadStateInfo(path)
	if err != nil {
		return err
	}
	hash, err := statefile.FolderHash(filepath.Dir(filepath.Dir(path)))
	if err != nil {
		return fmt.Errorf("sweep: %w", err)
	}
	if err := statefile.Check(path, info, hash); err != nil {
		return fmt.Errorf("sweep: %w", err)
	}
	if info.TopologyKey != net.Graph.Key() {
		return fmt.Errorf("sweep: %s was learned on another topology (%s)", path, info.Topology)
	}
	st := &agents.State{Kind: info.Kind, Variant: info.Variant, Objective: info.Objective}
	if n := info.Network; n != nil {
		st.Sizes, st.Params, st.Target = n.Sizes, n.Params, n.Target
	} else {
		rows, err := results.ReadQTable(path, info)
		if err != nil {
			return err
		}
		g := net.Graph
		st.Q = make([]agents.QEntry, len(rows))
		for i, q := range rows {
			v, ok1 := g.NodeIndex(q.Node)
			d, ok2 := g.NodeIndex(q.Destination)
			y, ok3 := g.NodeIndex(q.Neighbour)
			if !ok1 || !ok2 || !ok3 {
				return fmt.Errorf("sweep: %s: row %d names a node the topology lacks", path, i)
			}
			st.Q[i] = agents.QEntry{Node: v, Destination: d, Neighbour: y, Channel: q.Channel, Value: q.Value,
				Confidence: q.Confidence, Best: q.Best, Rate: q.RecoveryRate,
				ChannelLoss: q.ChannelLoss, LossBeyond: q.LossBeyond, Utilisation: q.Utilisation}
		}
	}
	if err := agents.StartFrom(a, st); err != nil {
		return fmt.Errorf("sweep: %s: %w", path, err)
	}
	return nil
}
