package agents_test

import (
	"math"
	"testing"

	"hoplore/agents"
	"hoplore/optimum"
	"hoplore/sim"
)

// shortLong is a network of a short path and a long clean one from n0 to
// n1, two hops each: n0–n3–n1 (links 0 and 3, 1 ms each; link 0 with
// waiting room buffer) and n0–n2–n1 (links 1 and 2, 10 ms each), 50
// waiting places elsewhere, all 1 Mbit/s: 125 packets/s of 1000 bytes.
// Channel 0 is n0→n3, channel 2 n0→n2.
func shortLong(buffer int) *sim.Net {
	g := &sim.Graph{Name: "short-long", Nodes: []sim.Node{{Name: "n0"}, {Name: "n1"}, {Name: "n2"}, {Name: "n3"}}}
	g.Links = []sim.Link{
		{A: 0, B: 3, Bandwidth: 1e6, Delay: sim.Millisecond, Buffer: buffer},
		{A: 0, B: 2, Bandwidth: 1e6, Delay: 10 * sim.Millisecond, Buffer: 50},
		{A: 2, B: 1, Bandwidth: 1e6, Delay: 10 * sim.Millisecond, Buffer: 50},
		{A: 3, B: 1, Bandwidth: 1e6, Delay: sim.Millisecond, Buffer: 50},
	}
	return sim.Compile(g)
}

// shortLongRun runs p on shortLong with 100 packets/s of 1000 bytes from
// n0 to n1 (ρ = 0.8 on either path alone) for 120 s, 30 s of warm-up, and
// returns the share of n0's packets sent on the direct channel after the
// warm-up and the share of generated packets lost.
func shortLongRun(t *testing.T, net *sim.Net, p agents.Params, conds []sim.LinkCondition, seed uint64) (direct, loss float64) {
	t.Helper()
	p.MeanPacketBytes, p.PacketSizeSCV = 1000, 0
	ag, err := agents.New(p, net)
	if err != nil {
		t.Fatal(err)
	}
	rates := [][]float64{{0, 100, 0, 0}, {0, 0, 0, 0}, {0, 0, 0, 0}, {0, 0, 0, 0}}
	r, err := sim.Run(&sim.Config{
		Net: net, Duration: 120 * sim.Second, Warmup: 30 * sim.Second, Bin: sim.Second,
		Traffic:    sim.Traffic{Rates: rates, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
		Conditions: conds, Agent: ag, ControlDelay: p.ControlDelay, Seed: seed, AgentSeed: seed + 1,
	})
	if err != nil {
		t.Fatal(err)
	}
	d, l := float64(r.Channels[0].Packets), float64(r.Channels[2].Packets) // n0→n3, n0→n2
	return d / (d + l), float64(r.DroppedTotal()) / float64(r.Generated)
}

// modelSplit returns the share of the n0→n1 demand the optimum package
// puts on the direct channel of shortLong under weights w (MinDelay for
// the zero weights), the model central-optimal solves: fixed-size packets
// (M/D/1 delay), each channel's room its buffer plus one, the link loss
// probability on the direct channel.
func modelSplit(t *testing.T, net *sim.Net, w optimum.Weights, directLoss float64) float64 {
	t.Helper()
	m := optimum.FromNet(net, 1000, nil)
	m.Channels[0].Loss = directLoss
	s, err := optimum.NewSolver(m)
	if err == nil {
		err = s.SetServiceSCV(0)
	}
	if err == nil {
		err = s.SetDemand([][]float64{{0, 100, 0, 0}})
	}
	if err == nil {
		if w == (optimum.Weights{}) {
			_, err = s.MinDelay(1e-4)
		} else {
			_, err = s.MinMix(w, 1e-4)
		}
	}
	if err != nil {
		t.Fatal(err)
	}
	return s.Load()[0] / 100
}

// TestCentralOptimalLossObjective: a short path whose first link has a
// small buffer (2 waiting places: an M/M/1/K queue of K = 3 blocks
// (1 − ρ)ρ³/(1 − ρ⁴), 17% at ρ = 0.8; Kleinrock, Queueing Systems Vol. 1,
// 1975, §3.6) or a 2% link loss, and a long clean path. objective: delay
// keeps most of the traffic on the short path, as the model's least-delay
// routing does; objective: loss moves it to the clean path, and loses
// less. Measured: the share of packets n0 sends on the short path's first
// channel (split packet, so that each packet follows the installed
// weights). Tolerances from a pilot of seeds 11–14: the measured shares
// lay within 0.038 of the model's split (0.604–0.661 against 0.641 under
// delay, 0.027–0.035 against 0.030 under loss with the small buffer, 0
// against 0 with the lossy link: the controller solves on its own noisy
// demand estimate, to gap epsilon, and keeps a routing within epsilon of
// the new one); asserted: within 0.1 of the model's split, and under loss
// at most half the loss rate of delay (the pilot: none lost under loss,
// 1.5–2.1% and 1.2–1.4% under delay).
func TestCentralOptimalLossObjective(t *testing.T) {
	seeds := []uint64{1, 2}
	if testing.Short() {
		seeds = seeds[:1]
	}
	lossy := []sim.LinkCondition{{At: 0, Link: 0, Loss: 0.02, SetLoss: true}}
	for _, tc := range []struct {
		name   string
		buffer int
		conds  []sim.LinkCondition
		loss   float64
	}{
		{"small buffer", 2, nil, 0},
		{"lossy link", 50, lossy, 0.02},
	} {
		net := shortLong(tc.buffer)
		var lossRate [2]float64
		for i, obj := range []string{agents.ObjectiveDelay, agents.ObjectiveLoss} {
			w := optimum.Weights{}
			if obj == agents.ObjectiveLoss {
				w = optimum.Weights{Loss: 1}
			}
			want := modelSplit(t, net, w, tc.loss)
			p := agents.Defaults(agents.CentralOptimalKind)
			p.Objective.Name, p.Split = obj, agents.SplitPacket
			for _, seed := range seeds {
				got, loss := shortLongRun(t, net, p, tc.conds, seed)
				lossRate[i] += loss / float64(len(seeds))
				t.Logf("%s, objective %s, seed %d: %.4f of the traffic on the short path (model %.4f), %.4f lost", tc.name, obj, seed, got, want, loss)
				if math.Abs(got-want) > 0.1 {
					t.Errorf("%s, objective %s, seed %d: short-path share %.4f, model %.4f", tc.name, obj, seed, got, want)
				}
			}
		}
		if lossRate[1] > lossRate[0]/2 {
			t.Errorf("%s: objective loss lost %.4f, delay %.4f", tc.name, lossRate[1], lossRate[0])
		}
	}
}

// TestCentralOptimalMixSplit: on the small-buffer short path, raising the
// mix's loss weight against a delay weight of 1 moves the model optimum's
// traffic from the short path to the clean one monotonically, and
// central-optimal's measured split follows it (within 0.1, as in
// TestCentralOptimalLossObjective).
func TestCentralOptimalMixSplit(t *testing.T) {
	net := shortLong(2)
	prev := math.Inf(1)
	weights := []float64{0.1, 10, 1000}
	for _, wl := range weights {
		want := modelSplit(t, net, optimum.Weights{Delay: 1, Loss: wl}, 0)
		p := agents.Defaults(agents.CentralOptimalKind)
		p.Objective = agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: wl}}
		p.Split = agents.SplitPacket
		got, loss := shortLongRun(t, net, p, nil, 3)
		t.Logf("mix delay 1, loss %v: %.4f of the traffic on the short path (model %.4f), %.4f lost", wl, got, want, loss)
		if want > prev || math.Abs(got-want) > 0.1 {
			t.Errorf("loss weight %v: short-path share %.4f, model %.4f (previous weight's model %.4f)", wl, got, want, prev)
		}
		prev = want
	}
}

