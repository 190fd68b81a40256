package agents

import (
	"math"
	"slices"
	"strconv"
	"syscall"
	"testing"

	"hoplore/optimum"
	"hoplore/sim"
)

// triangle returns nodes 0, 1, 2 with links 0–1, 0–2, 1–2: channels 0 (0→1),
// 1 (1→0), 2 (0→2), 3 (2→0), 4 (1→2), 5 (2→1); Out[0] = [0, 2] and
// Out[1] = [1, 4].
func triangle(t *testing.T) *sim.Net {
	t.Helper()
	g := &sim.Graph{Name: "triangle", Nodes: []sim.Node{{Name: "n0"}, {Name: "n1"}, {Name: "n2"}}}
	for _, l := range [][2]int{{0, 1}, {0, 2}, {1, 2}} {
		g.Links = append(g.Links, sim.Link{A: l[0], B: l[1], Bandwidth: 1e6, Delay: sim.Millisecond, Buffer: 50})
	}
	if err := g.Validate(); err != nil {
		t.Fatal(err)
	}
	net := sim.Compile(g)
	if !slices.Equal(net.Out[0], []int{0, 2}) || !slices.Equal(net.Out[1], []int{1, 4}) {
		t.Fatalf("channel layout changed: Out[0] = %v, Out[1] = %v", net.Out[0], net.Out[1])
	}
	return net
}

func newTestOptimal(t *testing.T, net *sim.Net, maxShift float64) *CentralOptimal {
	t.Helper()
	p := Defaults(CentralOptimalKind)
	p.MaxShift = maxShift
	ag, err := New(p, net)
	if err != nil {
		t.Fatal(err)
	}
	return ag.(*CentralOptimal)
}

// set writes weights ws for (u, d) into w.
func (a *CentralOptimal) set(w []float64, u, d int, ws ...float64) {
	copy(w[a.entry(u, d):], ws)
}

func (a *CentralOptimal) get(u, d int) []float64 {
	i := a.entry(u, d)
	return a.w[i : i+len(a.net.Out[u])]
}

// TestCentralOptimalInstall works the install rules by hand on a triangle,
// towards node 2, with max_shift 0.5:
//   - no loop: node 0 moves from [via 1] to [direct]; the damped step goes
//     half-way, [0.5, 0.5] (total variation ½(0.5 + 0.5) = 0.5), and the
//     next install completes it: one route change each time;
//   - loop: node 0 moves to [direct] while node 1 moves from [direct] to
//     [via 0]; the half-way mixture sends traffic 0 → 1 → 0, so both nodes
//     take their new weights whole: two route changes;
//   - down channel: node 0's channel to 1 is down in the snapshot, so its
//     new weights [direct] are taken whole despite max_shift.
func TestCentralOptimalInstall(t *testing.T) {
	net := triangle(t)
	up := []bool{true, true, true, true, true, true}
	const d = 2
	t.Run("damped", func(t *testing.T) {
		a := newTestOptimal(t, net, 0.5)
		a.set(a.w, 0, d, 1, 0)
		a.set(a.w, 1, d, 0, 1)
		nw := slices.Clone(a.w)
		a.set(nw, 0, d, 0, 1)
		if n := a.install(coPending{w: nw, usable: up}); n != 1 {
			t.Errorf("first install: %d route changes, want 1", n)
		}
		if got := a.get(0, d); !slices.Equal(got, []float64{0.5, 0.5}) {
			t.Errorf("node 0 after one damped install: %v, want [0.5 0.5]", got)
		}
		if n := a.install(coPending{w: nw, usable: up}); n != 1 {
			t.Errorf("second install: %d route changes, want 1", n)
		}
		if got := a.get(0, d); !slices.Equal(got, []float64{0, 1}) {
			t.Errorf("node 0 after two installs: %v, want [0 1]", got)
		}
		if n := a.install(coPending{w: nw, usable: up}); n != 0 {
			t.Errorf("third install of the same weights: %d route changes, want 0", n)
		}
	})
	t.Run("loop", func(t *testing.T) {
		a := newTestOptimal(t, net, 0.5)
		a.set(a.w, 0, d, 1, 0)
		a.set(a.w, 1, d, 0, 1)
		nw := slices.Clone(a.w)
		a.set(nw, 0, d, 0, 1)
		a.set(nw, 1, d, 1, 0)
		if n := a.install(coPending{w: nw, usable: up}); n != 2 {
			t.Errorf("%d route changes, want 2", n)
		}
		if got := a.get(0, d); !slices.Equal(got, []float64{0, 1}) {
			t.Errorf("node 0: %v, want [0 1] (released from the loop)", got)
		}
		if got := a.get(1, d); !slices.Equal(got, []float64{1, 0}) {
			t.Errorf("node 1: %v, want [1 0] (released from the loop)", got)
		}
	})
	t.Run("down", func(t *testing.T) {
		a := newTestOptimal(t, net, 0.5)
		a.set(a.w, 0, d, 1, 0)
		nw := slices.Clone(a.w)
		a.set(nw, 0, d, 0, 1)
		down := slices.Clone(up)
		down[0] = false
		a.install(coPending{w: nw, usable: down})
		if got := a.get(0, d); !slices.Equal(got, []float64{0, 1}) {
			t.Errorf("node 0 with its channel to 1 down: %v, want [0 1]", got)
		}
	})
}

