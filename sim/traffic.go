package sim

import (
	"fmt"
	"math"
)

// UniformMatrix returns relative rates 1 between every ordered pair of
// distinct nodes.
func UniformMatrix(n *Net) [][]float64 {
	N := n.NumNodes()
	m := make([][]float64, N)
	for s := range m {
		m[s] = make([]float64, N)
		for d := range m[s] {
			if d != s {
				m[s][d] = 1
			}
		}
	}
	return m
}

// NodeCapacity returns the total bandwidth of the links attached to each
// node, in bit/s: the node weights of the gravity matrix.
func NodeCapacity(n *Net) []float64 {
	w := make([]float64, n.NumNodes())
	for _, c := range n.Channels {
		w[c.From] += c.Bandwidth
	}
	return w
}

// GravityMatrix returns relative rates proportional to w_s·w_d, where a
// node's weight w is its total attached capacity (NodeCapacity), so big
// sites talk more, and more to each other.
func GravityMatrix(n *Net) [][]float64 {
	w := NodeCapacity(n)
	var top float64
	for _, x := range w {
		top = math.Max(top, x)
	}
	N := n.NumNodes()
	m := make([][]float64, N)
	for s := range m {
		m[s] = make([]float64, N)
		for d := range m[s] {
			if d != s {
				m[s][d] = (w[s] / top) * (w[d] / top)
			}
		}
	}
	return m
}

// HotspotMatrix returns a uniform matrix in which a share fraction of every
// source's traffic goes to the hot nodes (split evenly among them) and the
// rest uniformly to all other destinations. A hot node's own traffic is
// spread uniformly over the others.
func HotspotMatrix(n *Net, hot []int, fraction float64) ([][]float64, error) {
	N := n.NumNodes()
	if len(hot) == 0 {
		return nil, fmt.Errorf("sim: hotspot matrix needs at least one hot node")
	}
	if fraction < 0 || fraction > 1 {
		return nil, fmt.Errorf("sim: hotspot fraction %g is outside [0, 1]", fraction)
	}
	isHot := make([]bool, N)
	for _, h := range hot {
		if h < 0 || h >= N {
			return nil, fmt.Errorf("sim: hot node %d does not exist", h)
		}
		isHot[h] = true
	}
	m := make([][]float64, N)
	for s := range m {
		m[s] = make([]float64, N)
		var hots, cold int
		for d := 0; d < N; d++ {
			if d == s {
				continue
			}
			if isHot[d] {
				hots++
			} else {
				cold++
			}
		}
		for d := 0; d < N; d++ {
			if d == s {
				continue
			}
			switch {
			case hots == 0 || cold == 0:
				m[s][d] = 1 / float64(N-1)
			case isHot[d]:
				m[s][d] = fraction / float64(hots)
			default:
				m[s][d] = (1 - fraction) / float64(cold)
			}
		}
	}
	return m, nil
}

// HopRoute returns the next hop channel from v towards d under hop-count
// shortest path on the intact network, lowest neighbour index first: the
// routing that defines normalised load.
func HopRoute(n *Net, v, d int) int {
	h := n.Hops[v][d]
	for _, c := range n.Out[v] {
		if n.Hops[n.Channels[c].To][d] == h-1 {
			return c
		}
	}
	return NoRoute
}

