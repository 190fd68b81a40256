package topologies

import (
	"errors"
	"fmt"
	"math"
	"os"
	"reflect"
	"strings"
	"testing"

	"gonum.org/v1/gonum/graph/path"
	"gonum.org/v1/gonum/graph/simple"

	"hoplore/sim"
)

func mustGenerate(t testing.TB, name string, params map[string]float64) *sim.Graph {
	t.Helper()
	g, err := Generate(name, params)
	if err != nil {
		t.Fatalf("Generate(%s, %v): %v", name, params, err)
	}
	return g
}

// bfsCount returns hop distances from s and the number of distinct shortest
// paths from s to every node (BFS path counting).
func bfsCount(g *sim.Graph, s int) (dist []int, count []float64) {
	adj := make([][]int, len(g.Nodes))
	for _, l := range g.Links {
		adj[l.A] = append(adj[l.A], l.B)
		adj[l.B] = append(adj[l.B], l.A)
	}
	dist = make([]int, len(g.Nodes))
	count = make([]float64, len(g.Nodes))
	for i := range dist {
		dist[i] = -1
	}
	dist[s], count[s] = 0, 1
	queue := []int{s}
	for len(queue) > 0 {
		v := queue[0]
		queue = queue[1:]
		for _, w := range adj[v] {
			if dist[w] < 0 {
				dist[w] = dist[v] + 1
				queue = append(queue, w)
			}
			if dist[w] == dist[v]+1 {
				count[w] += count[v]
			}
		}
	}
	return dist, count
}

func degrees(g *sim.Graph) []int {
	d := make([]int, len(g.Nodes))
	for _, l := range g.Links {
		d[l.A]++
		d[l.B]++
	}
	return d
}

// Every generator, at defaults and at other settings: valid, connected,
// nodes named n0… in order, deterministic, no parallel links.
func TestGeneratorsBasic(t *testing.T) {
	cases := []struct {
		name   string
		params map[string]float64
	}{
		{"ring", nil}, {"ring", map[string]float64{"nodes": 3}},
		{"grid", nil}, {"grid", map[string]float64{"rows": 1, "cols": 2}},
		{"torus", nil}, {"torus", map[string]float64{"rows": 3, "cols": 5}},
		{"two-region", nil}, {"two-region", map[string]float64{"rows": 4, "cols": 4, "bridges": 4}},
		{"waxman", nil}, {"waxman", map[string]float64{"nodes": 30, "alpha": 0.4, "beta": 0.15, "seed": 7}},
		{"barabasi-albert", nil}, {"barabasi-albert", map[string]float64{"nodes": 2, "m": 1}},
		{"leaf-spine", nil}, {"leaf-spine", map[string]float64{"hosts": 0}},
		{"fat-tree", nil}, {"fat-tree", map[string]float64{"k": 2}}, {"fat-tree", map[string]float64{"k": 6}},
		{"backbone", nil},
	}
	for _, c := range cases {
		t.Run(Label(c.name, c.params), func(t *testing.T) {
			g := mustGenerate(t, c.name, c.params)
			if err := g.Validate(); err != nil {
				t.Fatal(err)
			}
			if got, want := g.Name, Label(c.name, c.params); got != want {
				t.Errorf("Name = %q, want %q", got, want)
			}
			for i, n := range g.Nodes {
				if want := fmt.Sprintf("n%d", i); n.Name != want {
					t.Fatalf("node %d named %q, want %q", i, n.Name, want)
				}
			}
			seen := map[[2]int]bool{}
			for _, l := range g.Links {
				k := [2]int{min(l.A, l.B), max(l.A, l.B)}
				if seen[k] {
					t.Fatalf("parallel links between %d and %d", k[0], k[1])
				}
				seen[k] = true
			}
			if again := mustGenerate(t, c.name, c.params); !reflect.DeepEqual(g, again) {
				t.Errorf("two calls with the same parameters differ")
			}
		})
	}
}

// Seeded generators give different graphs for different seeds.
func TestSeedMatters(t *testing.T) {
	for _, name := range []string{"waxman", "barabasi-albert"} {
		a := mustGenerate(t, name, map[string]float64{"seed": 1})
		b := mustGenerate(t, name, map[string]float64{"seed": 2})
		if reflect.DeepEqual(a.Links, b.Links) {
			t.Errorf("%s: seeds 1 and 2 give the same links", name)
		}
	}
}

