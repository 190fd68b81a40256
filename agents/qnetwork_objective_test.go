package agents_test

import (
	"errors"
	"math"
	"testing"

	"hoplore/agents"
	"hoplore/sim"
)

// lossyShort is the short lossy path against the long clean one: s→a→d
// against s→b→c→d, 10 Mbit/s links of 1 ms with 64-packet buffers; link a–d
// at bandwidth ad.
func lossyShort(ad float64) *sim.Net {
	g := &sim.Graph{Name: "lossy-short"}
	for _, n := range []string{"s", "a", "b", "c", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	for _, l := range [][2]int{{0, 1}, {1, 4}, {0, 2}, {2, 3}, {3, 4}} {
		g.Links = append(g.Links, sim.Link{A: l[0], B: l[1], Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64})
	}
	g.Links[1].Bandwidth = ad
	return sim.Compile(g)
}

// stream returns the rates of n nodes with one stream of rate packets/s
// from s to d.
func stream(n, s, d int, rate float64) [][]float64 {
	m := make([][]float64, n)
	for i := range m {
		m[i] = make([]float64, n)
	}
	m[s][d] = rate
	return m
}

// q-network's objective on the short lossy path (link s–a losing 20%)
// against the long clean one, one stream s→d of 200 packets/s of 1000
// bytes, no exploration. Under objective loss node s's estimate via a is
// 1 − (1 − its measured drop frequency on s→a)(1 − the network's estimate
// of a's value), whose fixed point is the Bellman target 1 − (1 − 0.2)(1 −
// 0) = 0.2 (Watkins & Dayan, "Q-learning", Machine Learning 8, 1992), and
// via b 0: the stream moves to the long path. Under objective delay a lost
// packet brings no feedback (Boyan & Littman 1994) and the stream stays on
// the short path. A mix {delay: 1, loss: 20} costs about 1 + 20·p on the
// short path (p its estimated drop frequency) against 1.5 on the long one
// (delay in units of the short path's zero-load time): it leaves the short
// path once p passes 0.025; a mix of delay alone decides as delay. The
// split is read from the packets s sent on each first channel after a 5 s
// warm-up. With no loss and link a–d at 5 Mbit/s the stream alone loads it
// to 32% (200·8000/5e6), the long path's links to 16%: objective delay
// keeps it there (the largest channel utilisation is then 0.32 within
// ±0.017, z = 3.29 of the Poisson count's standard deviation over 20 s,
// √4000·1.6 ms/20 s = 0.0051), objective utilisation moves traffic off the
// bottleneck (the minimax optimum sends a third of the stream the short
// way, 0.107 on both paths; all on the long path gives 0.16), so its
// largest utilisation must be below 0.24, a quarter of the stream moved.
// Measured (seed 3): long path's share loss 1.000, delay 0.000, mix
// {delay: 1, loss: 20} 0.998, mix {delay: 2} 0.000; on the slow link largest utilisation 0.320 under
// delay and 0.126 under utilisation (whose estimates follow the current
// utilisation, so the stream keeps moving between the paths: long share
// 0.46 of s's sends, some packets returning to s from a).
func TestQNetworkObjective(t *testing.T) {
	named := func(n string) agents.Objective { return agents.Objective{Name: n} }
	mix := func(m agents.Mix) agents.Objective { return agents.Objective{Name: agents.ObjectiveMix, Mix: m} }
	const (
		long  = "long"
		short = "short"
	)
	for _, c := range []struct {
		objective agents.Objective
		slowAD    bool   // link a–d at 5 Mbit/s, no loss
		want      string // long or short: where the stream should end; "" checks utilisation
		maxUtil   [2]float64
		label     string
	}{
		{objective: named(agents.ObjectiveLoss), want: long, label: "q-network(objective=loss)"},
		{objective: named(agents.ObjectiveDelay), want: short, label: "q-network"},
		{objective: mix(agents.Mix{Delay: 1, Loss: 20}), want: long, label: "q-network(objective=mix/delay=1/loss=20)"},
		{objective: mix(agents.Mix{Delay: 2}), want: short},
		{objective: named(agents.ObjectiveDelay), slowAD: true, maxUtil: [2]float64{0.32 - 0.017, 0.32 + 0.017}},
		{objective: named(agents.ObjectiveUtilisation), slowAD: true, maxUtil: [2]float64{0, 0.24}, label: "q-network(objective=utilisation)"},
	} {
		net, loss := lossyShort(10e6), 0.2
		if c.slowAD {
			net, loss = lossyShort(5e6), 0
		}
		p := agents.Defaults(agents.QNetworkKind)
		p.Objective = c.objective
		if err := p.Validate(); err != nil {
			t.Fatal(err)
		}
		a, err := agents.New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		r, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 3, AgentSeed: 4, Duration: 25 * sim.Second, Warmup: 5 * sim.Second,
			Bin:        sim.Second,
			Traffic:    sim.Traffic{Rates: stream(5, 0, 4, 200), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
			Conditions: []sim.LinkCondition{{Link: 0, Loss: loss, SetLoss: true}}})
		if err != nil {
			t.Fatal(err)
		}
		sent := [2]int64{r.Channels[0].Packets, r.Channels[4].Packets} // s→a, s→b
		share := float64(sent[1]) / float64(sent[0]+sent[1])
		mu := 0.0
		for _, ch := range r.Channels {
			mu = math.Max(mu, ch.Util)
		}
		t.Logf("objective %s (a–d slow: %v): long path's share %.3f (%d of %d), largest utilisation %.3f, loss %.3f",
			c.objective, c.slowAD, share, sent[1], sent[0]+sent[1], mu, float64(r.DroppedTotal())/float64(r.Generated))
		switch {
		case c.want == long && share < 0.99, c.want == short && share > 0.01:
			t.Errorf("objective %s: long path's share %.3f, want the stream on the %s path (share %s)", c.objective, share, c.want,
				map[string]string{long: "above 0.99", short: "below 0.01"}[c.want])
		case c.want == "" && (mu < c.maxUtil[0] || mu > c.maxUtil[1]):
			t.Errorf("objective %s: largest channel utilisation %.3f, want it in [%.3f, %.3f]", c.objective, mu, c.maxUtil[0], c.maxUtil[1])
		}
		if got := a.Name(); c.label != "" && got != c.label {
			t.Errorf("label %q, want %q", got, c.label)
		}
	}
}