// TestCentralOptimalFlowHashSplit routes 100,000 flows from node 0 towards
// node 2 with weights [0.25 via 1, 0.75 direct]: the share sent via 1 must
// be 0.25 within 3.29 binomial standard deviations (a flow's hash is
// uniform on [0, 1): splitmix64's finaliser, common practice), and every
// packet of one flow must take the same channel.
func TestCentralOptimalFlowHashSplit(t *testing.T) {
	net := triangle(t)
	a := newTestOptimal(t, net, 1)
	a.set(a.w, 0, 2, 0.25, 0.75)
	const n = 100000
	via1 := 0
	for f := 0; f < n; f++ {
		p := &sim.Packet{Src: 0, Dst: 2, Flow: uint32(sim.Mix(uint64(f), 7))}
		c := a.Route(0, p)
		if c == 0 {
			via1++
		}
		if again := a.Route(0, p); again != c {
			t.Fatalf("flow %d took channel %d, then %d", f, c, again)
		}
	}
	share := float64(via1) / n
	tol := 3.29 * math.Sqrt(0.25*0.75/n)
	if math.Abs(share-0.25) > tol {
		t.Errorf("share via node 1: %.4f, want 0.25 ± %.4f", share, tol)
	}
}

// TestCentralOptimalServiceModel: with objective min-delay, central-optimal
// solves and weighs routings under the optimum package's M/G/1 channels of
// the run's packet-size variability (PacketSizeSCV, read with
// MeanPacketBytes; unset, exponential sizes: M/M/1). On the triangle, 150
// packets/s from 0 to 1 (over a direct channel of 125 packets/s and a
// two-hop bypass) must split; the solve's value must be the one a solver
// of the same model finds, and evaluating the installed weights must give
// the same mean delay (the splits carry the solution's flow exactly: it
// has no cycle).
func TestCentralOptimalServiceModel(t *testing.T) {
	net := triangle(t)
	for _, tc := range []struct {
		name    string
		bytes   float64
		scv     float64
		wantSCV float64
	}{
		{"fixed size", 1000, 0, 0},
		{"bimodal sizes", 1000, 1.769, 1.769},
		{"unknown sizes", 0, 0, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := Defaults(CentralOptimalKind)
			p.Objective.Name = ObjectiveMinDelay
			p.MeanPacketBytes, p.PacketSizeSCV = tc.bytes, tc.scv
			ag, err := New(p, net)
			if err != nil {
				t.Fatal(err)
			}
			a := ag.(*CentralOptimal)
			a.demand[0][1] = 150
			next := make([]float64, len(a.w))
			a.zeroLoadInto(next)
			got, err := a.sol.solveInto(a, next)
			if err != nil {
				t.Fatal(err)
			}
			s, err := optimum.NewSolver(optimum.FromNet(net, a.p.packetBytes(), nil))
			if err == nil {
				err = s.SetServiceSCV(tc.wantSCV)
			}
			if err == nil {
				err = s.SetDemand(a.demand)
			}
			var want optimum.MinDelay
			if err == nil {
				want, err = s.MinDelay(a.p.Epsilon)
			}
			if err != nil {
				t.Fatal(err)
			}
			if got.kind != coDelay || got.value != want.Mean {
				t.Fatalf("solve gave %+v, a solver with cs² = %v gives mean %v", got, tc.wantSCV, want.Mean)
			}
			v, ok := a.evaluate(next, coDelay)
			if !ok || math.Abs(v-want.Mean) > 1e-12*want.Mean {
				t.Errorf("installed weights evaluate to %v (ok %v), the solution's mean delay is %v", v, ok, want.Mean)
			}
		})
	}
}