// Link counts and diameters of regular meshes (common practice):
// ring n: n links, diameter floor(n/2); a×b grid: a(b−1)+b(a−1) links,
// diameter a+b−2; a×b torus: 2ab links, diameter floor(a/2)+floor(b/2).
func TestMeshCounts(t *testing.T) {
	for _, n := range []int{3, 4, 8, 15} {
		g := mustGenerate(t, "ring", map[string]float64{"nodes": float64(n)})
		if len(g.Links) != n || sim.Compile(g).Diameter() != n/2 {
			t.Errorf("ring %d: got %d links diameter %d, want %d and %d", n, len(g.Links), sim.Compile(g).Diameter(), n, n/2)
		}
	}
	for _, rc := range [][2]int{{1, 2}, {2, 2}, {3, 5}, {4, 4}, {7, 3}} {
		a, b := rc[0], rc[1]
		g := mustGenerate(t, "grid", map[string]float64{"rows": float64(a), "cols": float64(b)})
		gotL, gotD := len(g.Links), sim.Compile(g).Diameter()
		if wantL, wantD := a*(b-1)+b*(a-1), a+b-2; gotL != wantL || gotD != wantD {
			t.Errorf("grid %dx%d: got %d links diameter %d, want %d and %d", a, b, gotL, gotD, wantL, wantD)
		}
	}
	for _, rc := range [][2]int{{3, 3}, {3, 4}, {4, 4}, {5, 6}, {6, 3}} {
		a, b := rc[0], rc[1]
		g := mustGenerate(t, "torus", map[string]float64{"rows": float64(a), "cols": float64(b)})
		gotL, gotD := len(g.Links), sim.Compile(g).Diameter()
		if wantL, wantD := 2*a*b, a/2+b/2; gotL != wantL || gotD != wantD {
			t.Errorf("torus %dx%d: got %d links diameter %d, want %d and %d", a, b, gotL, gotD, wantL, wantD)
		}
		for v, d := range degrees(g) {
			if d != 4 {
				t.Fatalf("torus %dx%d: node %d has degree %d, want 4", a, b, v, d)
			}
		}
	}
}

// Fat-tree (Al-Fares, Loukissas & Vahdat, "A scalable, commodity data
// center network architecture", SIGCOMM 2008): 5k²/4 k-port switches,
// k³/4 hosts, 3k³/4 links; hosts in different pods have (k/2)² equal-cost
// shortest paths, hosts in the same pod under different edge switches k/2.
// Hosts are found as the degree-1 nodes and pods by distance, so the check
// does not depend on the generator's numbering.
func TestFatTree(t *testing.T) {
	for _, k := range []int{2, 4, 6, 8} {
		t.Run(fmt.Sprintf("k=%d", k), func(t *testing.T) {
			g := mustGenerate(t, "fat-tree", map[string]float64{"k": float64(k)})
			var hosts []int
			switches := 0
			for v, d := range degrees(g) {
				switch d {
				case 1:
					hosts = append(hosts, v)
				case k:
					switches++
				default:
					t.Fatalf("node %d has degree %d; want 1 (host) or %d (switch)", v, d, k)
				}
			}
			if got, want := switches, 5*k*k/4; got != want {
				t.Errorf("switches = %d, want %d", got, want)
			}
			if got, want := len(hosts), k*k*k/4; got != want {
				t.Errorf("hosts = %d, want %d", got, want)
			}
			if got, want := len(g.Links), 3*k*k*k/4; got != want {
				t.Errorf("links = %d, want %d", got, want)
			}
			wantPaths := map[int]float64{2: 1, 4: float64(k / 2), 6: float64(k * k / 4)}
			pairs := map[int]int{}
			for _, s := range hosts {
				dist, count := bfsCount(g, s)
				for _, d := range hosts {
					if d == s {
						continue
					}
					want, ok := wantPaths[dist[d]]
					if !ok {
						t.Fatalf("hosts %d and %d are %d hops apart; want 2, 4 or 6", s, d, dist[d])
					}
					if count[d] != want {
						t.Fatalf("hosts %d and %d (%d hops): %g shortest paths, want %g", s, d, dist[d], count[d], want)
					}
					pairs[dist[d]]++
				}
			}
			// Ordered pairs in different pods: each host sees the k³/4 − k²/4 hosts of other pods.
			if got, want := pairs[6], len(hosts)*(k*k*k/4-k*k/4); got != want {
				t.Errorf("ordered host pairs in different pods = %d, want %d", got, want)
			}
		})
	}
}

