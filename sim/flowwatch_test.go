package sim_test

import (
	"fmt"
	"runtime"
	"slices"
	"testing"

	"hoplore/sim"
)

// watchLog collects the flow ends a watcher heard, in order.
type watchLog struct {
	ends []sim.FlowEnd
}

func (l *watchLog) add(f *sim.FlowEnd) { l.ends = append(l.ends, *f) }

// watchedSplitter is splitter whose routers watch the flows their node sent.
type watchedSplitter struct {
	splitter
	log   *watchLog
	nodes []int // node of each FlowEnded call's router
}

func (s *watchedSplitter) Node(v *sim.NodeView) sim.Router {
	return &watchRouter{splitRouter: splitRouter{s: &s.splitter, v: v}, w: s}
}

type watchRouter struct {
	splitRouter
	w *watchedSplitter
}

func (r *watchRouter) FlowEnded(f *sim.FlowEnd) {
	r.w.log.add(f)
	r.w.nodes = append(r.w.nodes, r.v.ID())
}

var _ sim.FlowWatcher = (*watchRouter)(nil)

// hopCentral is a central agent routing by hop count that watches flows
// and keeps one snapshot, requested at snapAt.
type hopCentral struct {
	net    *sim.Net
	log    *watchLog
	snapAt sim.Time
	v      *sim.ControlView
	snap   *sim.Snapshot
}

func (h *hopCentral) Name() string { return "hop-central" }
func (h *hopCentral) Start(v *sim.ControlView) {
	h.v = v
	if h.snapAt > 0 {
		v.After(h.snapAt, 0)
	}
}
func (h *hopCentral) Timer(int)                         { h.v.Request() }
func (h *hopCentral) Telemetry(s *sim.Snapshot)         { h.snap = s }
func (h *hopCentral) Route(node int, p *sim.Packet) int { return sim.HopRoute(h.net, node, p.Dst) }
func (h *hopCentral) FlowEnded(f *sim.FlowEnd)          { h.log.add(f) }

var _ sim.FlowWatcher = (*hopCentral)(nil)

// sameFlow reports how a watcher's flow end differs from the run's record
// of the flow ("" when it does not).
func sameFlow(e *sim.FlowEnd, rec *sim.FlowRecord) string {
	end := rec.End
	if rec.Outcome != sim.FlowCompleted {
		end = e.End // the record has −1; the end says when it failed
	}
	got := sim.FlowRecord{ID: e.ID, Src: e.Src, Dst: e.Dst, Size: e.Size, Class: e.Class, Start: e.Start, End: end,
		Ideal: e.Ideal, Packets: e.Packets, Delivered: e.Delivered, Reordered: e.Reordered, Outcome: e.Outcome}
	want := *rec
	want.End = end
	if got != want {
		return fmt.Sprintf("heard %+v, recorded %+v", got, want)
	}
	return ""
}

