package sim_test

import (
	"fmt"
	"math"
	"runtime"
	"testing"

	"hoplore/sim"

	"gonum.org/v1/gonum/stat/distuv"
)

// flowCfg returns a run of flow traffic alone: flows from 0 to dst at rate
// per second on net, under hop-count shortest path.
func flowCfg(t testing.TB, net *sim.Net, dst int, rate float64, size sim.SizeDist, limit float64, dur sim.Time) *sim.Config {
	N := net.NumNodes()
	return &sim.Config{Net: net, Agent: shortest(t, net), Seed: 7, Duration: dur, Bin: dur / 4,
		Traffic: sim.Traffic{Rates: make([][]float64, N), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1},
			FlowGen: &sim.FlowGen{Rates: oneFlow(N, 0, dst, rate), Size: size, RateLimit: limit}}}
}

// An isolated flow on one link completes in size·8/rate + propagation when
// it is sent at the link's rate (store-and-forward: the last packet's
// transmission ends at size·8/rate, then it propagates), and in
// (size − last)·8/limit + last·8/bandwidth + propagation when paced at a
// lower limit (common practice: the pacing and serialisation arithmetic of
// a store-and-forward link). Exact: 1 Gbit/s makes every transmission a
// whole number of nanoseconds. Flows start 5 s apart on average and last
// milliseconds, so they do not meet.
func TestFlowIsolatedFCTExact(t *testing.T) {
	const bw = 1e9
	prop := 3 * sim.Millisecond
	net := sim.Compile(lineGraph([]float64{bw}, []sim.Time{prop}, 1000))
	for _, c := range []struct {
		name  string
		bytes int
		limit float64
		want  float64 // seconds
	}{
		{"one packet", 1000, 0, 1000*8/bw + prop.Seconds()},
		{"whole packets", 150_000, 0, 150_000*8/bw + prop.Seconds()},
		{"short last packet", 100_700, 0, 100_700*8/bw + prop.Seconds()},
		{"paced at 100 Mbit/s", 100_700, 100e6, 100_500*8/100e6 + 200*8/bw + prop.Seconds()},
	} {
		t.Run(c.name, func(t *testing.T) {
			cfg := flowCfg(t, net, 1, 0.2, sim.SizeDist{Kind: sim.Fixed, Bytes: c.bytes}, c.limit, 200*sim.Second)
			r, err := sim.Run(cfg)
			if err != nil {
				t.Fatal(err)
			}
			checkConservation(t, r)
			f := r.Flows
			cl := f.Classes[cfg.Traffic.FlowGen.Class(float64(c.bytes))]
			if f.Completed < 20 || f.Failed != 0 || cl.Completed != f.Completed {
				t.Fatalf("flows: started %d, completed %d, failed %d, unfinished %d", f.Started, f.Completed, f.Failed, f.Unfinished)
			}
			// every flow takes the same time, so min = max = mean
			if got := cl.FCTSum / float64(cl.Completed); math.Abs(got-c.want) > 1e-12 {
				t.Errorf("mean FCT %.12f s, want %.12f s", got, c.want)
			}
			if lo, hi := cl.FCT.Min(), cl.FCT.Max(); lo != hi {
				t.Errorf("FCT ranges over [%g, %g]: flows met", lo, hi)
			}
			if got := cl.SlowdownSum / float64(cl.Completed); math.Abs(got-1) > 1e-12 {
				t.Errorf("slowdown %.15f, want 1 (the idle network's FCT)", got)
			}
			if np := (c.bytes + 1499) / 1500; r.Delivered != f.Completed*int64(np) {
				t.Errorf("delivered %d packets for %d flows of %d packets", r.Delivered, f.Completed, np)
			}
		})
	}
}

