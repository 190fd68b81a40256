package agents_test

import (
	"math"
	"sync"
	"testing"

	"hoplore/agents"
	"hoplore/agents/agenttest"
	"hoplore/sim"
)

// outcome summarises one run.
type outcome struct {
	mean, loss, hops  float64
	routeChanges      int64
	intervals         float64
	generated, events int64
}

func summarise(r *sim.Result) outcome {
	return outcome{
		mean:         r.DeliverySum / float64(r.Delivered),
		loss:         float64(r.DroppedTotal()) / float64(r.Generated),
		hops:         float64(r.HopsSum) / float64(r.Delivered),
		routeChanges: r.RouteChanges,
		generated:    r.Generated,
		events:       r.Events,
	}
}

// runSeeds runs p on g at load for each seed, in parallel, and returns the
// outcomes in seed order.
func runSeeds(t *testing.T, g *sim.Graph, p agents.Params, load float64, dur, warm sim.Time, seeds []uint64) []outcome {
	t.Helper()
	out := make([]outcome, len(seeds))
	var wg sync.WaitGroup
	for i, s := range seeds {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sc := agenttest.Scenario{Graph: g, Load: load, Duration: dur, Warmup: warm, Seed: s, ControlDelay: p.ControlDelay}
			out[i] = summarise(agenttest.RunScenario(t, sc, p))
		}()
	}
	wg.Wait()
	return out
}

func avg(os []outcome, f func(outcome) float64) float64 {
	s := 0.0
	for _, o := range os {
		s += f(o)
	}
	return s / float64(len(os))
}

func meanOf(o outcome) float64 { return o.mean }
func lossOf(o outcome) float64 { return o.loss }

// TestBoyanLittmanOrdering checks the published ordering of Q-routing
// against shortest paths (Boyan & Littman, "Packet routing in dynamically
// changing networks: a reinforcement learning approach", NIPS 6, 1994) on
// their irregular 6×6 grid, whose two halves meet at a central and an upper
// bridge: at low load Q-routing's mean delivery time is within a few
// percent of shortest path's; once the central bridge is past its capacity
// under shortest paths, Q-routing loses far fewer packets and delivers
// faster. The same ordering for the load-adaptive controller (without
// hold-down; see TestHoldDownDampsOscillation for the hold-down's price).
//
// Tolerances were fixed from a 5-seed pilot before this test was written
// (load 1.15, 100 s, 40 s warm-up): shortest path mean 0.197 s (sd 0.001),
// loss 0.054 (sd 0.004); q-routing mean 0.101 s (sd 0.023; 95% CI upper
// bound 0.130 = 0.66 × shortest path), loss 0.0036 (upper bound 0.010 =
// 0.19 × shortest path). The bounds asserted below (0.8 and 0.5) lie
// outside those intervals. At load 0.3 the pilot's means agreed to 0.3%;
// 3% is asserted.
func TestBoyanLittmanOrdering(t *testing.T) {
	g := agenttest.BoyanLittmanGrid()
	seeds := []uint64{1, 2, 3}
	sp := agents.Defaults(agents.ShortestPathKind)
	qr := agents.Defaults(agents.QRoutingKind)
	ca := agents.Defaults(agents.CentralAdaptiveKind)
	ca.HoldDown = 0
	const dur, warm = 100 * sim.Second, 40 * sim.Second
	t.Run("low", func(t *testing.T) {
		t.Parallel()
		base := runSeeds(t, g, sp, 0.3, dur, warm, seeds)
		for _, p := range []agents.Params{qr, ca} {
			got := runSeeds(t, g, p, 0.3, dur, warm, seeds)
			ratio := avg(got, meanOf) / avg(base, meanOf)
			t.Logf("load 0.3: %s mean %.4f s, shortest path %.4f s (ratio %.4f)", p.Canonical(), avg(got, meanOf), avg(base, meanOf), ratio)
			if ratio < 0.97 || ratio > 1.03 {
				t.Errorf("load 0.3: %s mean delivery %.4f s is not within 3%% of shortest path's %.4f s", p.Canonical(), avg(got, meanOf), avg(base, meanOf))
			}
			if l := avg(got, lossOf); l != 0 {
				t.Errorf("load 0.3: %s lost %.4f of packets, want 0", p.Canonical(), l)
			}
		}
	})
	t.Run("high", func(t *testing.T) {
		t.Parallel()
		base := runSeeds(t, g, sp, 1.15, dur, warm, seeds)
		if avg(base, lossOf) < 0.01 {
			t.Fatalf("shortest path lost only %.4f at load 1.15: the bridge is not past capacity", avg(base, lossOf))
		}
		for _, p := range []agents.Params{qr, ca} {
			got := runSeeds(t, g, p, 1.15, dur, warm, seeds)
			t.Logf("load 1.15: %s mean %.4f s loss %.4f; shortest path mean %.4f s loss %.4f",
				p.Canonical(), avg(got, meanOf), avg(got, lossOf), avg(base, meanOf), avg(base, lossOf))
			if m, b := avg(got, meanOf), avg(base, meanOf); m > 0.8*b {
				t.Errorf("load 1.15: %s mean delivery %.4f s, want below 0.8 × shortest path's %.4f s", p.Canonical(), m, b)
			}
			if l, b := avg(got, lossOf), avg(base, lossOf); l > 0.5*b {
				t.Errorf("load 1.15: %s loss %.4f, want below 0.5 × shortest path's %.4f", p.Canonical(), l, b)
			}
		}
	})
}

