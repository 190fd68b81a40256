package agents

import "hoplore/sim"

// ConsensusHeaderBytes is the fixed part of a consensus control packet, in
// bytes; each carried value adds 8 bytes (a float64). Common practice for a
// small control header.
const ConsensusHeaderBytes = 64

// ValuesMessageBytes returns the size on the wire of a tabular consensus
// message carrying V_y(d) for n destinations.
func ValuesMessageBytes(n int) int { return ConsensusHeaderBytes + 8*n }

// ParamsMessageBytes returns the size on the wire of a q-network consensus
// message carrying n parameters.
func ParamsMessageBytes(n int) int { return ConsensusHeaderBytes + 8*n }

// tagConsensus is the timer tag of a consensus round.
const tagConsensus = 1

// consensusState is one node's consensus settings.
type consensusState struct {
	every  sim.Time
	weight float64
}

func newConsensusState(c *Consensus) *consensusState {
	return &consensusState{every: c.Every, weight: c.Weight}
}

// metropolisWeight returns the Metropolis weight of the edge between nodes
// of degrees dx and dy: 1/(1 + max(dx, dy)) (Xiao, Boyd & Lall, "A scheme
// for robust distributed sensor fusion based on average consensus", IPSN
// 2005). With W_xy given by it on edges and W_xx = 1 − Σ_y W_xy, W is
// symmetric and doubly stochastic, so x(t+1) = W x(t) preserves the mean and
// converges to it at rate ρ(W − 11ᵀ/n) (Xiao & Boyd, "Fast linear
// iterations for distributed averaging", Systems & Control Letters, 2004).
func metropolisWeight(dx, dy int) float64 {
	return 1 / float64(1+max(dx, dy))
}

// neighbourCount returns the number of distinct neighbours of node v, the
// degree used by the Metropolis weights (parallel links count once).
func neighbourCount(net *sim.Net, v int) int {
	n, last := 0, -1
	for _, c := range net.Out[v] { // ordered by neighbour
		if to := net.Channels[c].To; to != last {
			n++
			last = to
		}
	}
	return n
}
