package agents

import (
	"hoplore/paths"
	"hoplore/sim"
)

// AssumedPacketBytes is the packet size, in bytes, that the learning and
// central agents assume when they turn a channel's bandwidth into a
// transmission time before they have measured anything: zero-load initial
// Q values, the zero-load path costs that rank central-q's candidate paths,
// and central-adaptive's cost before its first snapshot with traffic. Agents
// are built from the static topology alone and are not told the traffic's
// size distribution; 1000 bytes is the size of the bundled experiments
// (common practice for a mid-sized data packet).
const AssumedPacketBytes = 1000

// zeroLoadCosts returns each channel's zero-load traversal time in seconds:
// the processing delay at its sending node, the transmission time of a
// packet of the given size, and the propagation delay.
func zeroLoadCosts(net *sim.Net, bytes float64) []float64 {
	c := make([]float64, len(net.Channels))
	for i := range net.Channels {
		ch := &net.Channels[i]
		c[i] = net.Graph.Nodes[ch.From].Processing.Seconds() + bytes*8/ch.Bandwidth + ch.Delay.Seconds()
	}
	return c
}

// pathFinder runs deterministic shortest-path searches (package paths) over
// a Net with per-channel costs. Ties between equal-cost alternatives are
// broken by the Net's tie-break order (lowest neighbour index first), so
// results are a pure function of the inputs. Scratch space is reused between
// searches; a pathFinder is not safe for concurrent use.
type pathFinder struct {
	net    *sim.Net
	search paths.Search
}

func newPathFinder(net *sim.Net) *pathFinder {
	return &pathFinder{net: net}
}

// distTo fills dist[u] with the least cost from every node u to d over
// channels c with usable(c) (nil: all), +Inf where d is unreachable.
// Cost: O((N+C) log N).
func (f *pathFinder) distTo(d int, cost []float64, usable []bool, dist []float64) {
	f.search.To(f.net.Digraph(), d, cost, usable)
	copy(dist, f.search.Dist)
}

// tieTol is the relative tolerance under which two path costs count as equal
// when choosing a next hop, so that sums taken in different orders do not
// break the lowest-index tie-break.
const tieTol = 1e-12

// next hops are channel IDs with paths.NoArc = sim.NoRoute for "none"
const _ = uint(paths.NoArc-sim.NoRoute) + uint(sim.NoRoute-paths.NoArc)

// nextHopsTo fills next[u] with the channel node u should use towards d
// (sim.NoRoute for d itself and for nodes that cannot reach d), given dist
// from distTo: the first usable channel in Net.Out order whose cost plus the
// remaining distance is least, within tieTol.
func nextHopsTo(net *sim.Net, d int, cost []float64, usable []bool, dist []float64, next []int32) {
	paths.NextHops(net.Digraph(), d, cost, usable, dist, tieTol, next)
}

// path is a loopless path as its nodes and the channels between them.
type path struct {
	nodes []int
	chans []int
	cost  float64
}

// kShortest returns up to k loopless paths from s to t in increasing cost
// (Yen, "Finding the k shortest loopless paths in a network", Management
// Science 17, 1971), ties ordered by node sequence so the result is a pure
// function of the inputs. Cost: O(k·N·Dijkstra).
func (f *pathFinder) kShortest(s, t, k int, cost []float64) []path {
	ps := f.search.KShortest(f.net.Digraph(), s, t, k, cost)
	if ps == nil {
		return nil
	}
	out := make([]path, len(ps))
	for i, p := range ps {
		out[i] = path{nodes: p.Nodes, chans: p.Arcs, cost: p.Cost}
	}
	return out
}

// allPairsDist returns the least-cost matrix D[u][d] over all channels.
func allPairsDist(net *sim.Net, cost []float64) [][]float64 {
	n := net.NumNodes()
	f := newPathFinder(net)
	D := make([][]float64, n)
	col := make([]float64, n)
	for u := range D {
		D[u] = make([]float64, n)
	}
	for d := 0; d < n; d++ {
		f.distTo(d, cost, nil, col)
		for u := 0; u < n; u++ {
			D[u][d] = col[u]
		}
	}
	return D
}