// IdealFCT is the engine's own completion time of a lone flow over several
// hops with a slower hop in the middle and node processing: the slowdown of
// isolated flows is exactly 1 (the engine runs the tandem packet by packet,
// IdealFCT uses the max-plus closed form).
func TestIdealFCTMatchesEngine(t *testing.T) {
	g := lineGraph([]float64{1e9, 250e6, 1e9, 500e6}, []sim.Time{sim.Millisecond, 2 * sim.Millisecond, 0, 5 * sim.Millisecond}, 10_000)
	g.Nodes[2].Processing = 40 * sim.Microsecond
	net := sim.Compile(g)
	for _, c := range []struct {
		name  string
		size  sim.SizeDist
		limit float64
	}{
		{"one packet", sim.SizeDist{Kind: sim.Fixed, Bytes: 900}, 0},
		{"bottleneck in the path", sim.SizeDist{Kind: sim.Fixed, Bytes: 1_000_100}, 0},
		{"paced below the bottleneck", sim.SizeDist{Kind: sim.Fixed, Bytes: 300_200}, 100e6},
		{"varied sizes", sim.SizeDist{Kind: sim.Lognormal, Mu: 11, Sigma: 1}, 0},
	} {
		t.Run(c.name, func(t *testing.T) {
			r, err := sim.Run(flowCfg(t, net, 4, 0.1, c.size, c.limit, 400*sim.Second))
			if err != nil {
				t.Fatal(err)
			}
			var n int64
			for k := range r.Flows.Classes {
				cl := &r.Flows.Classes[k]
				n += cl.Completed
				if cl.Completed > 0 && (math.Abs(cl.Slowdown.Min()-1) > 1e-9 || math.Abs(cl.Slowdown.Max()-1) > 1e-9) {
					t.Errorf("%v: slowdown in [%.12f, %.12f], want exactly 1", sim.FlowClass(k), cl.Slowdown.Min(), cl.Slowdown.Max())
				}
			}
			if n < 20 || r.Flows.Failed != 0 {
				t.Fatalf("completed %d flows, failed %d", n, r.Flows.Failed)
			}
		})
	}
}

// splitter routes at the source by flow label (pinned) or alternately per
// packet over two channels, and by hop count elsewhere.
type splitter struct {
	net    *sim.Net
	pinned bool
}

func (s *splitter) Name() string { return "splitter" }
func (s *splitter) Node(v *sim.NodeView) sim.Router {
	return &splitRouter{s: s, v: v}
}

type splitRouter struct {
	s *splitter
	v *sim.NodeView
	n int
}

func (r *splitRouter) Route(p *sim.Packet) int {
	out := r.s.net.Out[r.v.ID()]
	if p.Prev >= 0 || len(out) < 2 {
		return sim.HopRoute(r.s.net, r.v.ID(), p.Dst)
	}
	if r.s.pinned {
		return out[p.Flow%2]
	}
	r.n++
	return out[p.Seq%2]
}

