package agents_test

import (
	"errors"
	"math"
	"testing"

	"hoplore/agents"
	"hoplore/sim"
)

// central-q's objective decides between a short lossy path and a long
// clean one: s→a→d (link s–a loses 20% of what crosses it, by link
// conditions) against s→b→c→d, one stream s→d of 200 packets/s (16% of a
// 10 Mbit/s link). With objective loss (reward −drop fraction) the learner
// moves the stream to the clean path; with objective delay and no drop
// penalty (reward −mean delivery time: the lost packets cost nothing) it
// keeps the short one. With objective utilisation and no loss, but link
// a–d at 2.5 Mbit/s (the stream loads it to 64%, the long path's links to
// 16%), the learner moves to the path of the lower bottleneck, the long one. The split is read from the
// packets the source sent on each first channel after a 20 s warm-up;
// exploration (5%) may keep a little on the other path. Measured split,
// long path's share: loss 0.975, delay (drop_penalty 0) 0.000, delay with
// the default 1 s penalty 0.975 (a drop then costs a second of delivery
// time), utilisation 0.998, mix {delay: 1, loss: 20} 0.975, mix {delay: 1}
// 0.000.
func TestCentralQObjective(t *testing.T) {
	g := &sim.Graph{Name: "lossy-short"}
	for _, n := range []string{"s", "a", "b", "c", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	for _, l := range [][2]int{{0, 1}, {1, 4}, {0, 2}, {2, 3}, {3, 4}} {
		g.Links = append(g.Links, sim.Link{A: l[0], B: l[1], Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64})
	}
	rates := make([][]float64, 5)
	for i := range rates {
		rates[i] = make([]float64, 5)
	}
	rates[0][4] = 200
	named := func(n string) agents.Objective { return agents.Objective{Name: n} }
	mix := func(m agents.Mix) agents.Objective { return agents.Objective{Name: agents.ObjectiveMix, Mix: m} }
	for _, c := range []struct {
		objective agents.Objective
		penalty   sim.Time
		loss      float64
		slowAD    bool // link a–d at 2.5 Mbit/s
		long      bool // the stream should end on the long path
	}{
		{named(agents.ObjectiveLoss), sim.Second, 0.2, false, true},
		{named(agents.ObjectiveDelay), 0, 0.2, false, false},
		{named(agents.ObjectiveDelay), sim.Second, 0.2, false, true},
		{named(agents.ObjectiveUtilisation), sim.Second, 0, true, true},
		// mix rewards near −(1 + w_loss·0.2) on the short path and −1.5 on
		// the long one (delay in units of the short path's zero-load time;
		// drop_penalty does not enter a mix)
		{mix(agents.Mix{Delay: 1, Loss: 20}), sim.Second, 0.2, false, true},
		{mix(agents.Mix{Delay: 1}), sim.Second, 0.2, false, false},
	} {
		g.Links[1].Bandwidth = 10e6
		if c.slowAD {
			g.Links[1].Bandwidth = 2.5e6
		}
		net := sim.Compile(g)
		p := agents.Defaults(agents.CentralQKind)
		p.Objective, p.DropPenalty, p.K, p.Every = c.objective, c.penalty, 2, sim.Second
		a, err := agents.New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		r, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 3, AgentSeed: 4, Duration: 60 * sim.Second, Warmup: 20 * sim.Second,
			Bin: sim.Second, ControlDelay: p.ControlDelay,
			Traffic:    sim.Traffic{Rates: rates, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
			Conditions: []sim.LinkCondition{{Link: 0, Loss: c.loss, SetLoss: true}}})
		if err != nil {
			t.Fatal(err)
		}
		short, long := r.Channels[0].Packets, r.Channels[4].Packets // s→a, s→b
		share := float64(long) / float64(short+long)
		t.Logf("objective %s, drop_penalty %gs: long path's share %.3f (%d of %d packets), loss %.3f",
			c.objective, c.penalty.Seconds(), share, long, short+long, float64(r.DroppedTotal())/float64(r.Generated))
		if c.long && share < 0.8 || !c.long && share > 0.2 {
			t.Errorf("objective %s, drop_penalty %gs: long path's share %.3f, want it %s", c.objective, c.penalty.Seconds(), share, map[bool]string{true: "above 0.8", false: "below 0.2"}[c.long])
		}
	}
}

