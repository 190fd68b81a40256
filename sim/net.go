package sim

import "hoplore/paths"

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

	digraph *paths.Graph
}

// Digraph returns the channels as a compact directed graph for package
// paths: arc c is channel c, and each node's out-arcs come in Out's order,
// so out-slot i of node v is channel Out[v][i].
func (n *Net) Digraph() *paths.Graph { return n.digraph }

// Compile builds the Net for g, which must have passed Validate. Cost: O(N·(N+L)).
func Compile(g *Graph) *Net {
	n := &Net{Graph: g}
	N := len(g.Nodes)
	n.Channels = make([]Channel, 2*len(g.Links))
	tails, heads := make([]int, len(n.Channels)), make([]int, len(n.Channels))
	for i, l := range g.Links {
		n.Channels[2*i] = Channel{ID: 2 * i, Link: i, From: l.A, To: l.B, Bandwidth: l.Bandwidth, Delay: l.Delay, Buffer: l.Buffer}
		n.Channels[2*i+1] = Channel{ID: 2*i + 1, Link: i, From: l.B, To: l.A, Bandwidth: l.Bandwidth, Delay: l.Delay, Buffer: l.Buffer}
		tails[2*i], heads[2*i] = l.A, l.B
		tails[2*i+1], heads[2*i+1] = l.B, l.A
	}
	// the digraph orders each node's arcs by the node at the other end,
	// then by arc (channel) index: the tie-break order of Out and In
	n.digraph = paths.NewGraph(N, tails, heads)
	n.Out = make([][]int, N)
	n.In = make([][]int, N)
	for v := 0; v < N; v++ {
		out, _ := n.digraph.Out(v)
		in, _ := n.digraph.In(v)
		n.Out[v] = make([]int, len(out))
		n.In[v] = make([]int, len(in))
		for i, c := range out {
			n.Out[v][i] = int(c)
		}
		for i, c := range in {
			n.In[v][i] = int(c)
		}
	}
	n.Hops = make([][]int32, N)
	var s paths.Search
	for v := 0; v < N; v++ {
		n.Hops[v] = make([]int32, N)
		s.Hops(n.digraph, v, nil, n.Hops[v])
	}
	return n
}

// NumNodes returns the number of nodes.
func (n *Net) NumNodes() int { return len(n.Out) }

// Name returns node v's name.
func (n *Net) Name(v int) string { return n.Graph.Nodes[v].Name }

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