// Reordering (RFC 4737 metric, Morton et al. 2006): a 10-packet flow split
// per packet over a fast and a slow path whose delays differ by more than
// the flow lasts delivers the even packets first, so the odd ones 1, 3, 5, 7
// arrive below the next expected number (9 does not): exactly 4 reordered.
// Split by flow label, none; split per packet but pinned per flow by the
// engine (Config.PinFlows: the first packet chooses, the rest follow),
// none either.
func TestFlowReordering(t *testing.T) {
	g := &sim.Graph{Name: "diamond"}
	for _, n := range []string{"a", "b", "c", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	g.Links = []sim.Link{
		{A: 0, B: 1, Bandwidth: 1e9, Delay: sim.Millisecond, Buffer: 100},
		{A: 0, B: 2, Bandwidth: 1e9, Delay: 50 * sim.Millisecond, Buffer: 100},
		{A: 1, B: 3, Bandwidth: 1e9, Delay: sim.Millisecond, Buffer: 100},
		{A: 2, B: 3, Bandwidth: 1e9, Delay: sim.Millisecond, Buffer: 100},
	}
	net := sim.Compile(g)
	for _, c := range []struct {
		pinned        bool
		pinFlows      bool
		wantPerFlow   int64
		wantReordered bool
	}{{false, false, 4, true}, {true, false, 0, false}, {false, true, 0, false}} {
		cfg := flowCfg(t, net, 3, 0.2, sim.SizeDist{Kind: sim.Fixed, Bytes: 15_000}, 0, 200*sim.Second)
		cfg.Agent = &splitter{net: net, pinned: c.pinned}
		cfg.PinFlows = c.pinFlows
		r, err := sim.Run(cfg)
		if err != nil {
			t.Fatal(err)
		}
		f := r.Flows
		if f.Completed < 20 || f.Failed != 0 {
			t.Fatalf("completed %d, failed %d", f.Completed, f.Failed)
		}
		if f.Reordered != c.wantPerFlow*f.Completed || f.Delivered != 10*f.Completed {
			t.Errorf("pinned %v, pin flows %v: %d of %d packets reordered over %d flows, want %d per flow", c.pinned, c.pinFlows, f.Reordered, f.Delivered, f.Completed, c.wantPerFlow)
		}
		if got := f.ReorderedFlows == f.Completed; got != c.wantReordered {
			t.Errorf("pinned %v: %d of %d flows reordered", c.pinned, f.ReorderedFlows, f.Completed)
		}
	}
}

// M/G/1 by Pollaczek–Khinchine (Kleinrock, Queueing Systems Vol. 1, 1975,
// ch. 5): T = E[S] + λE[S²]/(2(1−ρ)), with Pareto (shape 4.5: finite third
// moment, so the mean wait has a central limit) and lognormal packet sizes.
// The moments of the size the engine sends, ceil(X), come from the
// survival function of gonum's distributions: E[⌈X⌉] = Σ_{k≥0} P(X > k),
// E[⌈X⌉²] = Σ_{k≥0} (2k+1)·P(X > k).
func TestPollaczekKhinchineHeavyTails(t *testing.T) {
	bw := 10e6
	const shape = 4.5
	const mean = 1000.0
	pareto := distuv.Pareto{Xm: mean * (shape - 1) / shape, Alpha: shape}
	ln := distuv.LogNormal{Mu: 6.5, Sigma: 0.6}
	cases := []struct {
		name string
		size sim.SizeDist
		surv func(float64) float64
		top  int // beyond it P(X > k) is below 1e-15 relative to the sums
	}{
		{"pareto 4.5", sim.SizeDist{Kind: sim.Pareto, Shape: shape, MeanBytes: mean}, pareto.Survival, 20_000_000},
		{"lognormal", sim.SizeDist{Kind: sim.Lognormal, Mu: 6.5, Sigma: 0.6}, ln.Survival, 2_000_000},
	}
	for _, c := range cases {
		var m1, m2 float64
		for k := 0; k < c.top; k++ {
			s := c.surv(float64(k))
			m1 += s
			m2 += float64(2*k+1) * s
		}
		es, es2 := m1*8/bw, m2*64/(bw*bw)
		for _, rho := range []float64{0.5, 0.8} {
			lambda := rho / es
			n := 100_000.0
			dur := n / lambda
			mk := func(seed uint64) *sim.Config {
				net := sim.Compile(lineGraph([]float64{bw}, []sim.Time{0}, 1<<30))
				return &sim.Config{Net: net, Agent: shortest(t, net), Seed: seed,
					Duration: sim.FromSeconds(dur * 1.1), Warmup: sim.FromSeconds(dur * 0.1), Bin: sim.FromSeconds(dur / 10),
					Traffic: sim.Traffic{Rates: oneFlow(2, 0, 1, lambda), Size: c.size}}
			}
			res := runReps(t, mk, func(r *sim.Result) []float64 { return []float64{r.DeliverySum / float64(r.Delivered)} })
			want := lambda*es2/(2*(1-rho)) + es
			assertWithin(t, c.name+" mean sojourn", across(res[0]), want, 0, 0.05)
		}
	}
}

// Sizes drawn by the engine's distributions have the stated means: the
// sample mean of 200,000 draws lies within 3.29 standard errors (99.9%) of
// Mean() (+ the rounding up to whole bytes, at most 1 byte).
func TestSizeDistMeans(t *testing.T) {
	for _, d := range []sim.SizeDist{
		{Kind: sim.Pareto, Shape: 4.5, MeanBytes: 20_000},
		{Kind: sim.Lognormal, Mu: 9, Sigma: 1},
		{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.9, Bytes: 10_000}, {Fraction: 0.1, Bytes: 1e6}}},
		{Kind: sim.Empirical, CDF: []sim.CDFPoint{{Bytes: 100, P: 0.2}, {Bytes: 1000, P: 0.7}, {Bytes: 50_000, P: 1}}},
	} {
		r := sim.Stream(1, 99, uint64(d.Kind))
		const n = 200_000
		xs := make([]float64, n)
		for i := range xs {
			xs[i] = d.Draw(r)
		}
		var m, v float64
		for _, x := range xs {
			m += x
		}
		m /= n
		for _, x := range xs {
			v += (x - m) * (x - m)
		}
		se := math.Sqrt(v / (n - 1) / n)
		if want := d.Mean(); math.Abs(m-want-0.5) > 3.29*se+0.5 {
			t.Errorf("kind %d: sample mean %.1f ± %.1f, want %.1f", d.Kind, m, 3.29*se, want)
		}
	}
}