// q-routing's objective on the same short lossy path (s→a→d, link s–a
// losing 20%) against the long clean one (s→b→c→d), one stream s→d of 200
// packets/s of 1000 bytes. With objective loss node s composes the drop
// frequency it observes on its channel with the next node's reported loss
// estimate, so Q_s(d,a) approaches 1 − (1 − 0.2)(1 − 0) = 0.2 (Watkins &
// Dayan, "Q-learning", 1992: the Bellman value of a terminal loss cost)
// while Q_s(d,b) stays 0, and the stream moves to the long path. With objective delay a lost
// packet brings no feedback (Boyan & Littman 1994), the estimates are the
// delivery times of the packets that arrive, and the stream stays on the
// short path. The split is read from the packets s sent on each first
// channel after a 5 s warm-up; without exploration it is all or nothing.
// With no loss and link a–d at 5 Mbit/s the stream loads it to 32%, the
// long path's links to 16%; under objective utilisation the minimax
// estimate via a approaches 0.32 and via b 0.16, and the stream moves to
// the long path. (Objective delay leaves the short path there too, though
// its mean delivery time, 4.4 ms at zero load plus an M/D/1 wait of
// 0.38 ms, is below the long path's 5.4 ms: at learning rate 0.5 without
// exploration, one wait of two packets makes the long path look faster and
// it is never tried again; so no contrast with delay is claimed there.)
// Every variant runs every case. Measured long path's share (plain,
// predictive, dual, confidence): loss 1.000 for all four; delay 0.000 for
// all; on the slow link utilisation 0.995, 0.985, 0.995, 0.995; mix
// {delay: 1, loss: 20} 1.000, 0.997, 1.000, 1.000; mix {delay: 2} 0.000
// for all; on the slow link mix {delay: 1, utilisation: 10} 0.946, 0.677,
// 0.946, 0.837.
func TestQRoutingObjective(t *testing.T) {
	g := &sim.Graph{Name: "lossy-short"}
	for _, n := range []string{"s", "a", "b", "c", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	for _, l := range [][2]int{{0, 1}, {1, 4}, {0, 2}, {2, 3}, {3, 4}} {
		g.Links = append(g.Links, sim.Link{A: l[0], B: l[1], Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64})
	}
	rates := make([][]float64, 5)
	for i := range rates {
		rates[i] = make([]float64, 5)
	}
	rates[0][4] = 200
	var loss float64
	named := func(n string) agents.Objective { return agents.Objective{Name: n} }
	mix := func(m agents.Mix) agents.Objective { return agents.Objective{Name: agents.ObjectiveMix, Mix: m} }
	type objCase struct {
		variant   string
		objective agents.Objective
		slowAD    bool    // link a–d at 5 Mbit/s, no loss
		long      float64 // least share of the long path wanted; 0: at most 0.01
		label     string
	}
	var cases []objCase
	for _, v := range []string{"plain", "predictive", "dual", "confidence"} {
		label := func(l string) string {
			if v != "plain" {
				return ""
			}
			return l
		}
		cases = append(cases,
			objCase{v, named(agents.ObjectiveLoss), false, 0.99, label("q-routing(objective=loss)")},
			objCase{v, named(agents.ObjectiveDelay), false, 0, label("q-routing")},
			// the abandoned short path keeps the utilisation class it was
			// left in (0.20 to 0.25); when the long path's measured
			// utilisation (0.16, standard deviation about 0.02) touches
			// that class the lower delivery time takes the stream back
			// for a while: a few percent on the short path
			objCase{v, named(agents.ObjectiveUtilisation), true, 0.9, label("q-routing(objective=utilisation)")},
			// mix costs near 1 + w_loss·0.2 on the lossy short path and 1.5
			// on the long one (three hops against two, in units of the
			// short path's zero-load time): loss weight 20 leaves the short
			// path; a mix of delay alone decides as objective delay. (Near
			// the break-even weight 2.5 a greedy learner without
			// exploration prefers the clean path well before it; see the
			// README, q-routing's objectives.)
			objCase{v, mix(agents.Mix{Delay: 1, Loss: 20}), false, 0.99, label("q-routing(objective=mix/delay=1/loss=20)")},
			objCase{v, mix(agents.Mix{Delay: 2}), false, 0, label("q-routing(objective=mix/delay=2)")},
			// on the slow link a mix weighing utilisation: costs near
			// 1 + 0.32·w_u via a and 1.5 + 0.16·w_u via b, so w_u = 10
			// leaves the short path; the short path's stale cost stays
			// near the value at which it was left, so the long path's
			// fluctuations bring the stream back at times (predictive
			// more often: the short path's delivery time recovers): most
			// of the stream, not all, is on the long path
			objCase{v, mix(agents.Mix{Delay: 1, Utilisation: 10}), true, 0.6, ""},
		)
	}
	for _, c := range cases {
		g.Links[1].Bandwidth, loss = 10e6, 0.2
		if c.slowAD {
			g.Links[1].Bandwidth, loss = 5e6, 0
		}
		net := sim.Compile(g)
		p := agents.Defaults(agents.QRoutingKind)
		p.Variant, p.Objective = c.variant, c.objective
		if err := p.Validate(); err != nil {
			t.Fatal(err)
		}
		a, err := agents.New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		r, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 3, AgentSeed: 4, Duration: 25 * sim.Second, Warmup: 5 * sim.Second,
			Bin:        sim.Second,
			Traffic:    sim.Traffic{Rates: rates, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
			Conditions: []sim.LinkCondition{{Link: 0, Loss: loss, SetLoss: true}}})
		if err != nil {
			t.Fatal(err)
		}
		short, long := r.Channels[0].Packets, r.Channels[4].Packets // s→a, s→b
		share := float64(long) / float64(short+long)
		t.Logf("%s, objective %s: long path's share %.3f (%d of %d packets), loss %.3f",
			c.variant, c.objective, share, long, short+long, float64(r.DroppedTotal())/float64(r.Generated))
		if c.long > 0 && share < c.long {
			t.Errorf("%s, objective %s: long path's share %.3f, want it above %g", c.variant, c.objective, share, c.long)
		}
		if c.long == 0 && share > 0.01 {
			t.Errorf("%s, objective %s: long path's share %.3f, want it below 0.01", c.variant, c.objective, share)
		}
		if got := a.Name(); c.label != "" && got != c.label {
			t.Errorf("label %q, want %q", got, c.label)
		}
	}
}

