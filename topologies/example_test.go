package topologies_test

import (
	"fmt"
	"os"

	"hoplore/sim"
	"hoplore/topologies"
)

func ExampleGenerate() {
	g, err := topologies.Generate("fat-tree", map[string]float64{"k": 4})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(g.Name, len(g.Nodes), "nodes", len(g.Links), "links, diameter", sim.Compile(g).Diameter())

	g, err = topologies.Generate("waxman", map[string]float64{"nodes": 30, "alpha": 0.4, "beta": 0.15, "seed": 7})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(g.Name, len(g.Nodes), "nodes")

	_, err = topologies.Generate("ring", map[string]float64{"nodes": 2})
	fmt.Println(err)
	// Output:
	// fat-tree 36 nodes 48 links, diameter 6
	// waxman(nodes=30,alpha=0.4,beta=0.15,seed=7) 30 nodes
	// topologies: nodes: must be at least 3, got 2
}

func ExampleLabel() {
	fmt.Println(topologies.Label("two-region", nil))
	fmt.Println(topologies.Label("two-region", map[string]float64{"bridges": 1, "rows": 6}))
	// Output:
	// two-region
	// two-region(bridges=1)
}

func ExampleList() {
	for _, in := range topologies.List()[:2] {
		fmt.Print(in.Name, ":")
		for _, p := range in.Params {
			fmt.Printf(" %s=%g", p.Name, p.Default)
		}
		fmt.Println()
	}
	// Output:
	// ring: nodes=8 bandwidth_mbps=10 delay_ms=1 buffer=64
	// grid: rows=4 cols=4 bandwidth_mbps=10 delay_ms=1 buffer=64
}

func ExampleParseFile() {
	const text = `name: triangle
defaults: {bandwidth: 2Mbps, buffer: 50}
nodes:
  - {name: a, x_km: 0, y_km: 0}
  - {name: b, x_km: 300, y_km: 400}
  - c
links:
  - {a: a, b: b}
  - {a: b, b: c, delay: 4ms}
  - {a: c, b: a, bandwidth: 1Mbps}
`
	g, err := topologies.ParseFile("triangle.yaml", []byte(text))
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, l := range g.Links {
		fmt.Printf("%s-%s %g bit/s %v buffer %d\n", g.Nodes[l.A].Name, g.Nodes[l.B].Name, l.Bandwidth, l.Delay.Seconds(), l.Buffer)
	}

	_, err = topologies.ParseFile("triangle.yaml", []byte("nodes: [a, b]\nlinks:\n  - {a: a, b: z}\n"))
	fmt.Println(err)
	// Output:
	// a-b 2e+06 bit/s 0.0025 buffer 50
	// b-c 2e+06 bit/s 0.004 buffer 50
	// c-a 1e+06 bit/s 0.001 buffer 50
	// triangle.yaml:3:15: link 1: b: unknown node "z"
}

func ExampleWriteYAML() {
	g, _ := topologies.Generate("ring", map[string]float64{"nodes": 3})
	if err := topologies.WriteYAML(os.Stdout, g); err != nil {
		fmt.Println(err)
	}
	// Output:
	// name: "ring(nodes=3)"
	// nodes:
	//   - n0
	//   - n1
	//   - n2
	// links:
	//   - {a: n0, b: n1, bandwidth: 10Mbps, delay: 1ms, buffer: 64}
	//   - {a: n1, b: n2, bandwidth: 10Mbps, delay: 1ms, buffer: 64}
	//   - {a: n2, b: n0, bandwidth: 10Mbps, delay: 1ms, buffer: 64}
}
