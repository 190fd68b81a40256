package topologies

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"hoplore/sim"
)

// Package-wide defaults for links that do not say otherwise. Bandwidths are
// scaled down (Mbit/s rather than Gbit/s) so that minutes of simulated time
// cost seconds of CPU.
const (
	DefaultBandwidth = 10e6            // bit/s
	DefaultBuffer    = 64              // packets waiting per channel
	DefaultDelay     = sim.Millisecond // propagation delay where nothing else gives one
)

// Param describes one parameter of a generator. Every value is a float64;
// Integer parameters must hold whole numbers.
type Param struct {
	Name    string
	Default float64
	Doc     string
	Integer bool
}

// Info describes a generator: its name, what it builds and its parameters in
// declared order.
type Info struct {
	Name, Doc string
	Params    []Param
}

// ParamError is a problem with one parameter given to Generate.
type ParamError struct {
	Param string
	Msg   string
}

func (e *ParamError) Error() string { return fmt.Sprintf("topologies: %s: %s", e.Param, e.Msg) }

// paramSpec is a Param with its accepted range (inclusive).
type paramSpec struct {
	Param
	min, max float64
}

type generator struct {
	name, doc string
	params    []paramSpec
	build     func(p values) (*sim.Graph, error)
	// size returns the number of nodes the parameters ask for, and the
	// parameter to blame when there are too many.
	size func(p values) (float64, string)
	// check, when set, checks parameters against each other; given holds
	// the parameters as given, v with defaults filled in.
	check func(given map[string]float64, v values) error
}

// MaxNodes bounds the size of a generated topology.
const MaxNodes = 1_000_000

// values holds one call's parameters, defaults filled in.
type values map[string]float64

func (v values) int(name string) int       { return int(v[name]) }
func (v values) float(name string) float64 { return v[name] }
func (v values) mbps(name string) float64  { return v[name] * 1e6 }
func (v values) ms(name string) sim.Time   { return sim.FromSeconds(v[name] / 1000) }

// Common parameters.
var (
	pBandwidth = paramSpec{Param{Name: "bandwidth_mbps", Default: 10, Doc: "link bandwidth in Mbit/s"}, 1e-6, 1e9}
	pBuffer    = paramSpec{Param{Name: "buffer", Default: DefaultBuffer, Doc: "packets that may wait in each channel's queue", Integer: true}, 0, 1e9}
	pDelay     = paramSpec{Param{Name: "delay_ms", Default: 1, Doc: "propagation delay of every link in milliseconds"}, 0, 1e9}
	pSeed      = paramSpec{Param{Name: "seed", Default: 1, Doc: "random seed (whole number, 0 to 2^53)", Integer: true}, 0, 1 << 53}
)

func intParam(name string, def, min, max float64, doc string) paramSpec {
	return paramSpec{Param{Name: name, Default: def, Doc: doc, Integer: true}, min, max}
}

func floatParam(name string, def, min, max float64, doc string) paramSpec {
	return paramSpec{Param{Name: name, Default: def, Doc: doc}, min, max}
}