// q-routing's objective field refuses unknown names and bad mixes, naming
// the field it blames; every variant, give_up_after, consensus and
// start_from take every objective.
func TestQRoutingObjectiveChecks(t *testing.T) {
	for _, c := range []struct {
		set   func(p *agents.Params)
		field string // "" when valid
	}{
		{func(p *agents.Params) { p.Objective.Name = "fastest" }, "objective"},
		{func(p *agents.Params) { p.Objective.Name = agents.ObjectiveMix }, "objective.mix"},
		{func(p *agents.Params) {
			p.Objective = agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: -1}}
		}, "objective.mix.loss"},
		{func(p *agents.Params) {
			p.Objective = agents.Objective{Name: agents.ObjectiveLoss, Mix: agents.Mix{Loss: 1}}
		}, "objective"},
		{func(p *agents.Params) {
			p.Objective = agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Loss: 1}}
			p.Variant = "predictive"
		}, ""},
		{func(p *agents.Params) { p.Objective.Name = agents.ObjectiveUtilisation; p.Variant = "dual" }, ""},
		{func(p *agents.Params) { p.Objective.Name = agents.ObjectiveUtilisation; p.Variant = "predictive" }, ""},
		{func(p *agents.Params) { p.Objective.Name = agents.ObjectiveLoss; p.Variant = "confidence" }, ""},
		{func(p *agents.Params) { p.Objective.Name = agents.ObjectiveLoss; p.GiveUpAfter = sim.Second }, ""},
		{func(p *agents.Params) {
			p.Objective.Name = agents.ObjectiveLoss
			p.Consensus = &agents.Consensus{Every: sim.Second, Weight: 0.5}
		}, ""},
		{func(p *agents.Params) {
			p.Objective.Name = agents.ObjectiveUtilisation
			p.StartFrom = &agents.Origin{Results: "r", Agent: "q-routing"}
		}, ""},
	} {
		p := agents.Defaults(agents.QRoutingKind)
		c.set(&p)
		err := p.Validate()
		var pe *agents.ParamError
		switch {
		case c.field == "" && err != nil:
			t.Errorf("Validate() = %v, want nil", err)
		case c.field != "" && (!errors.As(err, &pe) || pe.Field != c.field):
			t.Errorf("Validate() = %v, want an error naming %s", err, c.field)
		}
	}
}