// The loss and utilisation estimates compose along a chain s–m–d. Loss
// (links losing 20% and 10%): m's estimate for d is its drop frequency on
// m→d, an EWMA of weight 0.01 over Bernoulli(0.1) outcomes, so 0.1 with
// standard deviation √(0.01/1.99·0.09) = 0.021 (Roberts, "Control chart
// tests based on geometric moving averages", Technometrics 1, 1959); s's is
// 1 − (1 − its drop frequency)(1 − its network's estimate of m's value),
// 1 − 0.8·0.9 = 0.28 (the Bellman target of a terminal loss cost; Watkins
// & Dayan 1992), standard deviation √((0.9·0.028)² + (0.8·0.021)²) = 0.030
// taking the network's estimate as noisy as m's value. Utilisation (200
// packets/s of 1000 bytes, link s–m at 10 Mbit/s, m–d at 5): both
// estimates are max(16%, 32%) = 0.32; one second's busy time of Poisson
// arrivals has standard deviation √200·1.6 ms = 0.0226 of a second (common
// practice for a compound Poisson sum), which the 1 s EWMA does not
// exceed. Each check allows z = 3.29 of its standard deviation.
// Measured: loss s 0.274, m 0.143; utilisation s 0.314, m 0.331.
func TestQNetworkEstimatesCompose(t *testing.T) {
	for _, c := range []struct {
		objective string
		bw        [2]float64
		loss      [2]float64
		rate      float64
		want, sd  [2]float64 // at s and at m
	}{
		{agents.ObjectiveLoss, [2]float64{10e6, 10e6}, [2]float64{0.2, 0.1}, 500, [2]float64{0.28, 0.1}, [2]float64{0.030, 0.021}},
		{agents.ObjectiveUtilisation, [2]float64{10e6, 5e6}, [2]float64{0, 0}, 200, [2]float64{0.32, 0.32}, [2]float64{0.0226, 0.0226}},
	} {
		g := &sim.Graph{Name: "chain"}
		for _, n := range []string{"s", "m", "d"} {
			g.Nodes = append(g.Nodes, sim.Node{Name: n})
		}
		for i, l := range [][2]int{{0, 1}, {1, 2}} {
			g.Links = append(g.Links, sim.Link{A: l[0], B: l[1], Bandwidth: c.bw[i], Delay: sim.Millisecond, Buffer: 64})
		}
		net := sim.Compile(g)
		p := agents.Defaults(agents.QNetworkKind)
		p.Objective.Name = c.objective
		a, err := agents.New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 5, AgentSeed: 6, Duration: 30 * sim.Second, Bin: sim.Second,
			Traffic:    sim.Traffic{Rates: [][]float64{{0, 0, c.rate}, {0, 0, 0}, {0, 0, 0}}, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
			Conditions: []sim.LinkCondition{{Link: 0, Loss: c.loss[0], SetLoss: true}, {Link: 1, Loss: c.loss[1], SetLoss: true}}}); err != nil {
			t.Fatal(err)
		}
		for i, hop := range [][2]int{{0, 1}, {1, 2}} {
			k := -1
			for j, ch := range net.Out[hop[0]] {
				if net.Channels[ch].To == hop[1] {
					k = j
				}
			}
			_, l, u := agents.QNetworkEstimates(a, hop[0], 2, k, 0)
			got := l
			if c.objective == agents.ObjectiveUtilisation {
				got = u
			}
			tol := 3.29 * c.sd[i]
			t.Logf("%s: node %s's estimate for d %.4f, want %.4f ± %.4f", c.objective, g.Nodes[hop[0]].Name, got, c.want[i], tol)
			if math.Abs(got-c.want[i]) > tol {
				t.Errorf("%s: node %s's estimate for d %.4f, want %.4f ± %.4f", c.objective, g.Nodes[hop[0]].Name, got, c.want[i], tol)
			}
		}
	}
}