// A per-node watcher at the source hears of every flow its node sent, once,
// when it ends, with what the run records of it (FlowResult.Sample holding
// every flow), the channel its first packet took, and a slot no flow in
// progress shares: on the diamond, pinned per flow by label (the first
// packet's channel is out[label%2]) and split per packet (packet 0 takes
// out[0]).
func TestFlowWatcherPerNode(t *testing.T) {
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
	for _, pinned := range []bool{true, false} {
		t.Run(fmt.Sprintf("pinned=%v", pinned), func(t *testing.T) {
			// 20 flows per second lasting 50 ms or more: several in progress at once
			cfg := flowCfg(t, net, 3, 20, sim.SizeDist{Kind: sim.Fixed, Bytes: 15_000}, 0, 20*sim.Second)
			cfg.Traffic.FlowGen.Sample = 1 << 20
			w := &watchedSplitter{splitter: splitter{net: net, pinned: pinned}, log: &watchLog{}}
			cfg.Agent = w
			r, err := sim.Run(cfg)
			if err != nil {
				t.Fatal(err)
			}
			f := r.Flows
			ended := f.Completed + f.Failed
			if ended < 300 || int64(len(w.log.ends)) != ended {
				t.Fatalf("heard %d flow ends, the run ended %d (started %d)", len(w.log.ends), ended, f.Started)
			}
			byID := map[int64]*sim.FlowRecord{}
			for i := range f.Sample {
				byID[f.Sample[i].ID] = &f.Sample[i]
			}
			type slot struct{ start, end sim.Time }
			slots := map[int][]slot{}
			for i := range w.log.ends {
				e := &w.log.ends[i]
				if w.nodes[i] != e.Src {
					t.Fatalf("flow %d from %d heard at node %d", e.ID, e.Src, w.nodes[i])
				}
				rec, ok := byID[e.ID]
				if !ok {
					t.Fatalf("flow %d heard but not recorded", e.ID)
				}
				if d := sameFlow(e, rec); d != "" {
					t.Fatalf("flow %d: %s", e.ID, d)
				}
				out := net.Out[e.Src]
				want := out[0]
				if pinned {
					want = out[e.Label%2]
				}
				if e.First != want || !e.Measured {
					t.Fatalf("flow %d: first channel %d, want %d; measured %v", e.ID, e.First, want, e.Measured)
				}
				slots[e.Slot] = append(slots[e.Slot], slot{e.Start, e.End})
				delete(byID, e.ID)
			}
			for s, spans := range slots {
				// in the order heard, each ends before the next one of the slot starts
				for i := 1; i < len(spans); i++ {
					if spans[i].start < spans[i-1].end {
						t.Fatalf("slot %d: a flow over [%v, %v] overlaps one over [%v, %v]", s, spans[i].start, spans[i].end, spans[i-1].start, spans[i-1].end)
					}
				}
			}
			if len(slots) < 2 {
				t.Errorf("%d slots: flows never overlapped, the test shows nothing of slot reuse", len(slots))
			}
		})
	}
}

// A central watcher hears of every flow that ends, failed ones included
// (a node failure stops some at their source and drops packets of others),
// with the run's record of each; and the snapshot's flow counters are the
// flow traffic's share of the pair counters (all of them without packet
// traffic).
func TestFlowWatcherCentral(t *testing.T) {
	net := sim.Compile(gridGraph(3, 3, 10e6, 64))
	N := net.NumNodes()
	m := sim.UniformMatrix(net)
	for s := range m {
		for d := range m[s] {
			m[s][d] *= 0.5
		}
	}
	log := &watchLog{}
	hc := &hopCentral{net: net, log: log, snapAt: 19 * sim.Second}
	cfg := &sim.Config{Net: net, Agent: hc, Seed: 3, Duration: 20 * sim.Second, Bin: sim.Second,
		Traffic: sim.Traffic{Rates: make([][]float64, N), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1},
			FlowGen: &sim.FlowGen{Rates: m, Sample: 1 << 30, Size: sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.9, Bytes: 10_000}, {Fraction: 0.1, Bytes: 500_000}}}}},
		Failures: sim.Failures{Detection: 10 * sim.Millisecond, Events: []sim.FailureEvent{{At: 8 * sim.Second, Node: 4}, {At: 12 * sim.Second, Node: 4, Up: true}}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	f := r.Flows
	if f.Failed == 0 || f.Completed == 0 {
		t.Fatalf("completed %d, failed %d: the test needs both", f.Completed, f.Failed)
	}
	if int64(len(log.ends)) != f.Completed+f.Failed {
		t.Fatalf("heard %d flow ends, the run ended %d", len(log.ends), f.Completed+f.Failed)
	}
	byID := map[int64]*sim.FlowRecord{}
	for i := range f.Sample {
		byID[f.Sample[i].ID] = &f.Sample[i]
	}
	var failed int64
	for i := range log.ends {
		e := &log.ends[i]
		rec, ok := byID[e.ID]
		if !ok {
			t.Fatalf("flow %d heard twice or never recorded", e.ID)
		}
		if d := sameFlow(e, rec); d != "" {
			t.Fatalf("flow %d: %s", e.ID, d)
		}
		if e.Outcome == sim.FlowFailed {
			failed++
		}
		delete(byID, e.ID)
	}
	if failed != f.Failed {
		t.Errorf("heard %d failed flows, the run counts %d", failed, f.Failed)
	}
	// heard in the order the flows ended
	if !slices.IsSortedFunc(log.ends, func(a, b sim.FlowEnd) int { return int(a.End - b.End) }) {
		t.Error("flow ends not heard in time order")
	}
	s := hc.snap
	if s == nil || !slices.Equal(s.PairFlowDelivered, s.PairDelivered) || !slices.Equal(s.PairFlowDropped, s.PairDropped) ||
		!slices.Equal(s.PairFlowDelay, s.PairDelay) {
		t.Errorf("flow traffic alone: the snapshot's flow counters differ from the pair counters")
	}
	// beside packet traffic, the flow counters are a part of the pair counters
	cfg.Traffic.Rates = make([][]float64, N)
	for s := range cfg.Traffic.Rates {
		cfg.Traffic.Rates[s] = make([]float64, N)
		for d := range cfg.Traffic.Rates[s] {
			if s != d {
				cfg.Traffic.Rates[s][d] = 5
			}
		}
	}
	cfg.Traffic.Size = sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}
	hc.snap = nil
	if _, err := sim.Run(cfg); err != nil {
		t.Fatal(err)
	}
	s = hc.snap
	var fd, pd int64
	for i := range s.PairDelivered {
		fd += s.PairFlowDelivered[i]
		pd += s.PairDelivered[i] - s.PairFlowDelivered[i]
		if s.PairFlowDelivered[i] > s.PairDelivered[i] || s.PairFlowDropped[i] > s.PairDropped[i] || s.PairFlowDelay[i] > s.PairDelay[i] {
			t.Fatalf("pair %d: flow counters %d, %d, %g above the pair's %d, %d, %g", i,
				s.PairFlowDelivered[i], s.PairFlowDropped[i], s.PairFlowDelay[i], s.PairDelivered[i], s.PairDropped[i], s.PairDelay[i])
		}
	}
	if fd == 0 || pd == 0 {
		t.Errorf("flow packets delivered %d, other packets %d: want both", fd, pd)
	}
}