// TestHoldDownDampsOscillation checks Khanna & Zinky's observation
// ("The revised ARPANET routing metric", SIGCOMM 1989) that delay-based
// routing recomputed from measured load oscillates on a bottleneck: under
// the delay metric (cost_ceiling 0, cost_step 0) and without hold-down the
// controller changes a large share of its next hops at every interval; a
// hold-down cuts the changes. Pilot (3 seeds, load 1.15, 100 s, counted
// over the whole run): hold_down 0 made 17,800–19,100 changes in 50
// intervals (≈ 28% of the 1,260 node–destination entries per interval);
// hold_down 10s made 8,000–9,300. Asserted: more than 10% of entries per interval without
// hold-down, and at most 0.75 × as many changes with it.
func TestHoldDownDampsOscillation(t *testing.T) {
	g := agenttest.BoyanLittmanGrid()
	seeds := []uint64{1, 2}
	const dur, warm = 100 * sim.Second, 40 * sim.Second
	free := agents.Defaults(agents.CentralAdaptiveKind)
	free.HoldDown, free.CostCeiling, free.CostStep = 0, 0, 0
	held := free
	held.HoldDown = 10 * sim.Second
	a := runSeeds(t, g, free, 1.15, dur, warm, seeds)
	b := runSeeds(t, g, held, 1.15, dur, warm, seeds)
	intervals := float64((dur - warm) / free.Every) // route_changes covers the measured window
	entries := float64(36 * 35)
	ca := avg(a, func(o outcome) float64 { return float64(o.routeChanges) })
	cb := avg(b, func(o outcome) float64 { return float64(o.routeChanges) })
	t.Logf("route changes per interval: hold_down 0 %.0f (%.1f%% of entries), hold_down 10s %.0f; mean delivery %.4f s vs %.4f s, loss %.4f vs %.4f",
		ca/intervals, 100*ca/intervals/entries, cb/intervals, avg(a, meanOf), avg(b, meanOf), avg(a, lossOf), avg(b, lossOf))
	if ca/intervals < 0.1*entries {
		t.Errorf("without hold-down %.0f next-hop changes per interval, want more than 10%% of %.0f entries", ca/intervals, entries)
	}
	if cb > 0.75*ca {
		t.Errorf("hold_down 10s made %.0f route changes, want at most 0.75 × %.0f", cb, ca)
	}
}

// TestQNetworkLearnsShortestPaths checks that q-network, started from random
// networks without the zero-load prior, learns at low load to send every
// packet along a shortest path on a line and a ring: its greedy choice at
// every node for every destination is a neighbour one hop closer (common
// practice: at low load, delivery time grows with hop count).
func TestQNetworkLearnsShortestPaths(t *testing.T) {
	for _, g := range []*sim.Graph{agenttest.Line(5), agenttest.Ring(6)} {
		t.Run(g.Name, func(t *testing.T) {
			t.Parallel()
			net := sim.Compile(g)
			p := agents.Defaults(agents.QNetworkKind)
			a := agents.NewQNetworkFromScratch(p, net)
			sc := agenttest.Scenario{Graph: g, Load: 0.2, Duration: 120 * sim.Second, Warmup: 60 * sim.Second, Seed: 4}
			r, err := sim.Run(sc.Config(net, a))
			if err != nil {
				t.Fatal(err)
			}
			wrong := 0
			for x := 0; x < net.NumNodes(); x++ {
				for d := 0; d < net.NumNodes(); d++ {
					if x == d {
						continue
					}
					y := agents.QNetworkGreedy(a, x, d)
					if net.Hops[y][d] != net.Hops[x][d]-1 {
						wrong++
						t.Errorf("node %d → %d: prefers neighbour %d (%d hops from %d), want one %d hops away", x, d, y, net.Hops[y][d], d, net.Hops[x][d]-1)
					}
				}
			}
			o := summarise(r)
			t.Logf("after learning: mean %.4f s, loss %.4f, stretch %.3f", o.mean, o.loss, r.StretchSum/float64(r.Delivered))
		})
	}
}

