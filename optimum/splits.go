package optimum

import "math"

// Split is one next hop of a node towards a destination: the channel and
// the fraction of the node's traffic for that destination it carries.
type Split struct {
	Channel int
	Weight  float64 // in (0, 1]; a node's weights sum to 1
}

// Splits is a destination-based routing: for every (node, destination) the
// next-hop channels and their weights. For each destination the channels
// with a positive weight form a directed acyclic graph ending at the
// destination, so forwarding by the weights cannot loop, and every node that
// can reach the destination has at least one next hop.
type Splits struct {
	nodes int
	start []int32 // (d·N + v) → list[start[i]:start[i+1]]
	list  []Split
}

// At returns the next hops of node v towards destination d, ordered by
// channel index (nil at d itself and where d cannot be reached). The slice is
// shared: do not modify it.
func (p *Splits) At(v, d int) []Split {
	i := d*p.nodes + v
	return p.list[p.start[i]:p.start[i+1]]
}

// Nodes returns the number of nodes the splits cover.
func (p *Splits) Nodes() int { return p.nodes }

// minShare is the smallest weight kept in a split: flows below this share of
// a node's traffic for a destination are numerical residue of the solvers.
const minShare = 1e-6

// Splits writes the routing of the last MinMaxUtil, MinDelay or MinMix into dst as
// per-destination next-hop weights w_vu = f^d_vu / Σ_u f^d_vu (Bertsekas &
// Gallager, Data Networks, 1992, §5.5: destination-based optimal routing),
// after cancelling every directed cycle of each destination's flow (removing
// the least flow around a cycle lowers every channel's flow, so neither the
// maximum utilisation nor the mean delay rises). A node that carries no
// flow for a destination gets the single next hop of a cheapest path under
// the solution's final lengths; since no flow enters it, this cannot close
// a loop. Cost O(N·(N+E) log N + cycles·E); dst's storage is reused.
func (s *Solver) Splits(dst *Splits) {
	N, E := s.net.Nodes, len(s.net.Channels)
	dst.nodes = N
	if cap(dst.start) < N*N+1 {
		dst.start = make([]int32, N*N+1)
	}
	dst.start = dst.start[:N*N+1]
	dst.list = dst.list[:0]
	copy(s.yk, s.flow)
	for c, ch := range s.net.Channels {
		if s.solved < 2 || ch.Capacity == 0 {
			s.lengths[c] = usable(ch, 1/math.Max(ch.Capacity, math.SmallestNonzeroFloat64))
		}
		// After MinDelay and MinMix the lengths are the marginal costs already.
	}
	for d := 0; d < N; d++ {
		f := s.yk[d*E : (d+1)*E]
		s.cancelCycles(d, f)
		s.dropDeadEnds(d, f)
		s.towards(d, s.lengths)
		for v := 0; v < N; v++ {
			dst.start[d*N+v] = int32(len(dst.list))
			if v == d {
				continue
			}
			var out float64
			for _, c := range s.out[s.outStart[v]:s.outStart[v+1]] {
				out += f[c]
			}
			n0 := len(dst.list)
			if out > 0 {
				var kept float64
				for _, c := range s.out[s.outStart[v]:s.outStart[v+1]] {
					if f[c] >= minShare*out {
						kept += f[c]
					}
				}
				for _, c := range s.out[s.outStart[v]:s.outStart[v+1]] {
					if f[c] >= minShare*out {
						dst.list = append(dst.list, Split{Channel: c, Weight: f[c] / kept})
					}
				}
				sortSplits(dst.list[n0:])
			} else if c := s.next[v]; c >= 0 {
				dst.list = append(dst.list, Split{Channel: int(c), Weight: 1})
			}
		}
	}
	dst.start[N*N] = int32(len(dst.list))
}

// dropDeadEnds zeroes the flow into every node other than d that sends
// none on (rounding residue of the solvers, or what minShare dropped), and
// again for the nodes that this leaves sending none, until every node with
// flow in has flow out. Then no flow channel enters a node that takes its
// next hop from the cheapest-path tree, so those next hops cannot close a
// loop with the flow's acyclic channels. Cost O(N·E) at worst.
func (s *Solver) dropDeadEnds(d int, f []float64) {
	for changed := true; changed; {
		changed = false
		for v := 0; v < s.net.Nodes; v++ {
			if v == d {
				continue
			}
			var out float64
			for _, c := range s.out[s.outStart[v]:s.outStart[v+1]] {
				out += f[c]
			}
			if out > 0 {
				continue
			}
			arcs, _ := s.graph.In(v)
			for _, c := range arcs {
				if f[c] != 0 {
					f[c] = 0
					changed = true
				}
			}
		}
	}
}

// sortSplits orders a node's splits by channel index (insertion sort: a
// node has few next hops).
func sortSplits(a []Split) {
	for i := 1; i < len(a); i++ {
		for j := i; j > 0 && a[j].Channel < a[j-1].Channel; j-- {
			a[j], a[j-1] = a[j-1], a[j]
		}
	}
}

// cancelCycles removes every directed cycle from flow f (towards d) by
// depth-first search: on meeting a node already on the search path, the
// least flow around the cycle is subtracted from each of its channels.
// Flows below minShare of the node's out-flow are zeroed first (they are
// dropped from the splits anyway). Allocation-free.
func (s *Solver) cancelCycles(d int, f []float64) {
	N := s.net.Nodes
	for v := 0; v < N; v++ {
		var out float64
		for _, c := range s.out[s.outStart[v]:s.outStart[v+1]] {
			out += f[c]
		}
		for _, c := range s.out[s.outStart[v]:s.outStart[v+1]] {
			if f[c] < minShare*out {
				f[c] = 0
			}
		}
	}
	state := s.cstate // 0 unvisited, 1 on the search path, 2 finished
	pos := s.cpos     // next out-channel slot to try, per node
	via := s.cvia     // channel by which a node on the path was entered
	clear(state)
	for root := 0; root < N; root++ {
		if state[root] != 0 {
			continue
		}
		path := s.order[:0]
		path = append(path, root)
		state[root] = 1
		pos[root] = int32(s.outStart[root])
		for len(path) > 0 {
			u := path[len(path)-1]
			i := int(pos[u])
			if i == s.outStart[u+1] || u == d {
				state[u] = 2
				path = path[:len(path)-1]
				continue
			}
			pos[u]++
			c := s.out[i]
			if f[c] <= 0 {
				continue
			}
			w := s.net.Channels[c].To
			switch state[w] {
			case 0:
				via[w] = int32(c)
				state[w] = 1
				pos[w] = int32(s.outStart[w])
				path = append(path, w)
			case 1:
				// Cycle w → … → u → w: subtract its least flow.
				m := f[c]
				for x := u; x != w; x = s.net.Channels[via[x]].From {
					m = math.Min(m, f[via[x]])
				}
				f[c] -= m
				for x := u; x != w; x = s.net.Channels[via[x]].From {
					f[via[x]] -= m
				}
				// Retreat to w: channels after it on the path may be empty now.
				for path[len(path)-1] != w {
					x := path[len(path)-1]
					state[x] = 0
					path = path[:len(path)-1]
				}
				pos[w] = int32(s.outStart[w])
			}
		}
		s.order = path[:0]
	}
}
