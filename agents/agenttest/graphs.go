package agenttest

import (
	"fmt"

	"hoplore/sim"
)

// Link settings of the hand-built test graphs: 1 Mbit/s, 1 ms, 50 waiting
// packets, so that a 1000-byte packet takes 8 ms to transmit.
const (
	Bandwidth  = 1e6
	Delay      = sim.Millisecond
	Buffer     = 50
	PacketSize = 1000
)

func newGraph(name string, n int) *sim.Graph {
	g := &sim.Graph{Name: name, Nodes: make([]sim.Node, n)}
	for i := range g.Nodes {
		g.Nodes[i].Name = fmt.Sprintf("n%d", i)
	}
	return g
}

func addLink(g *sim.Graph, a, b int) {
	g.Links = append(g.Links, sim.Link{A: a, B: b, Bandwidth: Bandwidth, Delay: Delay, Buffer: Buffer})
}

// Line returns the path n0 – n1 – … – n(n−1).
func Line(n int) *sim.Graph {
	g := newGraph(fmt.Sprintf("line-%d", n), n)
	for i := 0; i+1 < n; i++ {
		addLink(g, i, i+1)
	}
	return g
}

// Ring returns the cycle on n nodes.
func Ring(n int) *sim.Graph {
	g := newGraph(fmt.Sprintf("ring-%d", n), n)
	for i := 0; i < n; i++ {
		addLink(g, i, (i+1)%n)
	}
	return g
}

// Grid returns the rows × cols grid, node r·cols+c.
func Grid(rows, cols int) *sim.Graph {
	g := newGraph(fmt.Sprintf("grid-%dx%d", rows, cols), rows*cols)
	for r := 0; r < rows; r++ {
		for c := 0; c < cols; c++ {
			v := r*cols + c
			if c+1 < cols {
				addLink(g, v, v+1)
			}
			if r+1 < rows {
				addLink(g, v, v+cols)
			}
		}
	}
	return g
}

// BoyanLittmanGrid returns the irregular 6×6 grid of Boyan & Littman
// (NIPS 6, 1994) as reconstructed from the paper's figure: node 6r+c; rows
// 0–2 form two separate 3×3 grids (columns 0–2 and 3–5); six vertical links
// join rows 2 and 3; row 3 is a full path; row 4 has links 25–26 and 27–28
// and verticals to row 3 at every column; row 5 is a full path attached only
// at 24–30 and 29–35. Traffic between the halves crosses the central bridge
// 20–21 or the upper bridge 32–33. 50 links.
func BoyanLittmanGrid() *sim.Graph {
	g := newGraph("boyan-littman-6x6", 36)
	id := func(r, c int) int { return 6*r + c }
	for r := 0; r <= 2; r++ {
		for c := 0; c < 6; c++ {
			if c != 2 && c+1 < 6 {
				addLink(g, id(r, c), id(r, c+1))
			}
			if r < 2 {
				addLink(g, id(r, c), id(r+1, c))
			}
		}
	}
	for c := 0; c < 6; c++ {
		addLink(g, id(2, c), id(3, c))
	}
	for c := 0; c+1 < 6; c++ {
		addLink(g, id(3, c), id(3, c+1))
	}
	for c := 0; c < 6; c++ {
		addLink(g, id(3, c), id(4, c))
	}
	addLink(g, 25, 26)
	addLink(g, 27, 28)
	for c := 0; c+1 < 6; c++ {
		addLink(g, id(5, c), id(5, c+1))
	}
	addLink(g, 24, 30)
	addLink(g, 29, 35)
	return g
}

// UniformRates returns a uniform traffic matrix scaled to the normalised
// load the README defines (The model): under hop-count shortest paths with the lowest-index
// tie-break on the intact graph, the busiest channel is exactly at
// utilisation load for packets of size bytes.
func UniformRates(net *sim.Net, load float64, bytes int) [][]float64 {
	N := net.NumNodes()
	w := sim.HopWeights(net)
	trees := make([]sim.PathTree, N)
	for u := 0; u < N; u++ {
		sim.ShortestFrom(net, u, w, &trees[u])
	}
	perChan := make([]float64, len(net.Channels)) // packets/s per unit pair rate
	for s := 0; s < N; s++ {
		for d := 0; d < N; d++ {
			if s == d {
				continue
			}
			for u := s; u != d; {
				c := trees[u].NextHop(net, u, d)
				perChan[c]++
				u = net.Channels[c].To
			}
		}
	}
	maxU := 0.0
	for c, k := range perChan {
		if u := k * float64(bytes) * 8 / net.Channels[c].Bandwidth; u > maxU {
			maxU = u
		}
	}
	rate := load / maxU
	rates := make([][]float64, N)
	for s := range rates {
		rates[s] = make([]float64, N)
		for d := range rates[s] {
			if s != d {
				rates[s][d] = rate
			}
		}
	}
	return rates
}

// Scenario is a run's description in the tests' terms.
type Scenario struct {
	Graph    *sim.Graph
	Load     float64
	Duration sim.Time
	Warmup   sim.Time
	Seed     uint64
	Failures sim.Failures
	// ControlDelay for central agents.
	ControlDelay sim.Time
}

// Config builds the run configuration of s with agent a on net.
func (s Scenario) Config(net *sim.Net, a sim.Agent) *sim.Config {
	return &sim.Config{
		Net:          net,
		Duration:     s.Duration,
		Warmup:       s.Warmup,
		Bin:          sim.Second,
		Traffic:      sim.Traffic{Rates: UniformRates(net, s.Load, PacketSize), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: PacketSize}},
		Failures:     s.Failures,
		Agent:        a,
		ControlDelay: s.ControlDelay,
		Seed:         s.Seed,
		AgentSeed:    s.Seed + 1,
	}
}

// TwoClusters returns two 3×3 grids joined by a direct bridge and by a
// three-hop bypass of the same capacity: the bottleneck case of a network
// with one cheap crossing and a longer alternative. Nodes 0–8 are the left
// grid and 9–17 the right one (node base+3r+c at row r, column c), 18 and 19
// the bypass relays. The bridge joins the middles of the facing sides,
// n5–n12; the bypass runs from the left grid's top-right corner to the right
// grid's top-left corner, n2–n18–n19–n9. Hop-count shortest paths send every
// crossing pair over the bridge except the few for which the bypass is
// shorter, so under normalised load the bridge is the busiest channel.
func TwoClusters() *sim.Graph {
	g := newGraph("two-clusters", 20)
	for base := 0; base <= 9; base += 9 {
		for r := 0; r < 3; r++ {
			for c := 0; c < 3; c++ {
				v := base + 3*r + c
				if c+1 < 3 {
					addLink(g, v, v+1)
				}
				if r+1 < 3 {
					addLink(g, v, v+3)
				}
			}
		}
	}
	addLink(g, 5, 12)
	addLink(g, 2, 18)
	addLink(g, 18, 19)
	addLink(g, 19, 9)
	return g
}
