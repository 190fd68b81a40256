package sim

import "sort"

// Channel is one direction of a link: the static facts every agent may know.
type Channel struct {
	ID        int     // index in Net.Channels; link i has channels 2i (A→B) and 2i+1 (B→A)
	Link      int     // index in Graph.Links
	From, To  int     // node indices
	Bandwidth float64 // bit/s
	Delay     Time    // propagation delay
	Buffer    int     // waiting packets the output queue holds
}

// Reverse returns the ID of the channel running the other way on the same link.
func (c *Channel) Reverse() int { return c.ID ^ 1 }

// Net is a Graph compiled for routing: directed channels and adjacency lists.
// It is immutable once built and may be shared between runs.
type Net struct {
	Graph    *Graph
	Channels []Channel
	// Out[n] lists the channels leaving node n, ordered by the index of the
	// node they lead to (then by channel ID): this order is the tie-break
	// order used by every deterministic choice in hoplore.
	Out [][]int
	// In[n] lists the channels entering node n, in the same order by source.
	In [][]int
	// Hops[s][d] is the hop count of the shortest path on the intact graph.
	Hops [][]int32
}

// Compile builds the Net for g, which must have passed Validate. Cost: O(N·(N+L)).
func Compile(g *Graph) *Net {
	n := &Net{Graph: g}
	N := len(g.Nodes)
	n.Channels = make([]Channel, 2*len(g.Links))
	n.Out = make([][]int, N)
	n.In = make([][]int, N)
	for i, l := range g.Links {
		n.Channels[2*i] = Channel{ID: 2 * i, Link: i, From: l.A, To: l.B, Bandwidth: l.Bandwidth, Delay: l.Delay, Buffer: l.Buffer}
		n.Channels[2*i+1] = Channel{ID: 2*i + 1, Link: i, From: l.B, To: l.A, Bandwidth: l.Bandwidth, Delay: l.Delay, Buffer: l.Buffer}
		n.Out[l.A] = append(n.Out[l.A], 2*i)
		n.Out[l.B] = append(n.Out[l.B], 2*i+1)
		n.In[l.B] = append(n.In[l.B], 2*i)
		n.In[l.A] = append(n.In[l.A], 2*i+1)
	}
	for v := 0; v < N; v++ {
		out, in := n.Out[v], n.In[v]
		sort.Slice(out, func(i, j int) bool {
			a, b := n.Channels[out[i]], n.Channels[out[j]]
			if a.To != b.To {
				return a.To < b.To
			}
			return a.ID < b.ID
		})
		sort.Slice(in, func(i, j int) bool {
			a, b := n.Channels[in[i]], n.Channels[in[j]]
			if a.From != b.From {
				return a.From < b.From
			}
			return a.ID < b.ID
		})
	}
	n.Hops = make([][]int32, N)
	for s := 0; s < N; s++ {
		n.Hops[s] = n.bfs(s)
	}
	return n
}

// NumNodes returns the number of nodes.
func (n *Net) NumNodes() int { return len(n.Out) }

// Name returns node v's name.
func (n *Net) Name(v int) string { return n.Graph.Nodes[v].Name }

func (n *Net) bfs(s int) []int32 {
	d := make([]int32, len(n.Out))
	for i := range d {
		d[i] = -1
	}
	d[s] = 0
	q := []int{s}
	for len(q) > 0 {
		v := q[0]
		q = q[1:]
		for _, c := range n.Out[v] {
			w := n.Channels[c].To
			if d[w] < 0 {
				d[w] = d[v] + 1
				q = append(q, w)
			}
		}
	}
	return d
}

// Diameter returns the largest hop count between two nodes of the intact graph.
func (n *Net) Diameter() int {
	m := int32(0)
	for _, row := range n.Hops {
		for _, h := range row {
			if h > m {
				m = h
			}
		}
	}
	return int(m)
}