// Under objective loss the estimate composes the losses of the hops: on a
// chain s–m–d whose links lose 20% and 10% of what crosses them, node s's
// only estimate for d tends to 1 − (1 − 0.2)(1 − 0.1) = 0.28 and m's to 0.1
// (the Bellman target of a terminal loss cost; Watkins & Dayan 1992). Each
// node's estimate composes its channel's drop frequency p̂, an EWMA of
// rate 0.001 over the packets it sends there (0 or 1 each, independent),
// whose standard deviation is σ_p = √(0.001/1.999·p(1 − p)) (Roberts,
// "Control chart tests based on geometric moving averages", Technometrics
// 1, 1959): 0.0067 at p = 0.1, 0.0089 at 0.2; with the loss beyond the
// next node, which at m is 0 and at s an average of m's estimates, whose
// deviation is at most m's. Deviations add (Minkowski), so the checks allow
// z = 3.29 of σ_p(0.1) at m and of σ_p(0.2) + σ_p(0.1) at s. Measured:
// s 0.297, m 0.109.
func TestQRoutingLossEstimate(t *testing.T) {
	g := &sim.Graph{Name: "lossy-chain"}
	for _, n := range []string{"s", "m", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	for _, l := range [][2]int{{0, 1}, {1, 2}} {
		g.Links = append(g.Links, sim.Link{A: l[0], B: l[1], Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64})
	}
	net := sim.Compile(g)
	rates := [][]float64{{0, 0, 500}, {0, 0, 0}, {0, 0, 0}}
	const alpha = 0.0005
	p := agents.Defaults(agents.QRoutingKind)
	p.Objective.Name, p.LearningRate = agents.ObjectiveLoss, alpha
	a, err := agents.New(p, net)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 5, AgentSeed: 6, Duration: 60 * sim.Second, Bin: sim.Second,
		Traffic:    sim.Traffic{Rates: rates, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
		Conditions: []sim.LinkCondition{{Link: 0, Loss: 0.2, SetLoss: true}, {Link: 1, Loss: 0.1, SetLoss: true}}}); err != nil {
		t.Fatal(err)
	}
	sigmaP := func(p float64) float64 { return math.Sqrt(0.001 / 1.999 * p * (1 - p)) }
	for _, c := range []struct {
		node, next int
		want, tol  float64
	}{{0, 1, 1 - 0.8*0.9, 3.29 * (sigmaP(0.2) + sigmaP(0.1))}, {1, 2, 0.1, 3.29 * sigmaP(0.1)}} {
		k := -1
		for i, ch := range net.Out[c.node] {
			if net.Channels[ch].To == c.next {
				k = i
			}
		}
		got := agents.QRoutingValue(a, c.node, 2, k)
		t.Logf("node %s: loss estimate for d %.4f, want %.4f ± %.4f", g.Nodes[c.node].Name, got, c.want, c.tol)
		if math.Abs(got-c.want) > c.tol {
			t.Errorf("node %s: loss estimate for d %.4f, want %.4f ± %.4f", g.Nodes[c.node].Name, got, c.want, c.tol)
		}
	}
}