// TestPredictiveRecoversAfterLoadFall checks the falling-load behaviour
// Boyan & Littman (1994) report for Q-routing — after load falls it keeps
// using the detours it learned under congestion, because estimates of the
// unused shortest routes are never refreshed — and that predictive
// Q-routing, whose estimates of unused routes drift back towards their best
// value at the learned recovery rate, returns towards shortest paths
// (Choi & Yeung, "Predictive Q-routing: a memory-based reinforcement
// learning approach to adaptive traffic control", NIPS 8, 1996).
//
// The engine's rates are constant, so the fall is two runs: 100 s at load
// 1.3 on the Boyan & Littman grid, then 60 s at load 0.3 starting from the
// learned tables (times shifted), measured after 20 s. Pilot (3 seeds):
// stretch after the fall, plain 1.150–1.165, predictive 1.085–1.092;
// shortest paths give 1.0 by definition. Asserted on 2 seeds: plain above
// 1.10 and predictive at least 0.03 below plain.
func TestPredictiveRecoversAfterLoadFall(t *testing.T) {
	g := agenttest.BoyanLittmanGrid()
	net := sim.Compile(g)
	stretch := func(variant string, seed uint64) float64 {
		p := agents.Defaults(agents.QRoutingKind)
		p.Variant = variant
		a1, err := agents.New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		high := agenttest.Scenario{Graph: g, Load: 1.3, Duration: 100 * sim.Second, Warmup: 40 * sim.Second, Seed: seed}
		if _, err := sim.Run(high.Config(net, a1)); err != nil {
			t.Fatal(err)
		}
		a2 := agents.ContinueQRouting(p, net, a1, high.Duration)
		low := agenttest.Scenario{Graph: g, Load: 0.3, Duration: 60 * sim.Second, Warmup: 20 * sim.Second, Seed: seed + 100}
		r, err := sim.Run(low.Config(net, a2))
		if err != nil {
			t.Fatal(err)
		}
		return r.StretchSum / float64(r.Delivered)
	}
	var plain, pred float64
	var wg sync.WaitGroup
	for _, seed := range []uint64{1, 2} {
		wg.Add(2)
		var a, b float64
		go func() { defer wg.Done(); a = stretch("plain", seed) }()
		go func() { defer wg.Done(); b = stretch("predictive", seed) }()
		wg.Wait()
		plain += a / 2
		pred += b / 2
	}
	t.Logf("stretch at low load after a fall: plain %.3f, predictive %.3f", plain, pred)
	if plain <= 1.10 {
		t.Errorf("plain q-routing's stretch after the fall is %.3f, want above 1.10 (still on detours)", plain)
	}
	if pred > plain-0.03 {
		t.Errorf("predictive q-routing's stretch %.3f, want at least 0.03 below plain's %.3f", pred, plain)
	}
}

// TestBoyanLittmanGridShape checks the reconstructed grid against figures
// counted by hand from the layout agenttest.BoyanLittmanGrid documents: 50 links;
// 16 nodes of degree 2, 12 of degree 3, 8 of degree 4; diameter 11; mean
// shortest-path hop count 4.83 over the 1,260 ordered pairs.
func TestBoyanLittmanGridShape(t *testing.T) {
	g := agenttest.BoyanLittmanGrid()
	if err := g.Validate(); err != nil {
		t.Fatal(err)
	}
	net := sim.Compile(g)
	if len(g.Links) != 50 {
		t.Errorf("got %d links, want 50", len(g.Links))
	}
	deg := map[int]int{}
	for v := range net.Out {
		deg[len(net.Out[v])]++
	}
	if deg[2] != 16 || deg[3] != 12 || deg[4] != 8 {
		t.Errorf("degree counts %v, want 16×2, 12×3, 8×4", deg)
	}
	if d := net.Diameter(); d != 11 {
		t.Errorf("diameter %d, want 11", d)
	}
	sum := 0
	for s := range net.Hops {
		for _, h := range net.Hops[s] {
			sum += int(h)
		}
	}
	if m := float64(sum) / (36 * 35); math.Abs(m-4.83) > 0.005 {
		t.Errorf("mean hop count %.4f, want 4.83", m)
	}
}