// Leaf-spine (2-tier folded Clos, from memory): S·L uplinks plus L·h host
// links; hosts under different leaves have S equal-cost shortest paths.
func TestLeafSpine(t *testing.T) {
	for _, c := range [][3]int{{2, 4, 4}, {3, 5, 2}, {4, 2, 1}} {
		s, l, h := c[0], c[1], c[2]
		g := mustGenerate(t, "leaf-spine", map[string]float64{"spines": float64(s), "leaves": float64(l), "hosts": float64(h)})
		if got, want := len(g.Links), s*l+l*h; got != want {
			t.Errorf("%v: links = %d, want %d", c, got, want)
		}
		var hosts []int
		for v, d := range degrees(g) {
			if d == 1 {
				hosts = append(hosts, v)
			}
		}
		if len(hosts) != l*h {
			t.Fatalf("%v: %d hosts, want %d", c, len(hosts), l*h)
		}
		for _, a := range hosts {
			dist, count := bfsCount(g, a)
			for _, b := range hosts {
				if dist[b] == 4 && count[b] != float64(s) {
					t.Fatalf("%v: hosts %d and %d: %g shortest paths, want %d", c, a, b, count[b], s)
				}
			}
		}
	}
}

// Two-region: the only links between the two regions are the bridges, and
// under hop-count shortest paths with lowest-index tie-break (the routing
// that defines load 1.0) and traffic between every ordered pair, the busiest
// channel is a bridge: the bottleneck the topology exists for.
func TestTwoRegionBottleneck(t *testing.T) {
	for _, p := range []map[string]float64{nil, {"rows": 4, "cols": 4, "bridges": 1}, {"rows": 8, "cols": 5, "bridges": 3}} {
		g := mustGenerate(t, "two-region", p)
		half := len(g.Nodes) / 2
		bridges := map[int]bool{}
		for i, l := range g.Links {
			if (l.A < half) != (l.B < half) {
				bridges[i] = true
			}
		}
		want := 2
		if p != nil {
			want = int(p["bridges"])
		}
		if len(bridges) != want {
			t.Fatalf("%s: %d links cross between regions, want %d", g.Name, len(bridges), want)
		}
		net := sim.Compile(g)
		use := make([]int, len(net.Channels))
		for s := range g.Nodes {
			for d := range g.Nodes {
				for v := s; v != d; {
					for _, c := range net.Out[v] {
						w := net.Channels[c].To
						if net.Hops[w][d] == net.Hops[v][d]-1 {
							use[c]++
							v = w
							break
						}
					}
				}
			}
		}
		busiest := 0
		for c := range use {
			if use[c] > use[busiest] {
				busiest = c
			}
		}
		if !bridges[net.Channels[busiest].Link] {
			t.Errorf("%s: busiest channel %d (%d paths) is not a bridge", g.Name, busiest, use[busiest])
		}
	}
}

// Backbone: every site has latitude/longitude, delays come from great-circle
// distance at 2e8 m/s, capacities are mixed, and the sites span a continent
// (between 1000 and 5000 km apart at most: common practice).
func TestBackbone(t *testing.T) {
	g := mustGenerate(t, "backbone", nil)
	bws := map[float64]bool{}
	for _, l := range g.Links {
		a, b := g.Nodes[l.A], g.Nodes[l.B]
		want, ok := sim.PropagationDelay(a, b)
		if !ok || l.Delay != want {
			t.Errorf("link %s-%s: delay %v, want %v from coordinates", a.Name, b.Name, l.Delay, want)
		}
		bws[l.Bandwidth] = true
	}
	if len(bws) < 2 {
		t.Errorf("capacities not mixed: %v", bws)
	}
	span := 0.0
	for _, a := range g.Nodes {
		if a.Coord != sim.Geo {
			t.Fatalf("node %s has no lat/lon", a.Name)
		}
		for _, b := range g.Nodes {
			d, _ := sim.Distance(a, b)
			span = math.Max(span, d/1000)
		}
	}
	if span < 1000 || span > 5000 {
		t.Errorf("largest distance between sites %.0f km, want a continental 1000–5000 km", span)
	}
}