// Bad size distributions are refused with a message naming the fault.
func TestSizeDistCheck(t *testing.T) {
	for _, c := range []struct {
		d    sim.SizeDist
		want string
	}{
		{sim.SizeDist{Kind: sim.Pareto, Shape: 1, MeanBytes: 10}, "pareto shape 1 must exceed 1 (the mean is infinite otherwise)"},
		{sim.SizeDist{Kind: sim.Pareto, Shape: 2, MeanBytes: 0}, "pareto mean size must be positive"},
		{sim.SizeDist{Kind: sim.Lognormal, Mu: 1, Sigma: -1}, "lognormal mu must be finite and sigma finite and non-negative"},
		{sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.5, Bytes: 10}, {Fraction: 0.5, Bytes: 0}}}, "mix class 1: size must be positive"},
		{sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.5, Bytes: 10}}}, "mix fractions add up to 0.5, not 1"},
		{sim.SizeDist{Kind: sim.Empirical, CDF: []sim.CDFPoint{{Bytes: 10, P: 0.5}, {Bytes: 5, P: 1}}}, "cdf point 1: sizes and probabilities must both increase"},
		{sim.SizeDist{Kind: sim.Empirical, CDF: []sim.CDFPoint{{Bytes: 10, P: 0.5}, {Bytes: 50, P: 0.9}}}, "cdf ends at probability 0.9, not 1"},
	} {
		err := c.d.Check()
		if err == nil || err.Error() != c.want {
			t.Errorf("%+v: error %v, want %q", c.d, err, c.want)
		}
	}
}

// A node that fails stops its flows: they end failed, and packet
// conservation holds with flows in the network.
func TestFlowsUnderFailure(t *testing.T) {
	net := sim.Compile(gridGraph(3, 3, 10e6, 64))
	N := net.NumNodes()
	m := sim.UniformMatrix(net)
	for s := range m {
		for d := range m[s] {
			m[s][d] *= 0.5
		}
	}
	cfg := &sim.Config{Net: net, Agent: shortest(t, net), Seed: 3, Duration: 20 * sim.Second, Warmup: 2 * sim.Second, Bin: sim.Second,
		Traffic: sim.Traffic{Rates: make([][]float64, N), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1},
			FlowGen: &sim.FlowGen{Rates: m, Size: sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.9, Bytes: 10_000}, {Fraction: 0.1, Bytes: 500_000}}}}},
		Failures: sim.Failures{Detection: 10 * sim.Millisecond, Events: []sim.FailureEvent{{At: 8 * sim.Second, Node: 4}, {At: 12 * sim.Second, Node: 4, Up: true}}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	checkConservation(t, r)
	f := r.Flows
	if f.Started != f.Completed+f.Failed+f.Unfinished {
		t.Errorf("flows: started %d != completed %d + failed %d + unfinished %d", f.Started, f.Completed, f.Failed, f.Unfinished)
	}
	if f.Failed == 0 || f.Completed == 0 || f.Classes[sim.Medium].Started == 0 {
		t.Errorf("flows: completed %d, failed %d, medium %d: the failure stopped nothing or the mix was not drawn", f.Completed, f.Failed, f.Classes[sim.Medium].Started)
	}
}