// generators in the order the README lists them (Topologies).
var generators = []generator{
	{
		name: "ring", doc: "nodes on a cycle, each linked to the next",
		params: []paramSpec{intParam("nodes", 8, 3, 1e5, "number of nodes"), pBandwidth, pDelay, pBuffer},
		build:  buildRing,
		size:   func(v values) (float64, string) { return v["nodes"], "nodes" },
	},
	{
		name: "grid", doc: "rows × cols mesh, each node linked to its horizontal and vertical neighbours",
		params: []paramSpec{intParam("rows", 4, 1, 1e4, "number of rows"), intParam("cols", 4, 1, 1e4, "number of columns"), pBandwidth, pDelay, pBuffer},
		build:  buildGrid,
		size:   func(v values) (float64, string) { return v["rows"] * v["cols"], "rows" },
	},
	{
		name: "torus", doc: "rows × cols mesh whose rows and columns wrap around",
		params: []paramSpec{intParam("rows", 4, 3, 1e4, "number of rows"), intParam("cols", 4, 3, 1e4, "number of columns"), pBandwidth, pDelay, pBuffer},
		build:  buildTorus,
		size:   func(v values) (float64, string) { return v["rows"] * v["cols"], "rows" },
	},
	{
		name: "two-region", doc: "two rows × cols grids side by side, joined by a few bridge links: the bottleneck case",
		params: []paramSpec{
			intParam("rows", 6, 1, 1e4, "rows of each region"),
			intParam("cols", 3, 1, 1e4, "columns of each region"),
			intParam("bridges", 2, 1, 1e4, "links between the regions (at most rows)"),
			pBandwidth,
			floatParam("bridge_mbps", 10, 1e-6, 1e9, "bandwidth of the bridge links in Mbit/s"),
			pDelay, pBuffer,
		},
		build: buildTwoRegion,
		size:  func(v values) (float64, string) { return 2 * v["rows"] * v["cols"], "rows" },
	},
	{
		name: "waxman", doc: "random geometric graph on a square plane (Waxman 1988), redrawn until connected, or with a target mean degree",
		params: []paramSpec{
			intParam("nodes", 20, 2, 1e5, "number of nodes (at most 10000 without degree)"),
			floatParam("alpha", 0.3, 1e-9, 1e9, "length scale: larger alpha gives relatively more long links"),
			floatParam("beta", 0.6, 1e-9, 1, "maximum link probability: larger beta gives more links"),
			floatParam("degree", 0, 0, 1e5, "target mean degree; when set, alpha is solved for and one draw is made connected by the shortest added links (0: off)"),
			pSeed,
			floatParam("side_km", 1000, 1e-6, 1e6, "side of the square the nodes are placed on, in km"),
			pBandwidth, pBuffer,
		},
		build: buildWaxman,
		size:  func(v values) (float64, string) { return v["nodes"], "nodes" },
		check: checkWaxman,
	},
	{
		name: "barabasi-albert", doc: "preferential-attachment graph (Barabási & Albert 1999) grown from a star",
		params: []paramSpec{
			intParam("nodes", 50, 2, 1e6, "number of nodes"),
			intParam("m", 2, 1, 1e6, "links each new node attaches (less than nodes)"),
			pSeed, pBandwidth, pDelay, pBuffer,
		},
		build: buildBarabasiAlbert,
		size:  func(v values) (float64, string) { return v["nodes"], "nodes" },
	},
	{
		name: "leaf-spine", doc: "two-tier folded Clos: every leaf linked to every spine, hosts below the leaves",
		params: []paramSpec{
			intParam("spines", 2, 1, 1e4, "number of spine switches"),
			intParam("leaves", 4, 1, 1e4, "number of leaf switches"),
			intParam("hosts", 4, 0, 1e4, "hosts per leaf"),
			floatParam("bandwidth_mbps", 10, 1e-6, 1e9, "host link bandwidth in Mbit/s"),
			floatParam("uplink_mbps", 20, 1e-6, 1e9, "leaf-to-spine link bandwidth in Mbit/s"),
			pDelay, pBuffer,
		},
		build: buildLeafSpine,
		size:  func(v values) (float64, string) { return v["spines"] + v["leaves"]*(1+v["hosts"]), "hosts" },
	},
	{
		name: "fat-tree", doc: "k-ary fat-tree of k-port switches (Al-Fares, Loukissas & Vahdat 2008)",
		params: []paramSpec{
			intParam("k", 4, 2, 256, "switch port count (even)"),
			pBandwidth, pDelay, pBuffer,
		},
		build: buildFatTree,
		size:  func(v values) (float64, string) { k := v["k"]; return 5*k*k/4 + k*k*k/4, "k" },
	},
	{
		name: "backbone", doc: "synthetic continental backbone: 18 invented sites with latitude/longitude, fast trunks between 6 hubs, slower regional links",
		params: []paramSpec{
			floatParam("trunk_mbps", 40, 1e-6, 1e9, "bandwidth of trunk links between hubs in Mbit/s"),
			floatParam("bandwidth_mbps", 10, 1e-6, 1e9, "bandwidth of regional links in Mbit/s"),
			pBuffer,
		},
		build: buildBackbone,
		size:  func(values) (float64, string) { return float64(len(backboneSites)), "" },
	},
}

func lookup(name string) (*generator, bool) {
	for i := range generators {
		if generators[i].name == name {
			return &generators[i], true
		}
	}
	return nil, false
}

// Names returns the generator names in the order the README lists them.
func Names() []string {
	out := make([]string, len(generators))
	for i, g := range generators {
		out[i] = g.name
	}
	return out
}

// List describes every generator, in the order the README lists them.
func List() []Info {
	out := make([]Info, len(generators))
	for i, g := range generators {
		ps := make([]Param, len(g.params))
		for j, p := range g.params {
			ps[j] = p.Param
		}
		out[i] = Info{Name: g.name, Doc: g.doc, Params: ps}
	}
	return out
}