// Hop distances of every bundled topology agree with gonum's Dijkstra on
// unit weights (gonum graph/path, an independent general-purpose library).
func TestHopsAgainstGonum(t *testing.T) {
	for _, in := range List() {
		g := mustGenerate(t, in.Name, nil)
		u := simple.NewWeightedUndirectedGraph(0, math.Inf(1))
		for i := range g.Nodes {
			u.AddNode(simple.Node(i))
		}
		for _, l := range g.Links {
			u.SetWeightedEdge(u.NewWeightedEdge(simple.Node(l.A), simple.Node(l.B), 1))
		}
		all := path.DijkstraAllPaths(u)
		net := sim.Compile(g)
		for s := range g.Nodes {
			for d := range g.Nodes {
				if w := all.Weight(int64(s), int64(d)); w != float64(net.Hops[s][d]) {
					t.Fatalf("%s: %d→%d: gonum %g hops, sim %d", in.Name, s, d, w, net.Hops[s][d])
				}
			}
		}
	}
}

func TestListAndLabel(t *testing.T) {
	want := []string{"ring", "grid", "torus", "two-region", "waxman", "barabasi-albert", "leaf-spine", "fat-tree", "backbone"}
	var got []string
	for _, in := range List() {
		got = append(got, in.Name)
		if in.Doc == "" {
			t.Errorf("%s has no doc", in.Name)
		}
		for _, p := range in.Params {
			if p.Doc == "" {
				t.Errorf("%s.%s has no doc", in.Name, p.Name)
			}
			if p.Integer && p.Default != math.Trunc(p.Default) {
				t.Errorf("%s.%s: integer parameter with default %g", in.Name, p.Name, p.Default)
			}
		}
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("List() = %v, want %v", got, want)
	}
	for _, c := range []struct {
		name   string
		params map[string]float64
		want   string
	}{
		{"ring", nil, "ring"},
		{"ring", map[string]float64{"nodes": 8}, "ring"},
		{"ring", map[string]float64{"nodes": 12}, "ring(nodes=12)"},
		{"waxman", map[string]float64{"seed": 7, "beta": 0.15, "nodes": 30, "alpha": 0.4}, "waxman(nodes=30,alpha=0.4,beta=0.15,seed=7)"},
		{"waxman", map[string]float64{"seed": 7, "alpha": 0.3}, "waxman(seed=7)"},
		{"fat-tree", map[string]float64{"k": 6, "bandwidth_mbps": 100}, "fat-tree(k=6,bandwidth_mbps=100)"},
		{"ring", map[string]float64{"zz": 1, "nodes": 9, "aa": 2}, "ring(nodes=9,aa=2,zz=1)"},
	} {
		if got := Label(c.name, c.params); got != c.want {
			t.Errorf("Label(%s, %v) = %q, want %q", c.name, c.params, got, c.want)
		}
	}
}

func TestGenerateErrors(t *testing.T) {
	cases := []struct {
		name   string
		params map[string]float64
		param  string // "" for a plain error
		want   string
	}{
		{"hexagon", nil, "", `topologies: unknown topology "hexagon" (known: ring, grid, torus, two-region, waxman, barabasi-albert, leaf-spine, fat-tree, backbone)`},
		{"ring", map[string]float64{"nodez": 3}, "nodez", "topologies: nodez: unknown parameter of ring (known: nodes, bandwidth_mbps, delay_ms, buffer)"},
		{"ring", map[string]float64{"nodes": 2}, "nodes", "topologies: nodes: must be at least 3, got 2"},
		{"ring", map[string]float64{"nodes": 4.5}, "nodes", "topologies: nodes: must be a whole number, got 4.5"},
		{"ring", map[string]float64{"bandwidth_mbps": 0}, "bandwidth_mbps", "topologies: bandwidth_mbps: must be at least 1e-06, got 0"},
		{"ring", map[string]float64{"delay_ms": math.NaN()}, "delay_ms", "topologies: delay_ms: must be a finite number, got NaN"},
		{"grid", map[string]float64{"rows": 1, "cols": 1}, "rows", "topologies: rows: a grid needs at least two nodes (rows × cols ≥ 2)"},
		{"torus", map[string]float64{"rows": 2}, "rows", "topologies: rows: must be at least 3, got 2"},
		{"two-region", map[string]float64{"bridges": 7}, "bridges", "topologies: bridges: at most rows (6) bridges fit, got 7"},
		{"waxman", map[string]float64{"beta": 1.5}, "beta", "topologies: beta: must be at most 1, got 1.5"},
		{"waxman", map[string]float64{"seed": 1 << 54}, "seed", "topologies: seed: must be at most 9007199254740992, got 18014398509481984"},
		{"waxman", map[string]float64{"seed": -1}, "seed", "topologies: seed: must be at least 0, got -1"},
		{"waxman", map[string]float64{"nodes": 40, "alpha": 0.01, "beta": 0.01}, "", "topologies: no connected waxman graph with nodes=40 alpha=0.01 beta=0.01 in 10000 draws; raise alpha or beta"},
		{"barabasi-albert", map[string]float64{"nodes": 5, "m": 5}, "m", "topologies: m: must be less than nodes (5), got 5"},
		{"fat-tree", map[string]float64{"k": 5}, "k", "topologies: k: must be even, got 5"},
		{"fat-tree", map[string]float64{"k": 200}, "k", "topologies: k: the topology would have 2050000 nodes; at most 1000000 are allowed"},
		{"grid", map[string]float64{"rows": 2000, "cols": 501}, "rows", "topologies: rows: the topology would have 1002000 nodes; at most 1000000 are allowed"},
		{"leaf-spine", map[string]float64{"leaves": 1000, "hosts": 1000}, "hosts", "topologies: hosts: the topology would have 1001002 nodes; at most 1000000 are allowed"},
		{"backbone", map[string]float64{"buffer": -1}, "buffer", "topologies: buffer: must be at least 0, got -1"},
	}
	for _, c := range cases {
		_, err := Generate(c.name, c.params)
		if err == nil {
			t.Errorf("Generate(%s, %v): no error, want %q", c.name, c.params, c.want)
			continue
		}
		if err.Error() != c.want {
			t.Errorf("Generate(%s, %v):\n got %q\nwant %q", c.name, c.params, err, c.want)
		}
		var pe *ParamError
		if got := errors.As(err, &pe); got != (c.param != "") || (got && pe.Param != c.param) {
			t.Errorf("Generate(%s, %v): error %T %v, want ParamError for %q", c.name, c.params, err, err, c.param)
		}
		if !strings.HasPrefix(err.Error(), "topologies: ") {
			t.Errorf("error %q lacks the package prefix", err)
		}
	}
}