// BenchmarkFlowEngine is BenchmarkEngine's runs with the same offered bytes
// as flow traffic (sizes 90% 10 kB, 10% 1 MB in 1500-byte packets, so about
// the same packets) instead of packet traffic: events per second and
// allocations per event.
func BenchmarkFlowEngine(b *testing.B) {
	size := sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.9, Bytes: 10_000}, {Fraction: 0.1, Bytes: 1e6}}}
	for _, c := range engineCases(b) {
		b.Run(c.name, func(b *testing.B) {
			fm := sim.UniformMatrix(c.net)
			scale := sim.SaturationScale(c.net, fm, size.Mean()) * c.load
			for s := range fm {
				for d := range fm[s] {
					fm[s][d] *= scale
				}
			}
			b.ReportAllocs()
			var events, pkts int64
			var ms runtime.MemStats
			runtime.ReadMemStats(&ms)
			mallocs := ms.Mallocs
			cpu := cpuSeconds()
			for i := 0; i < b.N; i++ {
				cfg := c.config(b, uint64(i))
				cfg.Traffic.Rates = nil
				cfg.Traffic.FlowGen = &sim.FlowGen{Rates: fm, Size: size}
				r, err := sim.Run(cfg)
				if err != nil {
					b.Fatal(err)
				}
				if r.Flows.Completed == 0 {
					b.Fatal("no flow completed")
				}
				events += r.Events
				pkts += r.Generated
			}
			reportRate(b, float64(events), cpu)
			b.ReportMetric(float64(events)/float64(b.N), "events/run")
			b.ReportMetric(float64(pkts)/float64(b.N), "packets/run")
			runtime.ReadMemStats(&ms)
			b.ReportMetric(float64(ms.Mallocs-mallocs)/float64(events), "allocs/event")
		})
	}
}

// BenchmarkFlowSteadyState measures the allocations per event of flow
// traffic in the steady state: after 20 s of simulated time (the free
// lists of packets and flows and the histograms have grown, and a sample
// of 1000 flows is full), each iteration runs 10 ms more of grid4x4's flow
// workload of BenchmarkFlowEngine at load 0.7; without and with the
// per-flow sample, and pinned per flow (Config.PinFlows): on hop-count
// paths, and with every flow's first packet sent back once from its second
// node, so that every flow re-decides pins (firstBack).
func BenchmarkFlowSteadyState(b *testing.B) {
	for _, sample := range []int{0, 1000} {
		b.Run(fmt.Sprintf("sample=%d", sample), func(b *testing.B) { flowSteadyState(b, sample, false, false) })
	}
	b.Run("pin=flow", func(b *testing.B) { flowSteadyState(b, 0, true, false) })
	b.Run("pin=flow,loops", func(b *testing.B) { flowSteadyState(b, 0, true, true) })
}

func flowSteadyState(b *testing.B, sample int, pin, loops bool) {
	size := sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.9, Bytes: 10_000}, {Fraction: 0.1, Bytes: 1e6}}}
	net := sim.Compile(gridGraph(4, 4, 10e6, 64))
	fm := sim.UniformMatrix(net)
	scale := sim.SaturationScale(net, fm, size.Mean()) * 0.7
	for s := range fm {
		for d := range fm[s] {
			fm[s][d] *= scale
		}
	}
	cfg := &sim.Config{Net: net, Agent: shortest(b, net), Seed: 1, Duration: 1 << 62, Warmup: 0, Bin: 1 << 60,
		Traffic: sim.Traffic{Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1}, FlowGen: &sim.FlowGen{Rates: fm, Size: size, Sample: sample}}}
	cfg.PinFlows = pin
	if loops {
		cfg.Agent = &firstBack{net: net}
	}
	st, err := sim.NewStepper(cfg)
	if err != nil {
		b.Fatal(err)
	}
	t := 20 * sim.Second
	if _, err := st.RunTo(t); err != nil {
		b.Fatal(err)
	}
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	mallocs := ms.Mallocs
	var events int64
	b.ReportAllocs()
	b.ResetTimer()
	cpu := cpuSeconds()
	for i := 0; i < b.N; i++ {
		t += 10 * sim.Millisecond
		n, err := st.RunTo(t)
		if err != nil {
			b.Fatal(err)
		}
		events += n
	}
	b.StopTimer()
	reportRate(b, float64(events), cpu)
	runtime.ReadMemStats(&ms)
	b.ReportMetric(float64(ms.Mallocs-mallocs)/float64(events), "allocs/event")
}

