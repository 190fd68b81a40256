package agents

import (
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"testing"

	gpath "gonum.org/v1/gonum/graph/path"
	"gonum.org/v1/gonum/graph/simple"
	"gonum.org/v1/gonum/mat"

	"hoplore/sim"
)

func testGraph(name string, n int, links [][2]int, bw func(i int) float64) *sim.Graph {
	g := &sim.Graph{Name: name, Nodes: make([]sim.Node, n)}
	for i := range g.Nodes {
		g.Nodes[i].Name = fmt.Sprintf("n%d", i)
	}
	for i, l := range links {
		g.Links = append(g.Links, sim.Link{A: l[0], B: l[1], Bandwidth: bw(i), Delay: sim.Millisecond, Buffer: 50})
	}
	return g
}

func gridLinks(rows, cols int) [][2]int {
	var ls [][2]int
	for r := 0; r < rows; r++ {
		for c := 0; c < cols; c++ {
			v := r*cols + c
			if c+1 < cols {
				ls = append(ls, [2]int{v, v + 1})
			}
			if r+1 < rows {
				ls = append(ls, [2]int{v, v + cols})
			}
		}
	}
	return ls
}

func ringLinks(n int) [][2]int {
	var ls [][2]int
	for i := 0; i < n; i++ {
		ls = append(ls, [2]int{i, (i + 1) % n})
	}
	return ls
}

func pathLinks(n int) [][2]int {
	var ls [][2]int
	for i := 0; i+1 < n; i++ {
		ls = append(ls, [2]int{i, i + 1})
	}
	return ls
}

// TestKShortestMatchesGonum checks the deterministic Yen implementation
// against gonum's graph/path.YenKShortestPaths (a general reference
// library): the k path costs must agree, and every path must be loopless
// and joined by existing channels.
func TestKShortestMatchesGonum(t *testing.T) {
	g := testGraph("grid", 16, gridLinks(4, 4), func(i int) float64 { return []float64{1e6, 2e6, 5e5}[i%3] })
	net := sim.Compile(g)
	cost := zeroLoadCosts(net, AssumedPacketBytes)
	wg := simple.NewWeightedDirectedGraph(0, math.Inf(1))
	for c, ch := range net.Channels {
		wg.SetWeightedEdge(wg.NewWeightedEdge(simple.Node(ch.From), simple.Node(ch.To), cost[c]))
	}
	f := newPathFinder(net)
	for _, pair := range [][2]int{{0, 15}, {3, 12}, {5, 10}, {0, 1}, {6, 9}} {
		for _, k := range []int{1, 3, 6} {
			got := f.kShortest(pair[0], pair[1], k, cost)
			ref := gpath.YenKShortestPaths(wg, k, math.Inf(1), simple.Node(pair[0]), simple.Node(pair[1]))
			var want []float64
			for _, p := range ref {
				w := 0.0
				for i := 0; i+1 < len(p); i++ {
					w += wg.WeightedEdge(p[i].ID(), p[i+1].ID()).Weight()
				}
				want = append(want, w)
			}
			slices.Sort(want)
			if len(got) != len(want) {
				t.Fatalf("%v k=%d: got %d paths, gonum %d", pair, k, len(got), len(want))
			}
			for i := range got {
				if math.Abs(got[i].cost-want[i]) > 1e-12 {
					t.Errorf("%v k=%d path %d: cost %.9f, gonum %.9f", pair, k, i, got[i].cost, want[i])
				}
				seen := map[int]bool{}
				for j, v := range got[i].nodes {
					if seen[v] {
						t.Errorf("%v path %d revisits node %d", pair, i, v)
					}
					seen[v] = true
					if j > 0 && net.Channels[got[i].chans[j-1]].To != v {
						t.Errorf("%v path %d: channel %d does not reach node %d", pair, i, got[i].chans[j-1], v)
					}
				}
			}
			// deterministic: the same answer again
			again := f.kShortest(pair[0], pair[1], k, cost)
			for i := range got {
				if !slices.Equal(got[i].nodes, again[i].nodes) {
					t.Errorf("%v k=%d: second call gave another path %d", pair, k, i)
				}
			}
		}
	}
}

// metropolisRate returns ρ(W − 11ᵀ/n) for the Metropolis weights scaled by w,
// W' = I − w(I − W), computed with gonum's mat.Eigen.
func metropolisRate(t *testing.T, net *sim.Net, w float64) float64 {
	n := net.NumNodes()
	W := mat.NewDense(n, n, nil)
	for x := 0; x < n; x++ {
		sum := 0.0
		for _, c := range net.Out[x] {
			y := net.Channels[c].To
			a := w * metropolisWeight(neighbourCount(net, x), neighbourCount(net, y))
			W.Set(x, y, a)
			sum += a
		}
		W.Set(x, x, 1-sum)
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			W.Set(i, j, W.At(i, j)-1/float64(n))
		}
	}
	var eig mat.Eigen
	if !eig.Factorize(W, mat.EigenNone) {
		t.Fatal("eigen decomposition failed")
	}
	r := 0.0
	for _, v := range eig.Values(nil) {
		r = math.Max(r, cmplx.Abs(v))
	}
	return r
}