// BenchmarkFlowWatched is BenchmarkFlowSteadyState's workload (sample 0)
// with a watcher at every source: the hook costs no allocation.
func BenchmarkFlowWatched(b *testing.B) {
	size := sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.9, Bytes: 10_000}, {Fraction: 0.1, Bytes: 1e6}}}
	net := sim.Compile(gridGraph(4, 4, 10e6, 64))
	fm := sim.UniformMatrix(net)
	scale := sim.SaturationScale(net, fm, size.Mean()) * 0.7
	for s := range fm {
		for d := range fm[s] {
			fm[s][d] *= scale
		}
	}
	cnt := &countingHop{net: net}
	cfg := &sim.Config{Net: net, Agent: cnt, Seed: 1, Duration: 1 << 62, Warmup: 0, Bin: 1 << 60,
		Traffic: sim.Traffic{Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1}, FlowGen: &sim.FlowGen{Rates: fm, Size: size}}}
	st, err := sim.NewStepper(cfg)
	if err != nil {
		b.Fatal(err)
	}
	t := 20 * sim.Second
	if _, err := st.RunTo(t); err != nil {
		b.Fatal(err)
	}
	heard := cnt.heard
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
	runtime.ReadMemStats(&ms)
	if cnt.heard == heard && b.N > 100 {
		b.Fatal("no flow end heard")
	}
	reportRate(b, float64(events), cpu)
	b.ReportMetric(float64(ms.Mallocs-mallocs)/float64(events), "allocs/event")
	b.ReportMetric(float64(cnt.heard-heard)/float64(b.N), "flow-ends/op")
}

// countingHop routes by hop count at every node and counts the flow ends
// heard at the sources.
type countingHop struct {
	net   *sim.Net
	heard int64
}

func (c *countingHop) Name() string { return "counting-hop" }
func (c *countingHop) Node(v *sim.NodeView) sim.Router {
	return &countingRouter{c: c, node: v.ID()}
}

type countingRouter struct {
	c    *countingHop
	node int
}

func (r *countingRouter) Route(p *sim.Packet) int { return sim.HopRoute(r.c.net, r.node, p.Dst) }
func (r *countingRouter) FlowEnded(f *sim.FlowEnd) {
	if f.Src == r.node && f.End >= f.Start {
		r.c.heard++
	}
}