// Under hop-count shortest path the idle-network completion time is a
// lower bound on every flow's: other traffic can only delay a packet in a
// FIFO store-and-forward tandem (the max-plus recursion is monotone in its
// inputs: Baccelli et al., Synchronization and Linearity, 1992), so no
// slowdown falls below 1. A 4×4 grid at load 0.7 with a mix of mice and
// elephants beside packet traffic.
func TestSlowdownAtLeastOne(t *testing.T) {
	net := sim.Compile(gridGraph(4, 4, 10e6, 64))
	size := sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.8, Bytes: 3_000}, {Fraction: 0.15, Bytes: 150_000}, {Fraction: 0.05, Bytes: 2e6}}}
	pm, fm := sim.UniformMatrix(net), sim.UniformMatrix(net)
	ps := sim.SaturationScale(net, pm, 1000) * 0.35
	fs := sim.SaturationScale(net, fm, size.Mean()) * 0.35
	for s := range pm {
		for d := range pm[s] {
			pm[s][d] *= ps
			fm[s][d] *= fs
		}
	}
	r, err := sim.Run(&sim.Config{Net: net, Agent: shortest(t, net), Seed: 11, Duration: 20 * sim.Second, Warmup: 2 * sim.Second, Bin: sim.Second,
		Traffic: sim.Traffic{Rates: pm, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}, FlowGen: &sim.FlowGen{Rates: fm, Size: size, ElephantBytes: 1e6}}})
	if err != nil {
		t.Fatal(err)
	}
	checkConservation(t, r)
	for k := range r.Flows.Classes {
		c := &r.Flows.Classes[k]
		if c.Completed == 0 {
			t.Fatalf("%v: no flow completed", sim.FlowClass(k))
		}
		// the histogram keeps the exact minimum
		if lo := c.Slowdown.Min(); lo < 1-1e-9 {
			t.Errorf("%v: slowdown %.12f below 1", sim.FlowClass(k), lo)
		}
		t.Logf("%v: %d flows, slowdown min %.4f mean %.3f", sim.FlowClass(k), c.Completed, c.Slowdown.Min(), c.SlowdownSum/float64(c.Slowdown.Count()))
	}
}

// The sample of an isolated flow's run holds every flow with its exact
// completion time (size·8/bandwidth + propagation on one link sent at the
// link's rate, common practice), equal to its idle-network time: slowdown 1.
func TestFlowSampleIsolatedExact(t *testing.T) {
	const bw, bytes = 1e9, 100_700
	prop := 3 * sim.Millisecond
	net := sim.Compile(lineGraph([]float64{bw}, []sim.Time{prop}, 1000))
	cfg := flowCfg(t, net, 1, 0.2, sim.SizeDist{Kind: sim.Fixed, Bytes: bytes}, 0, 200*sim.Second)
	cfg.Traffic.FlowGen.Sample = 1000
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	f := r.Flows
	if int64(len(f.Sample)) != f.Started || f.Started < 20 {
		t.Fatalf("sample of %d flows, %d started", len(f.Sample), f.Started)
	}
	want := sim.Time(math.Round((bytes*8/bw + prop.Seconds()) * 1e9))
	for i, rec := range f.Sample {
		if i > 0 && rec.ID <= f.Sample[i-1].ID {
			t.Errorf("record %d: id %d after %d", i, rec.ID, f.Sample[i-1].ID)
		}
		if rec.Outcome != sim.FlowCompleted || rec.End-rec.Start != want || rec.Ideal != want ||
			rec.Src != 0 || rec.Dst != 1 || rec.Size != bytes || rec.Class != sim.Medium ||
			rec.Packets != 68 || rec.Delivered != 68 || rec.Reordered != 0 {
			t.Errorf("record %d: %+v, want completed 0→1 of %d B, 68 packets, fct = ideal = %v", i, rec, bytes, want)
		}
	}
}

