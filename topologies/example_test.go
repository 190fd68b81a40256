package topologies_test

import (
	"fmt"
	"os"
	"time"

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

// A GraphML file as the public topology collections write it: labels,
// coordinates and link speeds with units, read with the default bandwidth
// scale (10 Gbit/s becomes 10 Mbit/s), with where each field came from.
func ExampleReadGraphML() {
	const file = `<graphml>
  <key attr.name="label" for="node" id="d0"/>
  <key attr.name="Latitude" for="node" id="d1"/>
  <key attr.name="Longitude" for="node" id="d2"/>
  <key attr.name="LinkSpeed" for="edge" id="d3"/>
  <key attr.name="LinkSpeedUnits" for="edge" id="d4"/>
  <graph edgedefault="undirected">
    <node id="0"><data key="d0">Quarrow</data><data key="d1">10</data><data key="d2">20</data></node>
    <node id="1"><data key="d0">Tillmoor</data><data key="d1">11</data><data key="d2">20</data></node>
    <edge source="0" target="1"><data key="d3">10</data><data key="d4">G</data></edge>
  </graph>
</graphml>`
	g, pv, err := topologies.ReadGraphML("pair.graphml", []byte(file), topologies.ReadOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	l := g.Links[0]
	fmt.Printf("%s-%s %g bit/s, %v\n", g.Nodes[l.A].Name, g.Nodes[l.B].Name, l.Bandwidth, time.Duration(l.Delay))
	for _, line := range pv.Lines() {
		fmt.Println(line)
	}
	// Output:
	// Quarrow-Tillmoor 1e+07 bit/s, 555.975µs
	// name: 2 nodes for label
	// coordinates: lat from Latitude, lon from Longitude (degrees) for 2 nodes
	// bandwidth: 1 edge from LinkSpeed × LinkSpeedUnits × 0.001
	// delay: 1 edge from great-circle distance (haversine) at 2·10^8 m/s
	// buffer: 1 edge default 64 packets
}
