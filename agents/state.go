package agents

import (
	"fmt"

	"hoplore/sim"
)

// learningField is the per-node learners' learning: on (the default) or
// frozen.
func learningField() Field {
	return NewField("learning", func(p *Params) *string { return &p.Learning }, "on", oneOf("learning", "on", "frozen"))
}

// Origin names where a learner's initial state comes from: the result
// folder Results (as written in the experiment file) of a training run and
// the agent label there.
type Origin struct {
	Results string
	Agent   string
}

// startFromField is the per-node learners' start_from: none by default.
// Which state file a run loads is the experiment's business.
func startFromField() Field {
	return NewField("start_from", func(p *Params) **Origin { return &p.StartFrom }, nil, func(o *Origin) error {
		if o == nil {
			return nil
		}
		if o.Results == "" {
			return perr("start_from.results", "required: a result folder")
		}
		if o.Agent == "" {
			return perr("start_from.agent", "required: an agent label in that folder")
		}
		return nil
	})
}

// frozen reports whether p's learner keeps its tables as they are.
func (p *Params) frozen() bool { return p.Learning == "frozen" }

// QEntry is one learned estimate of a tabular learner: at Node, for
// Destination, via the channel Channel (towards Neighbour), the
// delivery-time estimate Value seconds (kept under every objective).
// Confidence is the confidence variant's, Best and Rate the predictive
// variant's best value and recovery rate of the delivery-time estimate (0
// otherwise). Under objectives that learn loss, ChannelLoss is the drop
// frequency of Channel and LossBeyond the learned loss probability beyond
// Neighbour, the loss estimate being 1 − (1 − ChannelLoss)(1 −
// LossBeyond); Utilisation is the utilisation estimate of objectives that
// learn it (0 otherwise).
type QEntry struct {
	Node, Destination, Neighbour, Channel int
	Value, Confidence, Best, Rate         float64
	ChannelLoss, LossBeyond, Utilisation  float64
}

// State is a per-node learner's learned state at the end of a run: what
// `hoplore run` stores and start_from loads (see the README, "Train on
// failures, test on others").
type State struct {
	Kind    string // QRoutingKind or QNetworkKind
	Variant string // q-routing's variant
	// Objective is the learner's objective as labels write it (see
	// Objective.String), "" for delay: a state loads only into an agent of
	// the same objective.
	Objective string
	Q         []QEntry // q-routing: every (node, destination ≠ node, channel) in that order
	// q-network: Sizes are the layer widths (input, hidden..., heads: 1
	// under delay, one more per term of another objective); Params[v]
	// and Target[v] node v's online and target parameters, laid out layer
	// by layer, each layer's weights (row-major, output by input) then its
	// biases.
	Sizes          []int
	Params, Target [][]float64
}

// ExportState returns the learned state of a per-node learner after its
// run, and false for any other agent.
func ExportState(a sim.Agent) (*State, bool) {
	switch x := a.(type) {
	case *QRouting:
		st := &State{Kind: QRoutingKind, Variant: x.p.Variant, Objective: stateObjective(x.p.Objective)}
		for _, r := range x.nodes {
			for d := 0; d < r.s.n; d++ {
				if d == r.id {
					continue
				}
				for k, c := range r.out {
					i := d*r.deg + k
					e := QEntry{Node: r.id, Destination: d, Neighbour: r.net.Channels[c].To, Channel: c, Value: r.q[i]}
					if r.s.alt {
						e.Value = r.qd[i]
						if r.s.lossOn {
							e.ChannelLoss, e.LossBeyond = r.pdrop[k], r.q[i]
						}
						if ut := r.utilTable(); ut != nil {
							e.Utilisation = ut[i]
						}
					}
					switch r.s.variant {
					case variantConfidence:
						e.Confidence = r.confidenceOf(d, i)
					case variantPredictive:
						if r.s.alt {
							e.Best, e.Rate = r.bd[i], r.rd[i]
						} else {
							e.Best, e.Rate = r.b[i], r.r[i]
						}
					}
					st.Q = append(st.Q, e)
				}
			}
		}
		return st, true
	case *QNetwork:
		st := &State{Kind: QNetworkKind, Objective: stateObjective(x.p.Objective), Sizes: append([]int(nil), x.shared.sizes...)}
		for _, r := range x.nodes {
			st.Params = append(st.Params, append([]float64(nil), r.theta...))
			st.Target = append(st.Target, append([]float64(nil), r.target...))
		}
		return st, true
	}
	return nil, false
}

