package agents_test

import (
	"fmt"

	"hoplore/agents"
	"hoplore/sim"
	"hoplore/topologies"
)

// Build a per-node Q-routing agent with consensus for a run on the bundled
// ring and see what it delivered: 8 nodes × 2 neighbours × 19 rounds after
// the warm-up make 304 consensus messages.
func ExampleNew() {
	g, _ := topologies.Generate("ring", nil)
	net := sim.Compile(g)
	p := agents.Defaults(agents.QRoutingKind)
	p.Consensus = &agents.Consensus{Every: sim.Second, Weight: 0.5}
	a, err := agents.New(p, net)
	if err != nil {
		panic(err)
	}
	m := sim.UniformMatrix(net)
	scaled(m, 0.3*sim.SaturationScale(net, m, 1000))
	r, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 1, Duration: 20 * sim.Second, Warmup: 2 * sim.Second, Bin: sim.Second,
		Traffic: sim.Traffic{Rates: m, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}})
	if err != nil {
		panic(err)
	}
	fmt.Println(a.Name())
	fmt.Printf("delivered %.1f%%, %d consensus messages\n", 100*float64(r.Delivered)/float64(r.Generated), r.ControlPackets)
	// Output:
	// q-routing(consensus=1s/0.5)
	// delivered 100.0%, 304 consensus messages
}
