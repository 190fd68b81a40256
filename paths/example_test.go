package paths_test

import (
	"fmt"

	"hoplore/paths"
)

// A square of four nodes with one diagonal: arcs in both directions, the
// diagonal dearer than the two-arc detour.
func Example() {
	// nodes 0 1
	//       3 2
	tails := []int{0, 1, 1, 2, 2, 3, 3, 0, 0, 2}
	heads := []int{1, 0, 2, 1, 3, 2, 0, 3, 2, 0}
	w := []float64{1, 1, 1, 1, 1, 1, 1, 1, 2.5, 2.5}
	g := paths.NewGraph(4, tails, heads)

	var s paths.Search
	s.From(g, 0, w, nil)
	arcs, _ := s.ArcsTo(g, 2, nil)
	fmt.Println("distances from 0:", s.Dist, "path to 2 via arcs", arcs)

	var f paths.FirstHops
	f.Compute(g, 0, w, nil)
	out, heads0 := g.Out(0)
	fmt.Printf("first hops 0→2: slots %b of arcs %v to %v\n", f.Set(2)[0], out, heads0)

	for i, p := range s.KShortest(g, 0, 2, 3, w) {
		fmt.Println("path", i, p.Nodes, "cost", p.Cost)
	}
	fmt.Println(paths.Components(5, [][2]int{{0, 1}, {3, 4}}))
	// Output:
	// distances from 0: [0 1 2 1] path to 2 via arcs [0 2]
	// first hops 0→2: slots 101 of arcs [0 8 7] to [1 2 3]
	// path 0 [0 1 2] cost 2
	// path 1 [0 3 2] cost 2
	// path 2 [0 2] cost 2.5
	// [[0 1] [2] [3 4]]
}
