package agents

import "hoplore/sim"

// QNetworkGreedy returns the neighbour node that node's network prefers for
// destination d with empty queues and every channel up.
func QNetworkGreedy(a sim.Agent, node, d int) int {
	r := a.(*QNetwork).nodes[node]
	r.s.firstLayerCommon(r.theta, r.id, d, r.common)
	best, bestV := -1, 0.0
	for k := range r.out {
		v := r.qvalue(r.theta, d, k, 0)
		if best < 0 || v < bestV {
			best, bestV = k, v
		}
	}
	return r.nbr[best]
}

// NewQNetworkFromScratch builds a q-network agent without the zero-load
// prior: random initial networks that must learn delivery times alone.
func NewQNetworkFromScratch(p Params, net *sim.Net) sim.Agent {
	return newQNetworkOpt(p, net, false)
}

// ContinueQRouting builds a q-routing agent whose nodes start from the
// tables prev (a q-routing agent after a run of length prevDuration) ended
// with: a second traffic phase following the first.
func ContinueQRouting(p Params, net *sim.Net, prev sim.Agent, prevDuration sim.Time) sim.Agent {
	a, err := newQRouting(p, net)
	if err != nil {
		panic(err)
	}
	q := a.(*QRouting)
	q.warm, q.warmShift = prev.(*QRouting), prevDuration
	return q
}
