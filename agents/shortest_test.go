package agents_test

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/graph/path"
	"gonum.org/v1/gonum/graph/simple"

	"hoplore/agents"
	"hoplore/sim"
	"hoplore/topologies"
)

// The deterministic Dijkstra behind link-state routing gives the same
// distances as gonum's graph/path (an independent general-purpose
// implementation) on every bundled topology, for each metric.
func TestShortestDistancesMatchGonum(t *testing.T) {
	for _, info := range topologies.List() {
		g, err := topologies.Generate(info.Name, nil)
		if err != nil {
			t.Fatalf("%s: %v", info.Name, err)
		}
		net := sim.Compile(g)
		metrics := map[string][]float64{"hops": sim.HopWeights(net), "delay": sim.DelayWeights(net), "inverse-capacity": sim.InverseCapacityWeights(net)}
		for _, metric := range []string{"hops", "delay", "inverse-capacity"} {
			w := metrics[metric]
			gg := simple.NewWeightedDirectedGraph(0, math.Inf(1))
			for v := 0; v < net.NumNodes(); v++ {
				gg.AddNode(simple.Node(v))
			}
			for _, c := range net.Channels {
				gg.SetWeightedEdge(gg.NewWeightedEdge(simple.Node(c.From), simple.Node(c.To), w[c.ID]))
			}
			all := path.DijkstraAllPaths(gg)
			var tree sim.PathTree
			for s := 0; s < net.NumNodes(); s++ {
				sim.ShortestFrom(net, s, w, &tree)
				for d := 0; d < net.NumNodes(); d++ {
					want := all.Weight(int64(s), int64(d))
					if got := tree.Dist[d]; math.Abs(got-want) > 1e-9*math.Max(1, want) {
						t.Fatalf("%s/%s: distance %d→%d = %g, gonum says %g", info.Name, metric, s, d, got, want)
					}
				}
			}
		}
	}
}

// Following next hops from any source reaches the destination in exactly
// the shortest hop count, with and without ECMP (loop-free, shortest). The
// leaf-spine with 80 leaves gives each spine 80 neighbours: nodes of degree
// above 64 must route through every neighbour too.
func TestShortestPathNextHopsFollowShortestPaths(t *testing.T) {
	for _, c := range []struct {
		name   string
		params map[string]float64
	}{{"grid", nil}, {"fat-tree", nil}, {"two-region", nil}, {"leaf-spine", map[string]float64{"spines": 2, "leaves": 80, "hosts": 0}}} {
		name := c.name
		g, err := topologies.Generate(name, c.params)
		if err != nil {
			t.Fatal(err)
		}
		net := sim.Compile(g)
		for _, ecmp := range []bool{false, true} {
			p := agents.Defaults(agents.ShortestPathKind)
			p.ECMP = ecmp
			a, err := agents.New(p, net)
			if err != nil {
				t.Fatal(err)
			}
			cfg := &sim.Config{Net: net, Agent: a, Seed: 1, Duration: 30 * sim.Second, Warmup: sim.Second, Bin: sim.Second,
				Traffic: sim.Traffic{Rates: scaled(sim.UniformMatrix(net), 0.02), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 200}}}
			r, err := sim.Run(cfg)
			if err != nil {
				t.Fatal(err)
			}
			if r.Delivered == 0 || r.DroppedTotal() != 0 {
				t.Fatalf("%s ecmp=%v: delivered %d, dropped %d", name, ecmp, r.Delivered, r.DroppedTotal())
			}
			if math.Abs(r.StretchSum/float64(r.Delivered)-1) > 1e-12 {
				t.Errorf("%s ecmp=%v: mean stretch %g, want exactly 1", name, ecmp, r.StretchSum/float64(r.Delivered))
			}
		}
	}
}

// With ECMP on a fat-tree (k=4), traffic between two pods spreads over all
// (k/2)² = 4 core switches (Al-Fares, Loukissas & Vahdat 2008); without it,
// the lowest-index tie-break uses one.
func TestECMPSpreadsOverCores(t *testing.T) {
	g, err := topologies.Generate("fat-tree", nil)
	if err != nil {
		t.Fatal(err)
	}
	net := sim.Compile(g)
	used := func(ecmp bool) int {
		p := agents.Defaults(agents.ShortestPathKind)
		p.ECMP = ecmp
		a, _ := agents.New(p, net)
		m := make([][]float64, net.NumNodes())
		for i := range m {
			m[i] = make([]float64, net.NumNodes())
		}
		// every host to every host: many flows
		for s := 0; s < net.NumNodes(); s++ {
			for d := 0; d < net.NumNodes(); d++ {
				if s != d && len(net.Out[s]) == 1 && len(net.Out[d]) == 1 {
					m[s][d] = 0.5
				}
			}
		}
		cfg := &sim.Config{Net: net, Agent: a, Seed: 2, Duration: 20 * sim.Second, Warmup: sim.Second, Bin: sim.Second,
			Traffic: sim.Traffic{Rates: m, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 200}}}
		r, err := sim.Run(cfg)
		if err != nil {
			t.Fatal(err)
		}
		// channels into nodes of the highest degree class that carry traffic
		busyCores := map[int]bool{}
		for c, ch := range net.Channels {
			if r.Channels[c].Packets > 0 && isCore(net, ch.To) {
				busyCores[ch.To] = true
			}
		}
		return len(busyCores)
	}
	if got := used(true); got != 4 {
		t.Errorf("ECMP used %d core switches, want 4", got)
	}
	if got := used(false); got >= 4 {
		t.Errorf("single-path routing used %d core switches, want fewer than 4", got)
	}
}

// isCore reports whether v is a fat-tree core switch: all its neighbours are
// aggregation switches, which have no host neighbours.
func isCore(net *sim.Net, v int) bool {
	if len(net.Out[v]) < 2 {
		return false
	}
	for _, c := range net.Out[v] {
		w := net.Channels[c].To
		for _, c2 := range net.Out[w] {
			if len(net.Out[net.Channels[c2].To]) == 1 {
				return false // w is an edge switch: v is an aggregation switch
			}
		}
		if len(net.Out[w]) == 1 {
			return false
		}
	}
	return true
}

func scaled(m [][]float64, f float64) [][]float64 {
	for s := range m {
		for d := range m[s] {
			m[s][d] *= f
		}
	}
	return m
}