// q-network's objective field refuses what it cannot do, naming the field,
// and a run under an objective other than delay leaves no learned state
// (its output heads are not recorded in one).
func TestQNetworkObjectiveChecks(t *testing.T) {
	for _, c := range []struct {
		set   func(p *agents.Params)
		field string
	}{
		{func(p *agents.Params) { p.Objective.Name = "fastest" }, "objective"},
		{func(p *agents.Params) { p.Objective.Name = agents.ObjectiveMix }, "objective.mix"},
		{func(p *agents.Params) {
			p.Objective = agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Utilisation: -1}}
		}, "objective.mix.utilisation"},
	} {
		p := agents.Defaults(agents.QNetworkKind)
		c.set(&p)
		var pe *agents.ParamError
		if err := p.Validate(); !errors.As(err, &pe) || pe.Field != c.field {
			t.Errorf("Validate() = %v, want an error naming %s", err, c.field)
		}
	}
}

// A learned state of q-network records its objective and holds every
// head: it loads into an agent of the same objective and shape, and is
// refused by one of another objective, with the same number of heads
// (loss against utilisation) or not (delay).
func TestQNetworkStateObjective(t *testing.T) {
	net := lossyShort(10e6)
	agent := func(o agents.Objective) sim.Agent {
		p := agents.Defaults(agents.QNetworkKind)
		p.Objective = o
		a, err := agents.New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		return a
	}
	loss := agents.Objective{Name: agents.ObjectiveLoss}
	a := agent(loss)
	if _, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 1, Duration: 2 * sim.Second, Bin: sim.Second,
		Traffic: sim.Traffic{Rates: stream(5, 0, 4, 100), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}}); err != nil {
		t.Fatal(err)
	}
	st, ok := agents.ExportState(a)
	if !ok || st.Objective != "loss" || st.Sizes[len(st.Sizes)-1] != 2 {
		t.Fatalf("state %v objective %q layers %v, want objective loss and two heads", ok, st.Objective, st.Sizes)
	}
	for _, c := range []struct {
		o  agents.Objective
		ok bool
	}{{loss, true}, {agents.Objective{Name: agents.ObjectiveUtilisation}, false}, {agents.Objective{Name: agents.ObjectiveDelay}, false}} {
		err := agents.StartFrom(agent(c.o), st)
		if (err == nil) != c.ok {
			t.Errorf("start a %s agent from a loss state: %v, want success %v", c.o, err, c.ok)
		}
	}
}

// Under learning: frozen nothing is trained, but a node still measures its
// own channels: a frozen loss agent, its heads at their start value 0,
// sees the 20% loss on s→a by its measured drop frequency alone and moves
// the stream to the long clean path (exactly: the share is all or nothing
// without exploration), where a frozen delay agent stays on the short one.
// Measured long path's share: loss 1.000, delay 0.000.
func TestQNetworkFrozenMeasures(t *testing.T) {
	for _, c := range []struct {
		objective string
		long      bool
	}{{agents.ObjectiveLoss, true}, {agents.ObjectiveDelay, false}} {
		net := lossyShort(10e6)
		p := agents.Defaults(agents.QNetworkKind)
		p.Objective.Name, p.Learning = c.objective, "frozen"
		a, err := agents.New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		r, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 3, AgentSeed: 4, Duration: 15 * sim.Second, Warmup: 5 * sim.Second,
			Bin:        sim.Second,
			Traffic:    sim.Traffic{Rates: stream(5, 0, 4, 200), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
			Conditions: []sim.LinkCondition{{Link: 0, Loss: 0.2, SetLoss: true}}})
		if err != nil {
			t.Fatal(err)
		}
		share := float64(r.Channels[4].Packets) / float64(r.Channels[0].Packets+r.Channels[4].Packets)
		t.Logf("frozen, objective %s: long path's share %.3f", c.objective, share)
		if c.long && share < 0.99 || !c.long && share > 0.01 {
			t.Errorf("frozen, objective %s: long path's share %.3f, want the stream on the %s path", c.objective, share, map[bool]string{true: "long", false: "short"}[c.long])
		}
	}
}