// resolve checks params against the generator's declared parameters and
// fills in defaults.
func (g *generator) resolve(params map[string]float64) (values, error) {
	keys := make([]string, 0, len(params))
	for k := range params {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		found := false
		for _, p := range g.params {
			if p.Name == k {
				found = true
				break
			}
		}
		if !found {
			names := make([]string, len(g.params))
			for i, p := range g.params {
				names[i] = p.Name
			}
			return nil, &ParamError{Param: k, Msg: fmt.Sprintf("unknown parameter of %s (known: %s)", g.name, strings.Join(names, ", "))}
		}
	}
	v := make(values, len(g.params))
	for _, p := range g.params {
		x, ok := params[p.Name]
		if !ok {
			x = p.Default
		}
		switch {
		case math.IsNaN(x) || math.IsInf(x, 0):
			return nil, &ParamError{Param: p.Name, Msg: fmt.Sprintf("must be a finite number, got %g", x)}
		case p.Integer && x != math.Trunc(x):
			return nil, &ParamError{Param: p.Name, Msg: fmt.Sprintf("must be a whole number, got %g", x)}
		case x < p.min:
			return nil, &ParamError{Param: p.Name, Msg: fmt.Sprintf("must be at least %s, got %s", fmtNum(p.min), fmtNum(x))}
		case x > p.max:
			return nil, &ParamError{Param: p.Name, Msg: fmt.Sprintf("must be at most %s, got %s", fmtNum(p.max), fmtNum(x))}
		}
		v[p.Name] = x
	}
	return v, nil
}

// Generate builds the bundled topology name with the given parameters
// (missing ones take their defaults). The graph's Name is Label(name, params)
// and it passes Validate. An unknown generator is an error listing the known
// ones; a bad parameter is a *ParamError.
func Generate(name string, params map[string]float64) (*sim.Graph, error) {
	g, ok := lookup(name)
	if !ok {
		return nil, fmt.Errorf("topologies: unknown topology %q (known: %s)", name, strings.Join(Names(), ", "))
	}
	v, err := g.resolve(params)
	if err != nil {
		return nil, err
	}
	if g.check != nil {
		if err := g.check(params, v); err != nil {
			return nil, err
		}
	}
	if n, p := g.size(v); n > MaxNodes {
		return nil, &ParamError{Param: p, Msg: fmt.Sprintf("the topology would have %s nodes; at most %d are allowed", fmtNum(n), MaxNodes)}
	}
	gr, err := g.build(v)
	if err != nil {
		return nil, err
	}
	gr.Name = Label(name, params)
	if err := gr.Validate(); err != nil {
		panic(fmt.Sprintf("topologies: generator %s built an invalid graph: %v", name, err))
	}
	return gr, nil
}

// Label returns the value of the results' topology column for a generator
// call: the name alone when every parameter is at its default, else the name
// followed by the parameters that differ from their defaults in declared
// order, e.g. "waxman(nodes=30,alpha=0.4,beta=0.15,seed=7)". Unknown names
// and parameters are kept (sorted) so that the label still says what was asked.
func Label(name string, params map[string]float64) string {
	var parts []string
	g, ok := lookup(name)
	seen := map[string]bool{}
	if ok {
		for _, p := range g.params {
			seen[p.Name] = true
			if x, ok := params[p.Name]; ok && x != p.Default {
				parts = append(parts, p.Name+"="+fmtNum(x))
			}
		}
	}
	var extra []string
	for k := range params {
		if !seen[k] {
			extra = append(extra, k)
		}
	}
	sort.Strings(extra)
	for _, k := range extra {
		parts = append(parts, k+"="+fmtNum(params[k]))
	}
	if len(parts) == 0 {
		return name
	}
	return name + "(" + strings.Join(parts, ",") + ")"
}