// TestCentralOptimalLossModel: with objective loss or a mix, the solve is
// the optimum package's MinMix on the model of the network as the
// controller knows it (each channel's room its buffer plus the one in
// transmission, and the link loss probability telemetry reports): on the
// triangle, 100 packets/s from 0 to 1 over a direct channel of 125
// packets/s with a 1% link loss and a clean two-hop bypass, the solve's
// value must be the one a solver of the same model finds, utilisation and
// delay must be spelled as central-optimal's own objectives, and
// evaluating the installed weights must give the solution's value.
func TestCentralOptimalLossModel(t *testing.T) {
	net := triangle(t)
	for _, tc := range []struct {
		obj Objective
		w   optimum.Weights
	}{
		{Objective{Name: ObjectiveLoss}, optimum.Weights{Loss: 1}},
		{Objective{Name: ObjectiveMix, Mix: Mix{Delay: 1, Loss: 50}}, optimum.Weights{Delay: 1, Loss: 50}},
		{Objective{Name: ObjectiveMix, Mix: Mix{Loss: 1, Utilisation: 0.2}}, optimum.Weights{Loss: 1, Utilisation: 0.2}},
	} {
		t.Run(tc.obj.String(), func(t *testing.T) {
			p := Defaults(CentralOptimalKind)
			p.Objective = tc.obj
			ag, err := New(p, net)
			if err != nil {
				t.Fatal(err)
			}
			a := ag.(*CentralOptimal)
			a.demand[0][1] = 100
			a.linkLoss[0] = 0.01
			next := make([]float64, len(a.w))
			a.zeroLoadInto(next)
			got, err := a.sol.solveInto(a, next)
			if err != nil {
				t.Fatal(err)
			}
			m := optimum.FromNet(net, a.p.packetBytes(), nil)
			m.Channels[0].Loss = 0.01
			if m.Channels[0].Room != 51 {
				t.Fatalf("room %d, want the buffer of 50 plus one", m.Channels[0].Room)
			}
			s, err := optimum.NewSolver(m)
			if err == nil {
				err = s.SetDemand(a.demand)
			}
			var want optimum.MixResult
			if err == nil {
				want, err = s.MinMix(tc.w, a.p.Epsilon)
			}
			if err != nil {
				t.Fatal(err)
			}
			if got.kind != coMix || got.value != want.Value {
				t.Fatalf("solve gave %+v, a solver of the same model gives %v", got, want.Value)
			}
			v, ok := a.evaluate(next, coMix)
			if !ok || math.Abs(v-want.Value) > 1e-9*want.Value {
				t.Errorf("installed weights evaluate to %v (ok %v), the solution's value is %v", v, ok, want.Value)
			}
			i := a.entry(0, 1)
			t.Logf("%s: share on the lossy direct channel %.4f, value %.4g, loss %.3g", tc.obj, next[i], want.Value, want.LossRate)
		})
	}
	// Bit rates in force: every objective solves on the telemetry's.
	for _, tc := range []struct {
		obj  Objective
		want float64
	}{
		{Objective{Name: ObjectiveLoss}, 62.5},
		{Objective{Name: ObjectiveMix, Mix: Mix{Delay: 1}}, 62.5},
		{Objective{Name: ObjectiveMinMaxUtil}, 62.5},
		{Objective{Name: ObjectiveMinDelay}, 62.5},
	} {
		p := Defaults(CentralOptimalKind)
		p.Objective, p.MeanPacketBytes, p.PacketSizeSCV = tc.obj, 1000, 1
		ag, err := New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		a := ag.(*CentralOptimal)
		a.demand[0][1] = 10
		a.bandwidth[0] = 0.5e6
		next := make([]float64, len(a.w))
		if _, err := a.sol.solveInto(a, next); err != nil {
			t.Fatal(err)
		}
		if got := a.sol.s.Network().Channels[0].Capacity; got != tc.want {
			t.Errorf("%s: channel 0 at half its bit rate solved with capacity %v packets/s, want %v", tc.obj, got, tc.want)
		}
	}
	for _, tc := range []struct{ name, want string }{{ObjectiveUtilisation, ObjectiveMinMaxUtil}, {ObjectiveDelay, ObjectiveMinDelay}} {
		p := Defaults(CentralOptimalKind)
		p.Objective.Name = tc.name
		if got := coObjective(p.Objective).Name; got != tc.want {
			t.Errorf("objective %s solves as %s, want %s", tc.name, got, tc.want)
		}
	}
}

