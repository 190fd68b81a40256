package agents_test

import (
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
// time), utilisation 0.998.
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
	for _, c := range []struct {
		objective string
		penalty   sim.Time
		loss      float64
		slowAD    bool // link a–d at 2.5 Mbit/s
		long      bool // the stream should end on the long path
	}{
		{agents.ObjectiveLoss, sim.Second, 0.2, false, true},
		{agents.ObjectiveDelay, 0, 0.2, false, false},
		{agents.ObjectiveDelay, sim.Second, 0.2, false, true},
		{agents.ObjectiveUtilisation, sim.Second, 0, true, true},
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
