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

// The idle-network completion time is the best of its candidate paths: on
// a direct link at 10 Mbit/s beside a three-hop path at 100 Mbit/s, a
// single packet is fastest on the direct link (1.2 ms of transmission and
// 1 ms of propagation), a 10 MB transfer on the wide path (0.8 s to send
// at 100 Mbit/s, then 0.12 ms per further hop for the last full packet,
// which the shorter last one waits behind, and 3 ms of propagation) rather
// than 8 s on the direct link.
func ExampleIdealFCT() {
	g := &sim.Graph{Name: "two ways", Nodes: []sim.Node{{Name: "quay"}, {Name: "dale"}, {Name: "moor"}, {Name: "fell"}}, Links: []sim.Link{
		{A: 0, B: 1, Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64},
		{A: 0, B: 2, Bandwidth: 100e6, Delay: sim.Millisecond, Buffer: 64},
		{A: 2, B: 3, Bandwidth: 100e6, Delay: sim.Millisecond, Buffer: 64},
		{A: 3, B: 1, Bandwidth: 100e6, Delay: sim.Millisecond, Buffer: 64},
	}}
	net := sim.Compile(g)
	bw, delay := make([]float64, len(net.Channels)), make([]sim.Time, len(net.Channels))
	for c, ch := range net.Channels {
		bw[c], delay[c] = ch.Bandwidth, ch.Delay
	}
	for _, size := range []int64{1500, 10_000_000} {
		t := sim.IdealFCT(net, 0, 1, size, 1500, 100e6, bw, delay)
		fmt.Printf("%d bytes: %.2f ms\n", size, 1000*t.Seconds())
	}
	// Output:
	// 1500 bytes: 2.20 ms
	// 10000000 bytes: 803.24 ms
}