// BenchmarkCentralOptimalInstall measures one install of central-optimal on
// a 50-node network (a 5×10 grid of 1 Mbit/s links) with demand between all
// 2,450 ordered pairs, scaled so that the optimum's maximum utilisation is
// 0.7: the solve (at the default epsilon), the per-destination splits and
// the damped install. Reported: ms/install and the solution's maximum
// utilisation.
func BenchmarkCentralOptimalInstall(b *testing.B) {
	g := &sim.Graph{Name: "grid-5x10"}
	const rows, cols = 5, 10
	for i := 0; i < rows*cols; i++ {
		g.Nodes = append(g.Nodes, sim.Node{Name: "n" + strconv.Itoa(i)})
	}
	for r := 0; r < rows; r++ {
		for c := 0; c < cols; c++ {
			v := r*cols + c
			if c+1 < cols {
				g.Links = append(g.Links, sim.Link{A: v, B: v + 1, Bandwidth: 1e6, Delay: sim.Millisecond, Buffer: 50})
			}
			if r+1 < rows {
				g.Links = append(g.Links, sim.Link{A: v, B: v + cols, Bandwidth: 1e6, Delay: sim.Millisecond, Buffer: 50})
			}
		}
	}
	net := sim.Compile(g)
	for _, obj := range []Objective{{Name: ObjectiveMinMaxUtil}, {Name: ObjectiveMinDelay}, {Name: ObjectiveLoss},
		{Name: ObjectiveMix, Mix: Mix{Delay: 1, Loss: 10, Utilisation: 1}}} {
		b.Run(obj.String(), func(b *testing.B) {
			p := Defaults(CentralOptimalKind)
			p.Objective = obj
			ag, err := New(p, net)
			if err != nil {
				b.Fatal(err)
			}
			a := ag.(*CentralOptimal)
			for s := range a.demand {
				for d := range a.demand[s] {
					if s != d {
						a.demand[s][d] = 1
					}
				}
			}
			next := make([]float64, len(a.w))
			a.p.Objective = Objective{Name: ObjectiveMinMaxUtil} // the scale comes from the min–max optimum
			if _, err := a.sol.solveInto(a, next); err != nil {
				b.Fatal(err)
			}
			a.p.Objective = obj
			for s := range a.demand { // scaled so that the optimum runs at 0.7
				for d := range a.demand[s] {
					a.demand[s][d] *= 0.7 / a.LastUtil
				}
			}
			up := slices.Repeat([]bool{true}, len(net.Channels))
			b.ReportAllocs()
			b.ResetTimer()
			cpu := cpuSeconds()
			for i := 0; i < b.N; i++ {
				a.zeroLoadInto(next)
				if _, err := a.sol.solveInto(a, next); err != nil {
					b.Fatal(err)
				}
				a.install(coPending{w: next, usable: up})
			}
			b.ReportMetric((cpuSeconds()-cpu)/float64(b.N), "cpu-s/install")
			b.ReportMetric(float64(b.Elapsed().Milliseconds())/float64(b.N), "ms/install")
			b.ReportMetric(a.LastUtil, "max-util")
		})
	}
}

// cpuSeconds returns the process's user+system CPU time in seconds: on a
// shared machine wall time counts waiting for a core, this does not.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) * 1e-9
}
