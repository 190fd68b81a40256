package experiments_test

import (
	"fmt"

	"hoplore/experiments"
)

func ExampleParse() {
	src := `
name: ring-check
duration: 60s
warmup: 10s
replicates: 2
topologies:
  - {name: ring, nodes: 6}
traffic:
  matrix: uniform
  loads: [0.5, 0.9]
agents:
  - shortest-path
  - {kind: q-routing, learning_rate: 0.7}
failures:
  - none
  - name: cut
    events:
      - {at: 30s, link: [n0, n1], action: down}
`
	e, err := experiments.Parse("ring-check.yaml", []byte(src))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(e.Cells(), "cells,", len(e.Runs()), "runs")
	for _, r := range e.Runs()[:3] {
		d := r.Dims
		fmt.Println(d.Topology, d.Load, d.Failure, d.Agent, d.Replicate)
	}

	_, err = experiments.Parse("typo.yaml", []byte("name: x\nduration: 60s\nreplicate: 2\n"))
	fmt.Println(err)
	// Output:
	// 8 cells, 16 runs
	// ring(nodes=6) 0.5 none shortest-path 0
	// ring(nodes=6) 0.5 none shortest-path 1
	// ring(nodes=6) 0.5 none q-routing(learning_rate=0.7) 0
	// typo.yaml:3:1: unknown field "replicate"
}