// consensusState runs q-network consensus alone (no traffic) for the given
// number of rounds and returns every node's parameters.
func consensusParams(t *testing.T, g *sim.Graph, weight float64, rounds int) [][]float64 {
	net := sim.Compile(g)
	p := Defaults(QNetworkKind)
	p.Hidden = []int{4}
	p.Consensus = &Consensus{Every: sim.Second, Weight: weight}
	a := newQNetworkOpt(p, net, false)
	cfg := &sim.Config{Net: net, Duration: sim.Time(rounds)*sim.Second + sim.Second/2, Bin: sim.Second,
		Traffic: sim.Traffic{Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}, Agent: a, Seed: 1, AgentSeed: 2}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	if r.ControlDropped != 0 {
		t.Fatalf("%d consensus messages lost", r.ControlDropped)
	}
	out := make([][]float64, len(a.nodes))
	for i, nd := range a.nodes {
		out[i] = nd.theta
	}
	return out
}

func disagreement(th [][]float64) (dev float64, mean []float64) {
	mean = make([]float64, len(th[0]))
	for _, v := range th {
		for i, x := range v {
			mean[i] += x / float64(len(th))
		}
	}
	for _, v := range th {
		for i, x := range v {
			dev += (x - mean[i]) * (x - mean[i])
		}
	}
	return math.Sqrt(dev), mean
}

// TestConsensusMetropolisRate checks that q-network parameter consensus is
// Metropolis averaging: it preserves the mean and shrinks disagreement per
// round at the rate ρ(W − 11ᵀ/n) (Xiao & Boyd, "Fast linear iterations for
// distributed averaging", Systems & Control Letters 53, 2004; weights of
// Xiao, Boyd & Lall 2005). Reference values, by hand from the two 4×4
// weight matrices: ring C4 1/3, path P4 0.8047; with weight 0.5 on C4,
// 1 − 0.5(1 − λ) gives 2/3.
func TestConsensusMetropolisRate(t *testing.T) {
	bw := func(int) float64 { return 1e9 }
	cases := []struct {
		name   string
		g      *sim.Graph
		weight float64
		want   float64
		k1, k2 int
	}{
		{"C4", testGraph("c4", 4, ringLinks(4), bw), 1, 1.0 / 3, 2, 6},
		{"C4/w=0.5", testGraph("c4", 4, ringLinks(4), bw), 0.5, 2.0 / 3, 3, 10},
		{"P4", testGraph("p4", 4, pathLinks(4), bw), 1, 0.8047, 8, 24},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			r := metropolisRate(t, sim.Compile(tc.g), tc.weight)
			if math.Abs(r-tc.want) > 5e-4 {
				t.Fatalf("ρ(W − 11ᵀ/n) = %.4f, want %.4f", r, tc.want)
			}
			d0, m0 := disagreement(consensusParams(t, tc.g, tc.weight, 0))
			d1, _ := disagreement(consensusParams(t, tc.g, tc.weight, tc.k1))
			d2, m2 := disagreement(consensusParams(t, tc.g, tc.weight, tc.k2))
			rate := math.Pow(d2/d1, 1/float64(tc.k2-tc.k1))
			t.Logf("ρ = %.4f (gonum Eigen), measured %.4f per round; disagreement %.3g → %.3g → %.3g", r, rate, d0, d1, d2)
			// exact linear iteration: only floating-point error and the
			// transient of faster modes ((λ3/λ2)^k1 ≤ 1e-3 here) remain
			if math.Abs(rate-r) > 0.01*r {
				t.Errorf("measured rate %.4f per round (disagreement %.3g → %.3g → %.3g), want ρ = %.4f", rate, d0, d1, d2, r)
			}
			for i := range m0 {
				if math.Abs(m2[i]-m0[i]) > 1e-9*(1+math.Abs(m0[i])) {
					t.Fatalf("parameter %d: mean %.12f after consensus, %.12f before", i, m2[i], m0[i])
				}
			}
		})
	}
}

// TestConsensusControlBytes checks that consensus control traffic is counted
// as messages × size: every round each node sends one message per channel.
func TestConsensusControlBytes(t *testing.T) {
	g := testGraph("ring5", 5, ringLinks(5), func(int) float64 { return 1e7 })
	net := sim.Compile(g)
	const rounds = 10
	qr := Defaults(QRoutingKind)
	qr.Consensus = &Consensus{Every: sim.Second, Weight: 0.5}
	qn := Defaults(QNetworkKind)
	qn.Consensus = &Consensus{Every: sim.Second, Weight: 0.5}
	for _, p := range []Params{qr, qn} {
		a, err := New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		cfg := &sim.Config{Net: net, Duration: rounds*sim.Second + sim.Second/2, Bin: sim.Second,
			Traffic: sim.Traffic{Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}, Agent: a, Seed: 1, AgentSeed: 2}
		r, err := sim.Run(cfg)
		if err != nil {
			t.Fatal(err)
		}
		size := ValuesMessageBytes(5)
		if p.Kind == QNetworkKind {
			size = ParamsMessageBytes(a.(*QNetwork).shared.nParam)
		}
		wantMsgs := int64(rounds * len(net.Channels))
		if r.ControlPackets != wantMsgs {
			t.Errorf("%s: %d control packets, want %d rounds × %d channels = %d", p.Kind, r.ControlPackets, rounds, len(net.Channels), wantMsgs)
		}
		if r.ControlBytes != wantMsgs*int64(size) {
			t.Errorf("%s: %d control bytes, want %d × %d", p.Kind, r.ControlBytes, wantMsgs, size)
		}
	}
}

// TestFastTanh bounds the network's tanh approximation against math.Tanh.
func TestFastTanh(t *testing.T) {
	worst := 0.0
	for i := -100000; i <= 100000; i++ {
		x := float64(i) / 10000
		worst = math.Max(worst, math.Abs(fastTanh(x)-math.Tanh(x)))
	}
	if worst > 1e-4 {
		t.Errorf("largest error %.3g on [-10, 10], want below 1e-4", worst)
	}
}
