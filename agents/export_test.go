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

// CentralOptimalSolve solves central-optimal's model for demand (packets/s)
// on the intact network and returns the new split weights of (u, d) for
// every u, as Splits[u][k] over Net.Out[u], and the model's maximum
// utilisation.
func CentralOptimalSolve(ag sim.Agent, demand [][]float64, d int) ([][]float64, float64, error) {
	a := ag.(*CentralOptimal)
	for s := range demand {
		copy(a.demand[s], demand[s])
	}
	next := make([]float64, len(a.w))
	a.zeroLoadInto(next)
	_, err := a.sol.solveInto(a, next)
	out := make([][]float64, a.n)
	for u := range out {
		i := a.entry(u, d)
		out[u] = next[i : i+len(a.net.Out[u])]
	}
	return out, a.LastUtil, err
}

// QRoutingValue returns node's estimate Q(d, out[k]) of a q-routing agent
// after its run (under objective loss, the loss estimate: the channel's
// drop frequency composed with the learned loss beyond the next node).
func QRoutingValue(a sim.Agent, node, d, k int) float64 {
	r := a.(*QRouting).nodes[node]
	if r.s.lossOn {
		return r.lossAt(d*r.deg + k)
	}
	return r.q[d*r.deg+k]
}

// QNetworkEstimates returns node's estimates for destination d via out[k]
// of a q-network agent after its run, with an empty queue: delivery time
// (seconds), loss and utilisation (0 for a head the objective lacks).
func QNetworkEstimates(a sim.Agent, node, d, k int, qf float64) (delay, loss, util float64) {
	r := a.(*QNetwork).nodes[node]
	r.s.firstLayerCommon(r.theta, r.id, d, r.common)
	delay = r.qvalue(r.theta, d, k, qf)
	loss, util = r.estimates(k, r.out[k])
	return delay, loss, util
}