func BenchmarkGenerate(b *testing.B) {
	for _, c := range []struct {
		name   string
		params map[string]float64
	}{
		{"waxman", map[string]float64{"nodes": 20}},
		{"waxman", map[string]float64{"nodes": 100, "alpha": 0.15, "beta": 0.4}},
		{"barabasi-albert", map[string]float64{"nodes": 1000}},
		{"fat-tree", map[string]float64{"k": 8}},
		{"backbone", nil},
	} {
		b.Run(Label(c.name, c.params), func(b *testing.B) {
			b.ReportAllocs()
			nodes := 0
			for b.Loop() {
				g, err := Generate(c.name, c.params)
				if err != nil {
					b.Fatal(err)
				}
				nodes += len(g.Nodes)
			}
			b.ReportMetric(float64(nodes)/b.Elapsed().Seconds(), "nodes/s")
		})
	}
}

// The table of defaults in doc.go (copied into the README) says what
// Generate builds.
func TestDocTable(t *testing.T) {
	doc, err := os.ReadFile("doc.go")
	if err != nil {
		t.Fatal(err)
	}
	rows := 0
	for _, line := range strings.Split(string(doc), "\n") {
		if !strings.HasPrefix(line, "//\t") {
			continue
		}
		f := strings.Fields(strings.TrimPrefix(line, "//"))
		if len(f) < 4 {
			continue
		}
		if _, ok := lookup(f[0]); !ok {
			continue
		}
		rows++
		g := mustGenerate(t, f[0], nil)
		got := fmt.Sprintf("%d %d %d", len(g.Nodes), len(g.Links), sim.Compile(g).Diameter())
		if want := strings.Join(f[len(f)-3:], " "); got != want {
			t.Errorf("doc.go says %s has nodes, links, diameter %s; Generate gives %s", f[0], want, got)
		}
		for _, kv := range f[1 : len(f)-3] {
			k, v, _ := strings.Cut(kv, "=")
			for _, in := range List() {
				if in.Name != f[0] {
					continue
				}
				found := false
				for _, p := range in.Params {
					if p.Name == k {
						found = true
						if fmtNum(p.Default) != v {
							t.Errorf("doc.go says %s default %s=%s; List says %g", f[0], k, v, p.Default)
						}
					}
				}
				if !found {
					t.Errorf("doc.go names parameter %s of %s, which does not exist", k, f[0])
				}
			}
		}
	}
	if rows != len(generators) {
		t.Errorf("doc.go table has %d rows, want %d", rows, len(generators))
	}
}