// Under objective utilisation the estimate is the path's bottleneck: on a
// chain s–m–d carrying 200 packets/s of 1000 bytes, link s–m at 10 Mbit/s
// (utilisation 0.16) and m–d at 5 Mbit/s (0.32), both s's and m's
// estimates for d tend to max(0.16, 0.32) = 0.32. The busy time of Poisson
// arrivals over one second is N·S with N Poisson of mean 200, standard
// deviation √200·1.6 ms = 0.0226 of a second (common practice for a
// compound Poisson sum); the EWMA of time constant 1 s averages over about
// that much or more, so the checks allow z = 3.29 of 0.0226.
// Measured: s 0.343, m 0.342.
func TestQRoutingUtilisationEstimate(t *testing.T) {
	g := &sim.Graph{Name: "slow-chain"}
	for _, n := range []string{"s", "m", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	g.Links = []sim.Link{{A: 0, B: 1, Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64}, {A: 1, B: 2, Bandwidth: 5e6, Delay: sim.Millisecond, Buffer: 64}}
	net := sim.Compile(g)
	p := agents.Defaults(agents.QRoutingKind)
	p.Objective.Name = agents.ObjectiveUtilisation
	a, err := agents.New(p, net)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 7, AgentSeed: 8, Duration: 30 * sim.Second, Bin: sim.Second,
		Traffic: sim.Traffic{Rates: [][]float64{{0, 0, 200}, {0, 0, 0}, {0, 0, 0}}, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}}); err != nil {
		t.Fatal(err)
	}
	tol := 3.29 * 0.0226
	for _, c := range []struct{ node, next int }{{0, 1}, {1, 2}} {
		k := -1
		for i, ch := range net.Out[c.node] {
			if net.Channels[ch].To == c.next {
				k = i
			}
		}
		got := agents.QRoutingValue(a, c.node, 2, k)
		t.Logf("node %s: utilisation estimate for d %.4f, want 0.32 ± %.4f", g.Nodes[c.node].Name, got, tol)
		if math.Abs(got-0.32) > tol {
			t.Errorf("node %s: utilisation estimate for d %.4f, want 0.32 ± %.4f", g.Nodes[c.node].Name, got, tol)
		}
	}
}

