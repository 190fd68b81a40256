package sim_test

import (
	"fmt"

	"hoplore/sim"
)

// A packet every second across two hops at zero load takes exactly the sum
// of transmission and propagation times.
func ExampleRun() {
	g := &sim.Graph{Name: "pair", Nodes: []sim.Node{{Name: "hill"}, {Name: "mill"}, {Name: "ford"}}, Links: []sim.Link{
		{A: 0, B: 1, Bandwidth: 1e6, Delay: 2 * sim.Millisecond, Buffer: 16},
		{A: 1, B: 2, Bandwidth: 1e6, Delay: 3 * sim.Millisecond, Buffer: 16},
	}}
	net := sim.Compile(g)
	rates := [][]float64{{0, 0, 1}, {0, 0, 0}, {0, 0, 0}}
	cfg := &sim.Config{Net: net, Agent: hopAgent{net}, Seed: 1, Duration: 10 * sim.Second, Bin: sim.Second,
		Traffic: sim.Traffic{Rates: rates, Periodic: true, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}}
	r, err := sim.Run(cfg)
	if err != nil {
		panic(err)
	}
	fmt.Printf("delivered %d of %d, each in %.1f ms\n", r.Delivered, r.Generated, 1000*r.DeliveryMax)
	// Output: delivered 9 of 10, each in 21.0 ms
}

// hopAgent routes by hop count with the lowest-index tie-break.
type hopAgent struct{ net *sim.Net }

func (h hopAgent) Name() string { return "hops" }
func (h hopAgent) Node(v *sim.NodeView) sim.Router {
	return routerFunc(func(p *sim.Packet) int { return sim.HopRoute(h.net, v.ID(), p.Dst) })
}