// The sample is bounded, a pure function of the run, a subset of the full
// record, and leaves the simulation itself unchanged; the full record
// accounts for every measured flow (outcomes, delivered and reordered
// packets) under a node failure.
func TestFlowSampleBoundedDeterministic(t *testing.T) {
	net := sim.Compile(gridGraph(3, 3, 10e6, 64))
	N := net.NumNodes()
	m := sim.UniformMatrix(net)
	for s := range m {
		for d := range m[s] {
			m[s][d] *= 0.5
		}
	}
	run := func(sample int) *sim.Result {
		cfg := &sim.Config{Net: net, Agent: shortest(t, net), Seed: 3, Duration: 20 * sim.Second, Warmup: 2 * sim.Second, Bin: sim.Second,
			Traffic: sim.Traffic{Rates: make([][]float64, N), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1},
				FlowGen: &sim.FlowGen{Rates: m, Sample: sample, Size: sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.9, Bytes: 10_000}, {Fraction: 0.1, Bytes: 500_000}}}}},
			Failures: sim.Failures{Detection: 10 * sim.Millisecond, Events: []sim.FailureEvent{{At: 8 * sim.Second, Node: 4}, {At: 12 * sim.Second, Node: 4, Up: true}}}}
		r, err := sim.Run(cfg)
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	none, all := run(0), run(1<<30)
	f := all.Flows
	if len(none.Flows.Sample) != 0 {
		t.Errorf("sample 0 recorded %d flows", len(none.Flows.Sample))
	}
	if int64(len(f.Sample)) != f.Started {
		t.Fatalf("full sample has %d flows, %d started", len(f.Sample), f.Started)
	}
	var outcomes [3]int64
	var delivered, reordered int64
	for _, rec := range f.Sample {
		outcomes[rec.Outcome]++
		if rec.Outcome != sim.FlowUnfinished {
			delivered += int64(rec.Delivered)
			reordered += int64(rec.Reordered)
		}
		if (rec.Outcome == sim.FlowCompleted) != (rec.End >= 0) {
			t.Errorf("flow %d: outcome %v, end %v", rec.ID, rec.Outcome, rec.End)
		}
	}
	if outcomes != [3]int64{f.Completed, f.Failed, f.Unfinished} || delivered != f.Delivered || reordered != f.Reordered {
		t.Errorf("sample: outcomes %v, delivered %d, reordered %d; run: %d/%d/%d, %d, %d",
			outcomes, delivered, reordered, f.Completed, f.Failed, f.Unfinished, f.Delivered, f.Reordered)
	}
	if f.Failed == 0 {
		t.Error("no flow failed: the failure case is not exercised")
	}
	byID := make(map[int64]sim.FlowRecord, len(f.Sample))
	for _, rec := range f.Sample {
		byID[rec.ID] = rec
	}
	const n = 25
	a, b := run(n), run(n)
	if len(a.Flows.Sample) != n {
		t.Fatalf("sample of %d flows, want %d", len(a.Flows.Sample), n)
	}
	for i, rec := range a.Flows.Sample {
		if rec != b.Flows.Sample[i] {
			t.Errorf("record %d differs between two runs: %+v, %+v", i, rec, b.Flows.Sample[i])
		}
		if rec != byID[rec.ID] {
			t.Errorf("record %+v is not the full record's %+v", rec, byID[rec.ID])
		}
		if i > 0 && rec.ID <= a.Flows.Sample[i-1].ID {
			t.Errorf("record %d: id %d after %d", i, rec.ID, a.Flows.Sample[i-1].ID)
		}
	}
	if a.Delivered != none.Delivered || a.Events != none.Events || a.Flows.Completed != none.Flows.Completed {
		t.Errorf("sampling changed the run: delivered %d/%d, events %d/%d", a.Delivered, none.Delivered, a.Events, none.Events)
	}
}