// Every variant's loss estimates compose the hops' losses, and dual's
// backward estimates do too: on the chain s–m–d of TestQRoutingLossEstimate
// (links losing 20% and 10% of what crosses them, either way) with 500
// packets/s from s to d and 500 from d to s, Q_s(d, m) and Q_d(s, m) tend
// to 1 − (1 − 0.2)(1 − 0.1) = 0.28, Q_m(d, d) to 0.1 and Q_m(s, s) to 0.2
// (Watkins & Dayan 1992). Dual's backward update at y moves y's loss
// beyond x towards V_x(src), composed with y's own drop frequency on its
// channel to x. In every variant, and with consensus (every second, weight
// 0.5), the loss beyond the next node is a convex combination of that
// node's reports, so its deviation is at most theirs; the bounds of
// TestQRoutingLossEstimate (σ_p of each hop's drop frequency, added) hold,
// z = 3.29.
func TestQRoutingLossEstimateVariants(t *testing.T) {
	g := &sim.Graph{Name: "lossy-chain"}
	for _, n := range []string{"s", "m", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	for _, l := range [][2]int{{0, 1}, {1, 2}} {
		g.Links = append(g.Links, sim.Link{A: l[0], B: l[1], Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64})
	}
	net := sim.Compile(g)
	rates := [][]float64{{0, 0, 500}, {0, 0, 0}, {500, 0, 0}}
	const alpha = 0.0005
	sigmaP := func(p float64) float64 { return math.Sqrt(0.001 / 1.999 * p * (1 - p)) }
	type variant struct {
		name      string
		consensus bool
	}
	for _, v := range []variant{{"plain", false}, {"predictive", false}, {"dual", false}, {"confidence", false},
		{"plain", true}, {"dual", true}} {
		p := agents.Defaults(agents.QRoutingKind)
		p.Variant, p.Objective.Name, p.LearningRate = v.name, agents.ObjectiveLoss, alpha
		if v.consensus {
			p.Consensus = &agents.Consensus{Every: sim.Second, Weight: 0.5}
		}
		a, err := agents.New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 5, AgentSeed: 6, Duration: 60 * sim.Second, Bin: sim.Second,
			Traffic:    sim.Traffic{Rates: rates, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
			Conditions: []sim.LinkCondition{{Link: 0, Loss: 0.2, SetLoss: true}, {Link: 1, Loss: 0.1, SetLoss: true}}}); err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			node, dst, next int
			want, tol       float64
		}{
			{0, 2, 1, 1 - 0.8*0.9, 3.29 * (sigmaP(0.2) + sigmaP(0.1))},
			{1, 2, 2, 0.1, 3.29 * sigmaP(0.1)},
			{2, 0, 1, 1 - 0.8*0.9, 3.29 * (sigmaP(0.1) + sigmaP(0.2))},
			{1, 0, 0, 0.2, 3.29 * sigmaP(0.2)},
		} {
			k := -1
			for i, ch := range net.Out[c.node] {
				if net.Channels[ch].To == c.next {
					k = i
				}
			}
			got := agents.QRoutingValue(a, c.node, c.dst, k)
			t.Logf("%v: Q_%s(%s, %s) = %.4f, want %.4f ± %.4f", v, g.Nodes[c.node].Name, g.Nodes[c.dst].Name, g.Nodes[c.next].Name, got, c.want, c.tol)
			if math.Abs(got-c.want) > c.tol {
				t.Errorf("%v: Q_%s(%s, %s) = %.4f, want %.4f ± %.4f", v, g.Nodes[c.node].Name, g.Nodes[c.dst].Name, g.Nodes[c.next].Name, got, c.want, c.tol)
			}
		}
	}
}

// Near the mix's break-even weight (short path losing 20% against the long
// clean one: mean costs 1 + 0.2·W and 1.5, so W = 2.5) the learner's choice
// follows the mean costs: at the default learning rate 0.5 with
// exploration 0.05, the long path's share, averaged over three seeds, is
// below one half at W = 2 (the short path cheaper by 0.1) and above it at
// W = 3 (the long path cheaper by 0.1), and rises with W. Measured: 0.043
// (W = 1), 0.195 (2), 0.742 (3), 0.894 (4). When the loss estimate sampled
// the packets' fates directly (1 for a drop, the next node's value for an
// arrival) the same runs gave 0.68 to 0.73 at W = 1 and 0.92 to 0.94 at
// W = 3: the clean path won everywhere (see the README, q-routing's
// objectives).
func TestQRoutingMixBreakEven(t *testing.T) {
	g := &sim.Graph{Name: "lossy-short"}
	for _, n := range []string{"s", "a", "b", "c", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	for _, l := range [][2]int{{0, 1}, {1, 4}, {0, 2}, {2, 3}, {3, 4}} {
		g.Links = append(g.Links, sim.Link{A: l[0], B: l[1], Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64})
	}
	rates := make([][]float64, 5)
	for i := range rates {
		rates[i] = make([]float64, 5)
	}
	rates[0][4] = 200
	net := sim.Compile(g)
	var shares []float64
	for _, w := range []float64{1, 2, 3, 4} {
		sum := 0.0
		for seed := uint64(1); seed <= 3; seed++ {
			p := agents.Defaults(agents.QRoutingKind)
			p.Objective = agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: w}}
			p.Explore = 0.05
			a, err := agents.New(p, net)
			if err != nil {
				t.Fatal(err)
			}
			r, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: seed, AgentSeed: seed + 100, Duration: 60 * sim.Second, Warmup: 20 * sim.Second,
				Bin:        sim.Second,
				Traffic:    sim.Traffic{Rates: rates, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
				Conditions: []sim.LinkCondition{{Link: 0, Loss: 0.2, SetLoss: true}}})
			if err != nil {
				t.Fatal(err)
			}
			short, long := r.Channels[0].Packets, r.Channels[4].Packets
			sum += float64(long) / float64(short+long)
		}
		shares = append(shares, sum/3)
		t.Logf("mix {delay: 1, loss: %g}: long path's mean share %.3f", w, sum/3)
	}
	for i := 1; i < len(shares); i++ {
		if shares[i] < shares[i-1] {
			t.Errorf("long path's share %.3f at the higher weight after %.3f", shares[i], shares[i-1])
		}
	}
	if shares[1] > 0.5 || shares[2] < 0.5 {
		t.Errorf("long path's share %.3f at W = 2 (want below 0.5) and %.3f at W = 3 (want above 0.5)", shares[1], shares[2])
	}
}

