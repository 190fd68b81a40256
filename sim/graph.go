package sim

import (
	"fmt"
	"math"
	"strings"

	"hoplore/paths"
)

// Time is simulated time in integer nanoseconds.
type Time int64

// Common durations in simulated time.
const (
	Nanosecond  Time = 1
	Microsecond      = 1000 * Nanosecond
	Millisecond      = 1000 * Microsecond
	Second           = 1000 * Millisecond
)

// Seconds returns t in seconds.
func (t Time) Seconds() float64 { return float64(t) / 1e9 }

// FromSeconds converts seconds to simulated time, rounding to the nearest nanosecond.
func FromSeconds(s float64) Time { return Time(math.Round(s * 1e9)) }

// FibreSpeed is the propagation speed used for delays derived from coordinates,
// in metres per second: light in optical fibre, about 2/3 c (common practice).
const FibreSpeed = 2e8

// EarthRadiusKm is the mean Earth radius used for great-circle distances.
const EarthRadiusKm = 6371.0

// Coord says which coordinates a node carries.
type Coord uint8

// Coordinate kinds.
const (
	NoCoord Coord = iota
	Plane         // X, Y in kilometres
	Geo           // Lat, Lon in degrees
)

// Node is one router of a Graph.
type Node struct {
	Name       string
	Coord      Coord
	X, Y       float64 // kilometres, when Coord == Plane
	Lat, Lon   float64 // degrees, when Coord == Geo
	Processing Time    // per-packet processing delay before forwarding; 0 by default
}

// Link joins nodes A and B (indices into Graph.Nodes) with two independent
// directed channels of equal bandwidth, delay and buffer.
type Link struct {
	A, B      int
	Bandwidth float64 // bit/s, > 0
	Delay     Time    // propagation delay, >= 0
	Buffer    int     // packets that may wait in each channel's output queue, >= 0
}

// Graph is the static description of a network: what topologies build and
// what the engine runs on. Node and link order is significant: indices are
// identities everywhere (lowest index wins ties).
type Graph struct {
	Name  string
	Nodes []Node
	Links []Link
}

// Distance returns the distance between two nodes in metres, and false when
// either lacks coordinates or they use different kinds. Plane coordinates
// give Euclidean distance; Geo coordinates give great-circle distance.
func Distance(a, b Node) (float64, bool) {
	switch {
	case a.Coord == Plane && b.Coord == Plane:
		return math.Hypot(a.X-b.X, a.Y-b.Y) * 1000, true
	case a.Coord == Geo && b.Coord == Geo:
		la1, lo1 := a.Lat*math.Pi/180, a.Lon*math.Pi/180
		la2, lo2 := b.Lat*math.Pi/180, b.Lon*math.Pi/180
		h := math.Pow(math.Sin((la2-la1)/2), 2) + math.Cos(la1)*math.Cos(la2)*math.Pow(math.Sin((lo2-lo1)/2), 2)
		return 2 * EarthRadiusKm * 1000 * math.Asin(math.Min(1, math.Sqrt(h))), true
	}
	return 0, false
}

// PropagationDelay returns the delay implied by the nodes' coordinates at
// FibreSpeed, and false when it cannot be derived.
func PropagationDelay(a, b Node) (Time, bool) {
	d, ok := Distance(a, b)
	if !ok {
		return 0, false
	}
	return FromSeconds(d / FibreSpeed), true
}

// NodeIndex returns the index of the node named name.
func (g *Graph) NodeIndex(name string) (int, bool) {
	for i := range g.Nodes {
		if g.Nodes[i].Name == name {
			return i, true
		}
	}
	return -1, false
}

// LinkIndex returns the index of the first link joining nodes a and b (either order).
func (g *Graph) LinkIndex(a, b int) (int, bool) {
	for i, l := range g.Links {
		if (l.A == a && l.B == b) || (l.A == b && l.B == a) {
			return i, true
		}
	}
	return -1, false
}

// Components returns the connected components as sorted lists of node
// indices, ordered by their lowest member.
func (g *Graph) Components() [][]int {
	edges := make([][2]int, len(g.Links))
	for i, l := range g.Links {
		edges[i] = [2]int{l.A, l.B}
	}
	return paths.Components(len(g.Nodes), edges)
}

// Validate checks the graph for use by the engine: at least one node, unique
// non-empty node names, links between distinct existing nodes, positive
// bandwidths, non-negative delays and buffers, and connectivity. A
// disconnected graph's error names its components.
func (g *Graph) Validate() error {
	if len(g.Nodes) == 0 {
		return fmt.Errorf("sim: topology %q has no nodes", g.Name)
	}
	seen := make(map[string]bool, len(g.Nodes))
	for i, n := range g.Nodes {
		if n.Name == "" {
			return fmt.Errorf("sim: topology %q: node %d has no name", g.Name, i)
		}
		if seen[n.Name] {
			return fmt.Errorf("sim: topology %q: node name %q used twice", g.Name, n.Name)
		}
		seen[n.Name] = true
		if n.Processing < 0 {
			return fmt.Errorf("sim: topology %q: node %q has negative processing delay", g.Name, n.Name)
		}
	}
	for i, l := range g.Links {
		if l.A < 0 || l.A >= len(g.Nodes) || l.B < 0 || l.B >= len(g.Nodes) {
			return fmt.Errorf("sim: topology %q: link %d joins a node that does not exist", g.Name, i)
		}
		if l.A == l.B {
			return fmt.Errorf("sim: topology %q: link %d joins node %q to itself", g.Name, i, g.Nodes[l.A].Name)
		}
		name := g.Nodes[l.A].Name + "-" + g.Nodes[l.B].Name
		if !(l.Bandwidth > 0) || math.IsInf(l.Bandwidth, 0) {
			return fmt.Errorf("sim: topology %q: link %s: bandwidth must be positive, got %g", g.Name, name, l.Bandwidth)
		}
		if l.Delay < 0 {
			return fmt.Errorf("sim: topology %q: link %s: negative delay", g.Name, name)
		}
		if l.Buffer < 0 {
			return fmt.Errorf("sim: topology %q: link %s: negative buffer", g.Name, name)
		}
	}
	if comps := g.Components(); len(comps) > 1 {
		parts := make([]string, len(comps))
		for i, c := range comps {
			names := make([]string, 0, len(c))
			for j, n := range c {
				if j == 8 {
					names = append(names, fmt.Sprintf("… %d more", len(c)-8))
					break
				}
				names = append(names, g.Nodes[n].Name)
			}
			parts[i] = "{" + strings.Join(names, " ") + "}"
		}
		return fmt.Errorf("sim: topology %q is not connected: %d components %s", g.Name, len(comps), strings.Join(parts, ", "))
	}
	return nil
}