// StartFrom makes learner a start its run from st instead of its zero-load
// or random initial state: tables (q-routing) or parameters (q-network) are
// copied as each node is built; the predictive variant's clocks restart at
// 0. It refuses a state of another kind, variant or shape (another
// topology, other hidden layers).
func StartFrom(a sim.Agent, st *State) error {
	switch x := a.(type) {
	case *QRouting:
		if st.Kind != QRoutingKind || st.Variant != x.p.Variant {
			return fmt.Errorf("agents: start state of %s %s, not q-routing %s", st.Kind, st.Variant, x.p.Variant)
		}
		if want := stateObjective(x.p.Objective); st.Objective != want {
			return fmt.Errorf("agents: start state learned under objective %s, not %s", ObjectiveLabel(st.Objective), ObjectiveLabel(want))
		}
		for _, e := range st.Q {
			if e.Node < 0 || e.Node >= x.shared.n || e.Destination < 0 || e.Destination >= x.shared.n || e.Channel < 0 ||
				e.Channel >= len(x.shared.zl) {
				return fmt.Errorf("agents: start state entry %+v is outside the topology", e)
			}
		}
		x.start = st
		return nil
	case *QNetwork:
		s := x.shared
		if st.Kind != QNetworkKind || fmt.Sprint(st.Sizes) != fmt.Sprint(s.sizes) || len(st.Params) != s.n || len(st.Target) != s.n {
			return fmt.Errorf("agents: start state of %s with layers %v for %d nodes, not q-network with layers %v for %d nodes",
				st.Kind, st.Sizes, len(st.Params), s.sizes, s.n)
		}
		if want := stateObjective(x.p.Objective); st.Objective != want {
			return fmt.Errorf("agents: start state learned under objective %s, not %s", ObjectiveLabel(st.Objective), ObjectiveLabel(want))
		}
		for v := range st.Params {
			if len(st.Params[v]) != s.nParam || len(st.Target[v]) != s.nParam {
				return fmt.Errorf("agents: start state of node %d has %d parameters, want %d", v, len(st.Params[v]), s.nParam)
			}
		}
		x.start = st
		return nil
	}
	return fmt.Errorf("agents: %s has no learned state to start from", a.Name())
}

// load copies this node's entries of st into its tables.
func (r *qrNode) load(st *State) error {
	for _, e := range st.Q {
		if e.Node != r.id {
			continue
		}
		k := r.localIndex(e.Channel)
		if k < 0 || e.Destination == r.id {
			return fmt.Errorf("agents: start state names channel %d at node %d, which does not leave it", e.Channel, r.id)
		}
		i := e.Destination*r.deg + k
		r.q[i] = e.Value
		if r.s.alt {
			r.qd[i], r.q[i] = e.Value, e.LossBeyond
			if r.pdrop != nil {
				r.pdrop[k] = e.ChannelLoss
			}
			if ut := r.utilTable(); ut != nil {
				ut[i] = e.Utilisation
			}
		}
		switch r.s.variant {
		case variantConfidence:
			r.c[i], r.stamp[i] = e.Confidence, r.rowN[e.Destination]
		case variantPredictive:
			if r.s.alt {
				r.bd[i], r.rd[i], r.ud[i] = e.Best, e.Rate, 0
			} else {
				r.b[i], r.r[i], r.u[i] = e.Best, e.Rate, 0
			}
		}
	}
	return nil
}

// stateObjective returns how a state records objective o: "" for delay
// (the states of earlier versions, which carry no objective, are delay
// states), else its label.
func stateObjective(o Objective) string {
	if o.Name == ObjectiveDelay || o.Name == "" {
		return ""
	}
	return o.String()
}

// ObjectiveLabel returns the objective a state's Objective field names:
// "delay" for "".
func ObjectiveLabel(stateObjective string) string {
	if stateObjective == "" {
		return ObjectiveDelay
	}
	return stateObjective
}
