package agents

import (
	"math"
	"slices"

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

// pathFinder runs deterministic Dijkstra searches over a Net with per-channel
// costs. Ties between equal-cost alternatives are broken by the Net's
// tie-break order (lowest neighbour index first), so results are a pure
// function of the inputs. Scratch space is reused between searches; a
// pathFinder is not safe for concurrent use.
type pathFinder struct {
	net  *sim.Net
	heap []pfItem
	done []bool
	pred []int32 // forward searches: channel into each node
}

type pfItem struct {
	d    float64
	node int32
}

func newPathFinder(net *sim.Net) *pathFinder {
	n := net.NumNodes()
	return &pathFinder{net: net, done: make([]bool, n), pred: make([]int32, n)}
}

func pfLess(a, b pfItem) bool {
	if a.d != b.d {
		return a.d < b.d
	}
	return a.node < b.node
}

func (f *pathFinder) push(it pfItem) {
	f.heap = append(f.heap, it)
	i := len(f.heap) - 1
	for i > 0 {
		p := (i - 1) / 2
		if !pfLess(f.heap[i], f.heap[p]) {
			break
		}
		f.heap[i], f.heap[p] = f.heap[p], f.heap[i]
		i = p
	}
}

func (f *pathFinder) pop() pfItem {
	h := f.heap
	top := h[0]
	last := len(h) - 1
	h[0] = h[last]
	h = h[:last]
	i := 0
	for {
		l, r, m := 2*i+1, 2*i+2, i
		if l < len(h) && pfLess(h[l], h[m]) {
			m = l
		}
		if r < len(h) && pfLess(h[r], h[m]) {
			m = r
		}
		if m == i {
			break
		}
		h[i], h[m] = h[m], h[i]
		i = m
	}
	f.heap = h
	return top
}

// distTo fills dist[u] with the least cost from every node u to d over
// channels c with usable(c) (nil: all), +Inf where d is unreachable.
// Cost: O((N+C) log N).
func (f *pathFinder) distTo(d int, cost []float64, usable []bool, dist []float64) {
	for i := range dist {
		dist[i] = math.Inf(1)
		f.done[i] = false
	}
	f.heap = f.heap[:0]
	dist[d] = 0
	f.push(pfItem{0, int32(d)})
	for len(f.heap) > 0 {
		it := f.pop()
		v := int(it.node)
		if f.done[v] {
			continue
		}
		f.done[v] = true
		for _, c := range f.net.In[v] {
			if usable != nil && !usable[c] {
				continue
			}
			u := f.net.Channels[c].From
			if nd := it.d + cost[c]; nd < dist[u] {
				dist[u] = nd
				f.push(pfItem{nd, int32(u)})
			}
		}
	}
}

// tieTol is the relative tolerance under which two path costs count as equal
// when choosing a next hop, so that sums taken in different orders do not
// break the lowest-index tie-break.
const tieTol = 1e-12

// nextHopsTo fills next[u] with the channel node u should use towards d
// (sim.NoRoute for d itself and for nodes that cannot reach d), given dist
// from distTo: the first usable channel in Net.Out order whose cost plus the
// remaining distance is least, within tieTol.
func nextHopsTo(net *sim.Net, d int, cost []float64, usable []bool, dist []float64, next []int32) {
	for u := range next {
		next[u] = sim.NoRoute
		if u == d || math.IsInf(dist[u], 1) {
			continue
		}
		best := math.Inf(1)
		for _, c := range net.Out[u] {
			if usable != nil && !usable[c] {
				continue
			}
			v := cost[c] + dist[net.Channels[c].To]
			if math.IsInf(v, 1) {
				continue
			}
			if next[u] == sim.NoRoute || v < best*(1-tieTol) {
				best = v
				next[u] = int32(c)
			}
		}
	}
}

// path is a loopless path as its nodes and the channels between them.
type path struct {
	nodes []int
	chans []int
	cost  float64
}

// shortestFrom returns the least-cost path from s to t avoiding banned nodes
// and channels (either may be nil), and false when there is none. Ties go to
// the node popped first in (cost, index) order and, among a node's
// predecessors, to the first found.
func (f *pathFinder) shortestFrom(s, t int, cost []float64, bannedNode, bannedChan []bool) (path, bool) {
	n := f.net.NumNodes()
	dist := make([]float64, n)
	for i := range dist {
		dist[i] = math.Inf(1)
		f.done[i] = false
		f.pred[i] = -1
	}
	f.heap = f.heap[:0]
	dist[s] = 0
	f.push(pfItem{0, int32(s)})
	for len(f.heap) > 0 {
		it := f.pop()
		v := int(it.node)
		if f.done[v] {
			continue
		}
		f.done[v] = true
		if v == t {
			break
		}
		for _, c := range f.net.Out[v] {
			if bannedChan != nil && bannedChan[c] {
				continue
			}
			w := f.net.Channels[c].To
			if bannedNode != nil && bannedNode[w] {
				continue
			}
			if nd := it.d + cost[c]; nd < dist[w] {
				dist[w] = nd
				f.pred[w] = int32(c)
				f.push(pfItem{nd, int32(w)})
			}
		}
	}
	if math.IsInf(dist[t], 1) {
		return path{}, false
	}
	var chans []int
	for v := t; v != s; v = f.net.Channels[f.pred[v]].From {
		chans = append(chans, int(f.pred[v]))
	}
	slices.Reverse(chans)
	return f.makePath(s, chans, cost), true
}

func (f *pathFinder) makePath(s int, chans []int, cost []float64) path {
	p := path{nodes: make([]int, 0, len(chans)+1), chans: chans}
	p.nodes = append(p.nodes, s)
	for _, c := range chans {
		p.cost += cost[c]
		p.nodes = append(p.nodes, f.net.Channels[c].To)
	}
	return p
}

// pathBefore orders paths by cost, then by node sequence.
func pathBefore(a, b *path) bool {
	if a.cost != b.cost {
		return a.cost < b.cost
	}
	return slices.Compare(a.nodes, b.nodes) < 0
}

// kShortest returns up to k loopless paths from s to t in increasing cost
// (Yen, "Finding the k shortest loopless paths in a network", Management
// Science 17, 1971), ties ordered by node sequence so the result is a pure
// function of the inputs. Cost: O(k·N·Dijkstra).
func (f *pathFinder) kShortest(s, t, k int, cost []float64) []path {
	first, ok := f.shortestFrom(s, t, cost, nil, nil)
	if !ok || s == t {
		return nil
	}
	n := f.net.NumNodes()
	A := []path{first}
	var B []path
	bannedNode := make([]bool, n)
	bannedChan := make([]bool, len(f.net.Channels))
	same := func(p *path, q *path) bool { return slices.Equal(p.nodes, q.nodes) }
	for len(A) < k {
		last := A[len(A)-1]
		for i := 0; i < len(last.nodes)-1; i++ {
			spur := last.nodes[i]
			root := last.nodes[:i+1]
			clear(bannedNode)
			clear(bannedChan)
			for j := range A {
				if len(A[j].nodes) > i && slices.Equal(A[j].nodes[:i+1], root) {
					bannedChan[A[j].chans[i]] = true
				}
			}
			for _, v := range root[:i] {
				bannedNode[v] = true
			}
			sp, ok := f.shortestFrom(spur, t, cost, bannedNode, bannedChan)
			if !ok {
				continue
			}
			chans := append(slices.Clone(last.chans[:i]), sp.chans...)
			cand := f.makePath(s, chans, cost)
			dup := false
			for j := range A {
				if same(&A[j], &cand) {
					dup = true
					break
				}
			}
			for j := range B {
				if !dup && same(&B[j], &cand) {
					dup = true
				}
			}
			if !dup {
				B = append(B, cand)
			}
		}
		if len(B) == 0 {
			break
		}
		bi := 0
		for j := 1; j < len(B); j++ {
			if pathBefore(&B[j], &B[bi]) {
				bi = j
			}
		}
		A = append(A, B[bi])
		B = slices.Delete(B, bi, bi+1)
	}
	return A
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
