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
func ChannelLoads(n *Net, m [][]float64, meanBytes float64) []float64 {
	load := make([]float64, len(n.Channels))
	for s := range m {
		for d, r := range m[s] {
			if r <= 0 || s == d {
				continue
			}
			for v := s; v != d; {
				c := HopRoute(n, v, d)
				if c == NoRoute {
					break
				}
				load[c] += r * meanBytes * 8
				v = n.Channels[c].To
			}
		}
	}
	return load
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