// fmtNum formats x exactly, whole numbers below 10^21 without an exponent.
func fmtNum(x float64) string {
	if x == math.Trunc(x) && math.Abs(x) < 1e21 {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// builder accumulates a graph.
type builder struct {
	g sim.Graph
}

func (b *builder) node() int {
	i := len(b.g.Nodes)
	b.g.Nodes = append(b.g.Nodes, sim.Node{Name: "n" + strconv.Itoa(i)})
	return i
}

func (b *builder) nodes(n int) int {
	first := len(b.g.Nodes)
	for range n {
		b.node()
	}
	return first
}

func (b *builder) link(a, c int, bw float64, delay sim.Time, buffer int) {
	b.g.Links = append(b.g.Links, sim.Link{A: a, B: c, Bandwidth: bw, Delay: delay, Buffer: buffer})
}

// geoLink links a and c with the delay implied by their coordinates.
func (b *builder) geoLink(a, c int, bw float64, buffer int) {
	d, ok := sim.PropagationDelay(b.g.Nodes[a], b.g.Nodes[c])
	if !ok {
		panic("topologies: geoLink between nodes without coordinates")
	}
	b.link(a, c, bw, d, buffer)
}

func buildRing(v values) (*sim.Graph, error) {
	var b builder
	n := v.int("nodes")
	b.nodes(n)
	bw, d, q := v.mbps("bandwidth_mbps"), v.ms("delay_ms"), v.int("buffer")
	for i := range n {
		b.link(i, (i+1)%n, bw, d, q)
	}
	return &b.g, nil
}

// addGrid adds a rows × cols grid numbered row by row starting at first;
// each node is linked to its right neighbour, then to the one below; with
// wrap, the last column links back to the first and the last row to the
// first.
func (b *builder) addGrid(rows, cols int, wrap bool, bw float64, d sim.Time, q int) int {
	if rows*cols < 2 {
		return b.nodes(rows * cols)
	}
	first := b.nodes(rows * cols)
	at := func(r, c int) int { return first + r*cols + c }
	for r := range rows {
		for c := range cols {
			if c+1 < cols {
				b.link(at(r, c), at(r, c+1), bw, d, q)
			} else if wrap {
				b.link(at(r, c), at(r, 0), bw, d, q)
			}
			if r+1 < rows {
				b.link(at(r, c), at(r+1, c), bw, d, q)
			} else if wrap {
				b.link(at(r, c), at(0, c), bw, d, q)
			}
		}
	}
	return first
}

func buildGrid(v values) (*sim.Graph, error) {
	rows, cols := v.int("rows"), v.int("cols")
	if rows*cols < 2 {
		return nil, &ParamError{Param: "rows", Msg: "a grid needs at least two nodes (rows × cols ≥ 2)"}
	}
	var b builder
	b.addGrid(rows, cols, false, v.mbps("bandwidth_mbps"), v.ms("delay_ms"), v.int("buffer"))
	return &b.g, nil
}

func buildTorus(v values) (*sim.Graph, error) {
	var b builder
	b.addGrid(v.int("rows"), v.int("cols"), true, v.mbps("bandwidth_mbps"), v.ms("delay_ms"), v.int("buffer"))
	return &b.g, nil
}

// bridgeRows returns the rows at which k bridges cross between two regions
// of the given height: the centres of k equal bands, floor((2i+1)·rows/(2k)).
func bridgeRows(rows, k int) []int {
	out := make([]int, k)
	for i := range k {
		out[i] = (2*i + 1) * rows / (2 * k)
	}
	return out
}

func buildTwoRegion(v values) (*sim.Graph, error) {
	rows, cols, k := v.int("rows"), v.int("cols"), v.int("bridges")
	if k > rows {
		return nil, &ParamError{Param: "bridges", Msg: fmt.Sprintf("at most rows (%d) bridges fit, got %d", rows, k)}
	}
	var b builder
	bw, d, q := v.mbps("bandwidth_mbps"), v.ms("delay_ms"), v.int("buffer")
	left := b.addGrid(rows, cols, false, bw, d, q)
	right := b.addGrid(rows, cols, false, bw, d, q)
	for _, r := range bridgeRows(rows, k) {
		b.link(left+r*cols+cols-1, right+r*cols, v.mbps("bridge_mbps"), d, q)
	}
	return &b.g, nil
}

func buildLeafSpine(v values) (*sim.Graph, error) {
	s, l, h := v.int("spines"), v.int("leaves"), v.int("hosts")
	if s*1+l < 2 {
		return nil, &ParamError{Param: "leaves", Msg: "need at least two switches"}
	}
	var b builder
	d, q := v.ms("delay_ms"), v.int("buffer")
	spines := b.nodes(s)
	leaves := b.nodes(l)
	for i := range l {
		for j := range s {
			b.link(leaves+i, spines+j, v.mbps("uplink_mbps"), d, q)
		}
	}
	for i := range l {
		for range h {
			b.link(leaves+i, b.node(), v.mbps("bandwidth_mbps"), d, q)
		}
	}
	return &b.g, nil
}

// buildFatTree lays out a k-ary fat-tree: (k/2)² core switches first, then
// for each of the k pods its k/2 aggregation and k/2 edge switches, then the
// k/2 hosts of each edge switch, pod by pod. Aggregation switch i of every
// pod links to core switches i·k/2 … i·k/2+k/2−1.
func buildFatTree(v values) (*sim.Graph, error) {
	k := v.int("k")
	if k%2 != 0 {
		return nil, &ParamError{Param: "k", Msg: fmt.Sprintf("must be even, got %d", k)}
	}
	h := k / 2
	var b builder
	bw, d, q := v.mbps("bandwidth_mbps"), v.ms("delay_ms"), v.int("buffer")
	core := b.nodes(h * h)
	aggs := make([]int, k)
	edges := make([]int, k)
	for p := range k {
		aggs[p] = b.nodes(h)
		edges[p] = b.nodes(h)
	}
	for p := range k {
		for i := range h {
			for j := range h {
				b.link(aggs[p]+i, core+i*h+j, bw, d, q)
			}
		}
		for e := range h {
			for i := range h {
				b.link(edges[p]+e, aggs[p]+i, bw, d, q)
			}
		}
	}
	for p := range k {
		for e := range h {
			for range h {
				b.link(edges[p]+e, b.node(), bw, d, q)
			}
		}
	}
	return &b.g, nil
}