// TestDualBeatsPlainAtHighLoad checks the high-load claim of dual
// reinforcement Q-routing (Kumar & Miikkulainen, "Dual reinforcement
// Q-routing: an on-line adaptive routing algorithm", ANNIE 1997: at high
// load its policies are more than twice as good in delivery time as
// Q-routing's) on the Boyan & Littman grid at load 1.3. Pilot on seeds
// 11–15 (not those below): plain mean 0.182 s (sd 0.017), dual 0.078 s
// (sd 0.023), ratio 0.43, whose 95% upper bound from the two intervals is
// 0.66. Asserted: dual's mean below 0.7 × plain's, and no more loss.
func TestDualBeatsPlainAtHighLoad(t *testing.T) {
	g := agenttest.BoyanLittmanGrid()
	seeds := []uint64{1, 2, 3}
	plain := agents.Defaults(agents.QRoutingKind)
	dual := agents.Defaults(agents.QRoutingKind)
	dual.Variant = "dual"
	a := runSeeds(t, g, plain, 1.3, 100*sim.Second, 40*sim.Second, seeds)
	b := runSeeds(t, g, dual, 1.3, 100*sim.Second, 40*sim.Second, seeds)
	t.Logf("load 1.3: plain mean %.4f s loss %.4f; dual mean %.4f s loss %.4f (ratio %.2f)",
		avg(a, meanOf), avg(a, lossOf), avg(b, meanOf), avg(b, lossOf), avg(b, meanOf)/avg(a, meanOf))
	if avg(b, meanOf) > 0.7*avg(a, meanOf) {
		t.Errorf("dual mean delivery %.4f s, want below 0.7 × plain's %.4f s", avg(b, meanOf), avg(a, meanOf))
	}
	if avg(b, lossOf) > avg(a, lossOf) {
		t.Errorf("dual loss %.4f above plain's %.4f", avg(b, lossOf), avg(a, lossOf))
	}
}

// TestCentralQBeatsShortestPathPastCapacity checks that the central
// Q-learner, choosing among 3 shortest candidate paths per pair, loses fewer
// packets than shortest paths once the central bridge of the Boyan & Littman
// grid is past capacity, without slower delivery (common practice for
// multipath traffic engineering: spreading over alternative paths raises the
// load a network carries). Pilot on seeds 11–15 at load 1.15: central-q loss
// 0.032 (sd 0.002), mean 0.190 s; shortest path loss 0.057 (sd 0.002), mean
// 0.198 s; loss ratio 0.56, 95% upper bound 0.60. Asserted: loss below
// 0.75 × shortest path's, mean at most shortest path's.
func TestCentralQBeatsShortestPathPastCapacity(t *testing.T) {
	g := agenttest.BoyanLittmanGrid()
	seeds := []uint64{1, 2, 3}
	a := runSeeds(t, g, agents.Defaults(agents.ShortestPathKind), 1.15, 100*sim.Second, 40*sim.Second, seeds)
	b := runSeeds(t, g, agents.Defaults(agents.CentralQKind), 1.15, 100*sim.Second, 40*sim.Second, seeds)
	t.Logf("load 1.15: shortest path mean %.4f s loss %.4f; central-q mean %.4f s loss %.4f, %d route changes per run",
		avg(a, meanOf), avg(a, lossOf), avg(b, meanOf), avg(b, lossOf), b[0].routeChanges)
	if avg(b, lossOf) > 0.75*avg(a, lossOf) {
		t.Errorf("central-q loss %.4f, want below 0.75 × shortest path's %.4f", avg(b, lossOf), avg(a, lossOf))
	}
	if avg(b, meanOf) > avg(a, meanOf) {
		t.Errorf("central-q mean delivery %.4f s above shortest path's %.4f s", avg(b, meanOf), avg(a, meanOf))
	}
}
