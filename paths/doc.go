// Package paths holds hoplore's graph algorithms: a compact directed graph
// (compressed sparse rows), a typed min-heap keyed by float64, Dijkstra's
// algorithm from a source, from a set of sources and towards a destination,
// first-hop sets of every cheapest path, lowest-index next hops, breadth-first
// hop counts, Yen's k shortest loopless paths, and connected components.
//
// It is a leaf package: it imports nothing of hoplore's, so the kernel (sim),
// the agents, the topologies and the solvers of the model optimum all share
// one implementation.
//
// Every result is a pure function of the inputs. A node's out-arcs are kept
// in the order of the node they lead to, then of arc index, and ties between
// equally cheap alternatives go to the lowest index in that order; the heap
// orders entries by (key, node), so nodes of equal distance settle lowest
// index first.
//
// Searches run in a Search workspace whose storage is reused: once sized for
// a graph, repeated searches allocate nothing. A Search is not safe for
// concurrent use; give each goroutine its own.
//
// Weights are per arc, in any unit, non-negative (a negative weight met by a
// search panics); math.Inf(1) marks an arc unusable. An optional usable mask (nil: every arc) excludes arcs without
// touching the weights.
package paths