// TestCentralOptimalSolvesOnConditions: link conditions that halve the
// short path's bit rate (both links to 0.5 Mbit/s from the start: 62.5
// packets/s of 1000 bytes against the long path's 125) move min-max-util's
// split to the one that equalises the two paths' utilisations,
// x/62.5 = (100 − x)/125, a third of the 100 packets/s on the short path
// (the least maximum of two linear utilisations is where they cross:
// definition), from half on the intact network. Measured: the share n0
// sends on the short path's first channel (split packet). Tolerance 0.1,
// as in TestCentralOptimalLossObjective (the controller solves on its own
// noisy demand estimate, to gap epsilon, and keeps a routing within
// epsilon of the new one). Pilot, seeds 11–16: min-max-util 0.489–0.507
// intact and 0.323–0.339 halved; min-delay 0.615–0.715 (model 0.641) and
// 0.270–0.292 (model 0.284); seed 5, asserted here: 0.502, 0.339, 0.611,
// 0.295; before the controller solved on the bit rates in force the
// halved shares stayed at 0.505 and 0.610.
func TestCentralOptimalSolvesOnConditions(t *testing.T) {
	net := shortLong(50)
	halve := []sim.LinkCondition{{At: 0, Link: 0, Bandwidth: 0.5e6}, {At: 0, Link: 3, Bandwidth: 0.5e6}}
	for _, obj := range []string{agents.ObjectiveMinMaxUtil, agents.ObjectiveMinDelay} {
		p := agents.Defaults(agents.CentralOptimalKind)
		p.Objective.Name, p.Split = obj, agents.SplitPacket
		intact, _ := shortLongRun(t, net, p, nil, 5)
		slowed, loss := shortLongRun(t, net, p, halve, 5)
		want := map[string][2]float64{
			agents.ObjectiveMinMaxUtil: {0.5, 1.0 / 3},
			// Least M/D/1 delay with propagation, from the optimum
			// package at gap 10⁻⁴ (checked there against gonum's simplex).
			agents.ObjectiveMinDelay: {modelSplitBW(t, net, 1), modelSplitBW(t, net, 0.5)},
		}[obj]
		t.Logf("objective %s: short-path share intact %.4f (model %.4f), halved %.4f (model %.4f), %.4f lost", obj, intact, want[0], slowed, want[1], loss)
		if math.Abs(intact-want[0]) > 0.1 || math.Abs(slowed-want[1]) > 0.1 {
			t.Errorf("objective %s: short-path share intact %.4f, halved %.4f, want %.4f and %.4f", obj, intact, slowed, want[0], want[1])
		}
	}
}

// modelSplitBW returns the share of shortLong's n0→n1 demand on the direct
// channel in the least-delay routing of the optimum package (fixed-size
// packets) with the short path's bit rates scaled by f.
func modelSplitBW(t *testing.T, net *sim.Net, f float64) float64 {
	t.Helper()
	m := optimum.FromNet(net, 1000, nil)
	for c, ch := range net.Channels {
		if l := ch.Link; l == 0 || l == 3 {
			m.Channels[c].Capacity *= f
		}
	}
	s, err := optimum.NewSolver(m)
	if err == nil {
		err = s.SetServiceSCV(0)
	}
	if err == nil {
		err = s.SetDemand([][]float64{{0, 100, 0, 0}})
	}
	if err == nil {
		_, err = s.MinDelay(1e-4)
	}
	if err != nil {
		t.Fatal(err)
	}
	return s.Load()[0] / 100
}
