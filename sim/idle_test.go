package sim_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"hoplore/sim"
)

// channel returns the channel from a to b on net.
func channel(t testing.TB, net *sim.Net, a, b int) int {
	for _, c := range net.Out[a] {
		if net.Channels[c].To == b {
			return c
		}
	}
	t.Fatalf("no channel %d→%d", a, b)
	return sim.NoRoute
}

// pathRouter sends every packet along a fixed next-hop table.
type pathRouter struct{ next []int }

func (p *pathRouter) Name() string                    { return "fixed path" }
func (p *pathRouter) Node(v *sim.NodeView) sim.Router { return &pathHop{c: p.next[v.ID()]} }

type pathHop struct{ c int }

func (h *pathHop) Route(*sim.Packet) int { return h.c }

// chanParams returns the intact network's bandwidths and delays.
func chanParams(net *sim.Net) ([]float64, []sim.Time) {
	bw, delay := make([]float64, len(net.Channels)), make([]sim.Time, len(net.Channels))
	for c, ch := range net.Channels {
		bw[c], delay[c] = ch.Bandwidth, ch.Delay
	}
	return bw, delay
}

// twoPaths returns a network of a short path a→b at 10 Mbit/s and a long
// one a→c→d→b at 100 Mbit/s, 1 ms per link, 20 µs of processing at c.
func twoPaths(t testing.TB) (net *sim.Net, short, long []int) {
	g := &sim.Graph{Name: "two paths"}
	for _, n := range []string{"a", "b", "c", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	g.Nodes[2].Processing = 20 * sim.Microsecond
	g.Links = []sim.Link{
		{A: 0, B: 1, Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 100_000},
		{A: 0, B: 2, Bandwidth: 100e6, Delay: sim.Millisecond, Buffer: 100_000},
		{A: 2, B: 3, Bandwidth: 100e6, Delay: sim.Millisecond, Buffer: 100_000},
		{A: 3, B: 1, Bandwidth: 100e6, Delay: sim.Millisecond, Buffer: 100_000},
	}
	net = sim.Compile(g)
	short = []int{channel(t, net, 0, 1)}
	long = []int{channel(t, net, 0, 2), channel(t, net, 2, 3), channel(t, net, 3, 1)}
	return net, short, long
}

// On a network of a short path a→b at 10 Mbit/s and a long one a→c→d→b at
// 100 Mbit/s, the idle-network completion time is the long path's for an
// elephant and the short path's for a mouse (one packet). A flow routed
// alone on its best path completes in exactly that time (the engine runs
// the store-and-forward tandem packet by packet, IdealFCT uses the
// max-plus closed form of Baccelli, Cohen, Olsder & Quadrat,
// Synchronization and Linearity, 1992): slowdown 1 to 1e-9; routed on the
// other path, the slowdown is the ratio of the two paths' idle times.
// Flows that overlapped in time are left out (the sample records when each
// started and ended).
func TestIdealFCTBestPath(t *testing.T) {
	net, short, long := twoPaths(t)
	bw, delay := chanParams(net)
	for _, c := range []struct {
		name        string
		bytes       int
		route, best []int
		rate        float64 // flows per second
	}{
		{"elephant on the long path", 10_000_000, long, long, 0.01},
		{"elephant on the short path", 10_000_000, short, long, 0.01},
		{"mouse on the short path", 1500, short, short, 0.1},
		{"mouse on the long path", 1500, long, short, 0.1},
	} {
		t.Run(c.name, func(t *testing.T) {
			next := []int{c.route[0], sim.NoRoute, sim.NoRoute, sim.NoRoute}
			for _, ch := range c.route[1:] {
				next[net.Channels[ch].From] = ch
			}
			cfg := flowCfg(t, net, 1, c.rate, sim.SizeDist{Kind: sim.Fixed, Bytes: c.bytes}, 0, 4000*sim.Second)
			cfg.Agent = &pathRouter{next: next}
			cfg.Traffic.FlowGen.Sample = 1 << 20
			r, err := sim.Run(cfg)
			if err != nil {
				t.Fatal(err)
			}
			// the sender's rate is a's access rate, 100 Mbit/s
			ideal := sim.IdealFCT(net, 0, 1, int64(c.bytes), 1500, 100e6, bw, delay)
			want := sim.IdealFCTAlong(net, c.best, int64(c.bytes), 1500, 100e6, bw, delay)
			if ideal != want {
				t.Fatalf("IdealFCT %v, the best path's %v", ideal, want)
			}
			wantSlow := float64(sim.IdealFCTAlong(net, c.route, int64(c.bytes), 1500, 100e6, bw, delay)) / float64(want)
			s := r.Flows.Sample
			var n int
			for i, rec := range s {
				if rec.Ideal != want {
					t.Fatalf("flow %d: ideal %v, want %v", rec.ID, rec.Ideal, want)
				}
				if rec.Outcome != sim.FlowCompleted || (i > 0 && s[i-1].End >= rec.Start) || (i+1 < len(s) && rec.End >= s[i+1].Start) {
					continue
				}
				n++
				if got := float64(rec.End-rec.Start) / float64(rec.Ideal); math.Abs(got-wantSlow) > 1e-9 {
					t.Errorf("flow %d: slowdown %.12f, want %.12f", rec.ID, got, wantSlow)
				}
			}
			if n < 20 {
				t.Fatalf("%d isolated flows of %d", n, len(s))
			}
			t.Logf("%d isolated flows, slowdown %.6f, idle FCT %v", n, wantSlow, want)
		})
	}
}

// The idle-network completion time follows the channels' parameters of
// the moment a flow starts: while a link condition holds the long path's
// middle link at 1 Mbit/s (from the start, and again from 500 s), flows
// of 1 MB have the short path's idle time (10 Mbit/s); while it is
// restored to 100 Mbit/s (from 200 s to 500 s), the long path's. Both
// changes must renew the cached trees: the widened link makes the long
// path a candidate again.
func TestIdealFCTFollowsConditions(t *testing.T) {
	net, short, long := twoPaths(t)
	bw, delay := chanParams(net)
	const size = 1_000_000
	wantLong := sim.IdealFCTAlong(net, long, size, 1500, 100e6, bw, delay)
	wantShort := sim.IdealFCTAlong(net, short, size, 1500, 100e6, bw, delay)
	mid := net.Channels[long[1]].Link
	cut := append([]float64(nil), bw...)
	cut[long[1]], cut[long[1]^1] = 1e6, 1e6
	if got := sim.IdealFCT(net, 0, 1, size, 1500, 100e6, cut, delay); got != wantShort {
		t.Fatalf("IdealFCT with the long path cut %v, want the short path's %v", got, wantShort)
	}
	cfg := flowCfg(t, net, 1, 0.1, sim.SizeDist{Kind: sim.Fixed, Bytes: size}, 0, 800*sim.Second)
	cfg.Traffic.FlowGen.Sample = 1 << 20
	cfg.Conditions = []sim.LinkCondition{{At: 0, Link: mid, Bandwidth: 1e6}, {At: 200 * sim.Second, Link: mid, Bandwidth: 100e6},
		{At: 500 * sim.Second, Link: mid, Bandwidth: 1e6}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	var before, during, after int
	for _, rec := range r.Flows.Sample {
		want := wantShort
		switch {
		case rec.Start < 200*sim.Second:
			before++
		case rec.Start < 500*sim.Second:
			want = wantLong
			during++
		default:
			after++
		}
		if rec.Ideal != want {
			t.Errorf("flow %d started at %v: ideal %v, want %v", rec.ID, rec.Start, rec.Ideal, want)
		}
	}
	if before < 10 || during < 10 || after < 10 {
		t.Fatalf("flows before, during and after the restoration: %d, %d, %d", before, during, after)
	}
}

// randomNet returns a connected graph of n nodes with a random spanning
// tree plus each further pair linked with probability 0.4, bandwidths from
// bws, delays in [0, 5 ms] and processing times in [0, 200 µs] at half the
// nodes.
func randomNet(r *rand.Rand, n int, bws []float64) *sim.Net {
	g := &sim.Graph{Name: "random"}
	for i := 0; i < n; i++ {
		g.Nodes = append(g.Nodes, sim.Node{Name: fmt.Sprintf("n%d", i)})
		if r.IntN(2) == 0 {
			g.Nodes[i].Processing = sim.Time(r.IntN(200)) * sim.Microsecond
		}
	}
	linked := map[[2]int]bool{}
	link := func(a, b int) {
		linked[[2]int{a, b}], linked[[2]int{b, a}] = true, true
		g.Links = append(g.Links, sim.Link{A: a, B: b, Bandwidth: bws[r.IntN(len(bws))],
			Delay: sim.Time(r.IntN(5000)) * sim.Microsecond, Buffer: 100})
	}
	for i := 1; i < n; i++ {
		link(r.IntN(i), i)
	}
	for a := 0; a < n; a++ {
		for b := a + 1; b < n; b++ {
			if !linked[[2]int{a, b}] && r.Float64() < 0.4 {
				link(a, b)
			}
		}
	}
	return sim.Compile(g)
}

// simplePaths calls f with every simple path of channels from src to dst.
func simplePaths(net *sim.Net, src, dst int, f func([]int)) {
	on := make([]bool, net.NumNodes())
	var path []int
	var walk func(v int)
	walk = func(v int) {
		if v == dst {
			f(path)
			return
		}
		on[v] = true
		for _, c := range net.Out[v] {
			if to := net.Channels[c].To; !on[to] {
				path = append(path, c)
				walk(to)
				path = path[:len(path)-1]
			}
		}
		on[v] = false
	}
	walk(src)
}

// Against brute force: on small random graphs (3 to 7 nodes) with mixed
// bandwidths, the idle completion time of IdealFCT is never below the
// least of the exact max-plus completion time (Baccelli, Cohen, Olsder &
// Quadrat, Synchronization and Linearity, 1992) over every simple path
// from source to destination, and equals it in most cases. Sizes are
// log-uniform from 100 B to 20 MB, the rate the source's access rate or,
// for a third of the flows, a lower limit. Measured (2400 cases each): the
// candidates hold the best path in 98.8% of cases with three bandwidths
// and 98.2% with six (a destination then may have more than four
// thresholds to choose from), the hop-count path alone in 70.5% and 68.2%;
// of the flows of at least one full packet, 1825 and 1822 of 1828 (99.8%,
// 99.7%). 64 of the 73 misses are flows of less than one packet (the weights
// count a full packet's transmission per hop), the worst of them 1.88 and
// 3.32 times the best path's time; the worst of the larger ones 1.99 (an
// elephant whose widest bottleneck was not among the four thresholds).
func TestIdealFCTBruteForce(t *testing.T) {
	for _, c := range []struct {
		name     string
		bws      []float64
		minShare float64 // the measured share, rounded down
	}{
		{"three bandwidths", []float64{10e6, 100e6, 1e9}, 0.98},
		{"six bandwidths", []float64{2e6, 5e6, 10e6, 50e6, 100e6, 1e9}, 0.98},
	} {
		t.Run(c.name, func(t *testing.T) {
			r := rand.New(rand.NewPCG(12, 1))
			var cases, exact, hopExact, full, fullExact int
			worst := 1.0
			for graph := 0; graph < 300; graph++ {
				net := randomNet(r, 3+r.IntN(5), c.bws)
				bw, delay := chanParams(net)
				N := net.NumNodes()
				fct := sim.IdleFCT(net, 1500, bw, delay)
				for k := 0; k < 8; k++ {
					src, dst := r.IntN(N), r.IntN(N-1)
					if dst >= src {
						dst++
					}
					size := int64(math.Ceil(100 * math.Pow(2e5, r.Float64())))
					var rate float64
					for _, ch := range net.Out[src] {
						rate = math.Max(rate, net.Channels[ch].Bandwidth)
					}
					if r.IntN(3) == 0 {
						rate *= 0.05 + 0.95*r.Float64()
					}
					got := sim.IdealFCT(net, src, dst, size, 1500, rate, bw, delay)
					if cached := fct(src, dst, size, rate); cached != got {
						t.Fatalf("graph %d, %d→%d: cached trees give %v, fresh ones %v", graph, src, dst, cached, got)
					}
					best := sim.Time(math.MaxInt64)
					var hop []int
					for v := src; v != dst; v = net.Channels[hop[len(hop)-1]].To {
						hop = append(hop, sim.HopRoute(net, v, dst))
					}
					hopFCT := sim.IdealFCTAlong(net, hop, size, 1500, rate, bw, delay)
					simplePaths(net, src, dst, func(p []int) {
						best = min(best, sim.IdealFCTAlong(net, p, size, 1500, rate, bw, delay))
					})
					cases++
					if got < best || got > hopFCT {
						t.Fatalf("graph %d, %d→%d, %d B at %g bit/s: IdealFCT %v, best simple path %v, hop-count path %v", graph, src, dst, size, rate, got, best, hopFCT)
					}
					if got == best {
						exact++
					}
					if size >= 1500 {
						full++
						if got == best {
							fullExact++
						}
					}
					if hopFCT == best {
						hopExact++
					}
					worst = math.Max(worst, float64(got)/float64(best))
				}
			}
			share, fullShare := float64(exact)/float64(cases), float64(fullExact)/float64(full)
			t.Logf("%d cases: the candidates hold the best path in %.1f%% (hop-count path alone %.1f%%), %d of the %d flows of at least one full packet; worst ratio %.4f",
				cases, 100*share, 100*float64(hopExact)/float64(cases), fullExact, full, worst)
			if share < c.minShare || fullShare < 0.99 {
				t.Errorf("the candidates hold the best path in %.1f%% of cases, %.1f%% of flows of at least one full packet, want at least %.0f%% and 99%%",
					100*share, 100*fullShare, 100*c.minShare)
			}
		})
	}
}

// The idle completion time's candidate paths cost nothing to allocate per
// flow once a destination's trees are cached: ns per flow start on a 10×10
// grid of mixed bandwidths, all pairs, mixed sizes.
func BenchmarkIdleFCT(b *testing.B) {
	g := gridGraph(10, 10, 10e6, 64)
	for i := range g.Links {
		if i%3 == 0 {
			g.Links[i].Bandwidth = 100e6
		}
	}
	net := sim.Compile(g)
	bw, delay := chanParams(net)
	fct := sim.IdleFCT(net, 1500, bw, delay)
	N := net.NumNodes()
	for d := 0; d < N; d++ {
		fct((d+1)%N, d, 1000, 100e6) // fill the cache
	}
	sizes := []int64{1000, 10_000, 1e6, 1e7}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		s, d := i%N, (i/N)%N
		if s == d {
			d = (d + 1) % N
		}
		fct(s, d, sizes[i%len(sizes)], 100e6)
	}
}

// IdleRoutesBytes bounds what the candidate paths take (allocations
// counted by the runtime), within 1.5×: a 10×10 grid with flows to every
// destination and to a fifth of them.
func TestIdleRoutesBytes(t *testing.T) {
	net := sim.Compile(gridGraph(10, 10, 10e6, 64))
	for _, dests := range []int{20, 100} {
		got := float64(sim.IdleRoutesHeap(net, dests))
		est := sim.IdleRoutesBytes(net.NumNodes(), len(net.Channels), dests)
		t.Logf("%d destinations: %.0f bytes allocated, estimate %.0f", dests, got, est)
		if est < got || est > 1.5*got {
			t.Errorf("%d destinations: estimate %.0f bytes, allocated %.0f: want within [1×, 1.5×]", dests, est, got)
		}
	}
}