// ChannelLoads returns the offered load on every channel, in bit/s, when
// rates m (packets/s) of packets of meanBytes are routed by HopRoute.
//
// HopRoute's next hops towards one destination d form a tree into d, so the
// rates to d are accumulated up that tree: nodes in decreasing hop count
// from d pass on what they send and what reached them. Cost: O(N·(N+L))
// time (one pass over every node's channels per destination), O(N) memory
// beyond the result; the pair-by-pair path walk this replaces was
// O(N²·diameter·degree).
func ChannelLoads(n *Net, m [][]float64, meanBytes float64) []float64 {
	N := n.NumNodes()
	load := make([]float64, len(n.Channels))
	count := make([]int, N+1) // nodes per hop count, then bucket starts
	order := make([]int, N)   // nodes by decreasing hop count from d
	// Destinations go in blocks so that m is read row by row:
	// flows[k][v] is what node v sends towards destination d0+k.
	const block = 32
	flows := make([][]float64, block)
	for k := range flows {
		flows[k] = make([]float64, N)
	}
	for d0 := 0; d0 < N; d0 += block {
		nb := min(block, N-d0)
		for k := 0; k < nb; k++ {
			clear(flows[k])
		}
		var some [block]bool
		for v := 0; v < N && v < len(m); v++ {
			row := m[v]
			for k := 0; k < nb && d0+k < len(row); k++ {
				if r := row[d0+k]; r > 0 && v != d0+k {
					flows[k][v] = r
					some[k] = true
				}
			}
		}
		for k := 0; k < nb; k++ {
			if some[k] {
				loadTowards(n, d0+k, flows[k], load, count, order, meanBytes)
			}
		}
	}
	return load
}

// loadTowards adds to load what flow (packets/s from each node) puts on
// each channel on its way to d under HopRoute; flow is consumed. count and
// order are scratch of N+1 and N.
func loadTowards(n *Net, d int, flow, load []float64, count, order []int, meanBytes float64) {
	// Every link is two channels, so hop counts are symmetric: row d holds
	// every node's distance to d (read contiguously).
	hd := n.Hops[d]
	// counting sort of the nodes that reach d, farthest first
	clear(count)
	for _, h := range hd {
		if h > 0 {
			count[h]++
		}
	}
	pos := 0
	for h := len(count) - 1; h >= 1; h-- {
		c := count[h]
		count[h] = pos
		pos += c
	}
	for v, h := range hd {
		if h > 0 {
			order[count[h]] = v
			count[h]++
		}
	}
	for _, v := range order[:pos] {
		f := flow[v]
		if f == 0 {
			continue
		}
		// HopRoute's choice: the first channel to a node one hop nearer d
		h := hd[v]
		for _, c := range n.Out[v] {
			if to := n.Channels[c].To; hd[to] == h-1 {
				load[c] += f * meanBytes * 8
				flow[to] += f
				break
			}
		}
	}
}

// SaturationScale returns the factor by which rates m (packets/s) must be
// multiplied so that, under hop-count shortest path with lowest-index
// tie-break on the intact network, the busiest channel is exactly saturated:
// the meaning of load 1.0. It returns +Inf when m offers no load.
func SaturationScale(n *Net, m [][]float64, meanBytes float64) float64 {
	load := ChannelLoads(n, m, meanBytes)
	var worst float64
	for c, l := range load {
		worst = math.Max(worst, l/n.Channels[c].Bandwidth)
	}
	if worst == 0 {
		return math.Inf(1)
	}
	return 1 / worst
}

// NormalisedLoad returns the normalised load of absolute rates m: the
// utilisation of the busiest channel under hop-count shortest path.
func NormalisedLoad(n *Net, m [][]float64, meanBytes float64) float64 {
	return 1 / SaturationScale(n, m, meanBytes)
}

// RandomFailures draws, for each of n elements, alternating up and down
// periods (exponential with means mtbf and mttr, starting up) until horizon,
// each element from its own stream Stream(seed, StreamFailures, i), so the
// schedule of one element does not depend on how many others there are.
// fill sets the element's Links or Node and Element on each event.
func RandomFailures(seed uint64, n int, mtbf, mttr, horizon Time, fill func(i int, ev *FailureEvent)) []FailureEvent {
	var out []FailureEvent
	for i := 0; i < n; i++ {
		r := Stream(seed, StreamFailures, uint64(i))
		t := Time(0)
		for {
			t += Time(math.Ceil(r.ExpFloat64() * float64(mtbf)))
			if t >= horizon {
				break
			}
			down := FailureEvent{At: t, Node: -1}
			fill(i, &down)
			out = append(out, down)
			t += Time(math.Ceil(r.ExpFloat64() * float64(mttr)))
			if t >= horizon {
				break
			}
			up := FailureEvent{At: t, Node: -1, Up: true}
			fill(i, &up)
			out = append(out, up)
		}
	}
	return out
}