// Every variant's utilisation estimates are the path's bottleneck, and
// dual's backward estimates too: on the chain of TestQRoutingUtilisation-
// Estimate (s–m at 10 Mbit/s, m–d at 5 Mbit/s) with 200 packets/s of 1000
// bytes each way, Q_s(d, m), Q_m(d, d) and Q_d(s, m) tend to
// max(0.16, 0.32) = 0.32 and Q_m(s, s) to 0.16. Each estimate averages
// max(u_xy, V_y(d)) over feedback and, for dual, backward updates, whose
// channel terms are EWMAs of the busy time over about a second: standard
// deviation at most that of one second's busy time, 0.0226 (as in
// TestQRoutingUtilisationEstimate), z = 3.29.
func TestQRoutingUtilisationEstimateVariants(t *testing.T) {
	g := &sim.Graph{Name: "slow-chain"}
	for _, n := range []string{"s", "m", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	g.Links = []sim.Link{{A: 0, B: 1, Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64}, {A: 1, B: 2, Bandwidth: 5e6, Delay: sim.Millisecond, Buffer: 64}}
	net := sim.Compile(g)
	tol := 3.29 * 0.0226
	for _, v := range []string{"plain", "predictive", "dual", "confidence"} {
		p := agents.Defaults(agents.QRoutingKind)
		p.Variant, p.Objective.Name = v, agents.ObjectiveUtilisation
		a, err := agents.New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 7, AgentSeed: 8, Duration: 30 * sim.Second, Bin: sim.Second,
			Traffic: sim.Traffic{Rates: [][]float64{{0, 0, 200}, {0, 0, 0}, {200, 0, 0}}, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}}); err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			node, dst, next int
			want            float64
		}{{0, 2, 1, 0.32}, {1, 2, 2, 0.32}, {2, 0, 1, 0.32}, {1, 0, 0, 0.16}} {
			k := -1
			for i, ch := range net.Out[c.node] {
				if net.Channels[ch].To == c.next {
					k = i
				}
			}
			got := agents.QRoutingValue(a, c.node, c.dst, k)
			t.Logf("%s: Q_%s(%s, %s) = %.4f, want %.2f ± %.4f", v, g.Nodes[c.node].Name, g.Nodes[c.dst].Name, g.Nodes[c.next].Name, got, c.want, tol)
			if math.Abs(got-c.want) > tol {
				t.Errorf("%s: Q_%s(%s, %s) = %.4f, want %.2f ± %.4f", v, g.Nodes[c.node].Name, g.Nodes[c.dst].Name, g.Nodes[c.next].Name, got, c.want, tol)
			}
		}
	}
}
