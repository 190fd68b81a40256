package topologies

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/goccy/go-yaml/ast"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

// File is a topology file (YAML) as written, every value remembering where
// it was written:
//
//	name: mesh-10                       # optional; defaults to the file name
//	defaults: {bandwidth: 2Mbps, delay: 1ms, buffer: 50}
//	nodes:
//	  - a                               # a bare name
//	  - {name: b, x_km: 300, y_km: 100} # or a mapping: x_km/y_km or lat/lon, processing
//	links:
//	  - {a: a, b: b, bandwidth: 1Mbps, delay: 4ms, buffer: 10}
//
// Decode it strictly with yamlx (unknown fields are errors) and turn it into
// a graph with BuildFile.
type File struct {
	Name     yamlx.String `yaml:"name"`
	Defaults Defaults     `yaml:"defaults"`
	Nodes    []NodeSpec   `yaml:"nodes"`
	Links    []LinkSpec   `yaml:"links"`

	Pos      yamlx.Pos `yaml:"-"` // where the file's mapping starts
	NodesPos yamlx.Pos `yaml:"-"` // where the nodes: key is, when given
	LinksPos yamlx.Pos `yaml:"-"` // where the links: key is, when given
}

// Defaults are the values links take when they give none.
type Defaults struct {
	Bandwidth yamlx.Bandwidth `yaml:"bandwidth"` // bit/s; DefaultBandwidth when unset
	Delay     yamlx.Duration  `yaml:"delay"`     // else from coordinates, else DefaultDelay
	Buffer    yamlx.Int       `yaml:"buffer"`    // packets; DefaultBuffer when unset
}

// NodeSpec is one entry of nodes: either a bare name or a mapping.
type NodeSpec struct {
	Name       yamlx.String   `yaml:"name"`
	X          yamlx.Float    `yaml:"x_km"` // plane coordinates in km
	Y          yamlx.Float    `yaml:"y_km"`
	Lat        yamlx.Float    `yaml:"lat"` // or latitude/longitude in degrees
	Lon        yamlx.Float    `yaml:"lon"`
	Processing yamlx.Duration `yaml:"processing"` // per-packet processing delay

	Pos yamlx.Pos `yaml:"-"` // where the entry starts
}

// LinkSpec is one entry of links.
type LinkSpec struct {
	A         yamlx.String    `yaml:"a"`
	B         yamlx.String    `yaml:"b"`
	Bandwidth yamlx.Bandwidth `yaml:"bandwidth"`
	Delay     yamlx.Duration  `yaml:"delay"`
	Buffer    yamlx.Int       `yaml:"buffer"`

	Pos yamlx.Pos `yaml:"-"` // where the entry starts
}

// UnmarshalYAML decodes the file's mapping and records where it and its
// nodes: and links: keys are.
func (f *File) UnmarshalYAML(n ast.Node) error {
	type plain File
	var p plain
	if _, ok := n.(ast.MapNode); !ok {
		return yamlx.At(yamlx.PosOf(n), "a topology is a mapping with name, defaults, nodes and links, got %s", kind(n))
	}
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*f = File(p)
	f.Pos = mapPos(n)
	it := n.(ast.MapNode).MapRange()
	for it.Next() {
		k := it.Key()
		switch k.GetToken().Value {
		case "nodes":
			f.NodesPos = yamlx.PosOf(k)
		case "links":
			f.LinksPos = yamlx.PosOf(k)
		}
	}
	return nil
}

// mapPos is where a mapping starts: its brace, or for a block mapping its
// first key (the library places a block mapping at its first colon).
func mapPos(n ast.Node) yamlx.Pos {
	if m, ok := n.(*ast.MappingNode); ok && m.IsFlowStyle {
		return yamlx.PosOf(n)
	}
	if m, ok := n.(ast.MapNode); ok {
		if it := m.MapRange(); it.Next() {
			return yamlx.PosOf(it.Key())
		}
	}
	return yamlx.PosOf(n)
}

// UnmarshalYAML accepts a bare name or a mapping.
func (s *NodeSpec) UnmarshalYAML(n ast.Node) error {
	pos := mapPos(n)
	if _, ok := n.(ast.MapNode); ok {
		type plain NodeSpec
		var p plain
		if err := yamlx.DecodeNode(n, &p); err != nil {
			return err
		}
		*s = NodeSpec(p)
		s.Pos = pos
		if !s.Name.Set {
			return yamlx.At(pos, "node has no name")
		}
		return nil
	}
	switch n.Type() {
	case ast.StringType, ast.IntegerType, ast.FloatType:
	default:
		return yamlx.At(pos, "a node is a name or a mapping {name, x_km, y_km, lat, lon, processing}, got %s", kind(n))
	}
	*s = NodeSpec{Pos: pos}
	return s.Name.UnmarshalYAML(n)
}

// UnmarshalYAML decodes a link's mapping and records where it starts.
func (s *LinkSpec) UnmarshalYAML(n ast.Node) error {
	pos := mapPos(n)
	if _, ok := n.(ast.MapNode); !ok {
		return yamlx.At(pos, "a link is a mapping {a, b, bandwidth, delay, buffer}, got %s", kind(n))
	}
	type plain LinkSpec
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*s = LinkSpec(p)
	s.Pos = pos
	return nil
}

func kind(n ast.Node) string {
	switch n.Type() {
	case ast.MappingType, ast.MappingValueType:
		return "a mapping"
	case ast.SequenceType:
		return "a list"
	case ast.NullType:
		return "nothing"
	}
	return "a " + strings.ToLower(n.Type().String())
}

// Load reads the topology file at path with the zero ReadOptions; see
// LoadWith.
func Load(path string) (*sim.Graph, error) {
	g, _, err := LoadWith(path, ReadOptions{})
	return g, err
}

// LoadWith reads the topology file at path: GraphML (ReadGraphML) or the
// network-design XML layout (ReadNetworkXML, its demands set aside) when its
// name ends in .graphml or .xml, whichever its root element says, YAML
// otherwise. It returns where each field came from. For a YAML file,
// o.Keep and o.BandwidthScale apply (the scale multiplies every bandwidth;
// by default YAML bandwidths are model bit rates, scaled by 1); attribute
// mappings and capacity units are for the other layouts.
func LoadWith(path string, o ReadOptions) (*sim.Graph, *Provenance, error) {
	data, err := yamlx.ReadFile(path)
	if err != nil {
		return nil, nil, fmt.Errorf("topologies: %w", err)
	}
	return Read(path, data, o)
}

// Read is LoadWith on a file's bytes: path names the file in errors and
// selects the layout.
func Read(path string, data []byte, o ReadOptions) (*sim.Graph, *Provenance, error) {
	switch strings.ToLower(filepath.Ext(path)) {
	case ".graphml", ".xml":
		if rootElement(data) == "network" {
			x, err := ReadNetworkXML(path, data, o)
			if err != nil {
				return nil, nil, err
			}
			return x.Graph, x.Provenance, nil
		}
		return ReadGraphML(path, data, o)
	}
	if err := o.check(); err != nil {
		return nil, nil, err
	}
	if len(o.Attributes) > 0 {
		return nil, nil, &OptionError{"attributes", "apply to GraphML files only; a YAML topology file names its fields"}
	}
	if o.CapacityUnit != "" {
		return nil, nil, &OptionError{"capacity_unit", "applies to network-design XML files only"}
	}
	var f File
	if err := decodeYAML(path, data, &f); err != nil {
		return nil, nil, err
	}
	g, st, err := buildFile(path, &f, buildOptions{keepLargest: o.Keep == KeepLargestComponent})
	if err != nil {
		return nil, nil, err
	}
	if o.BandwidthScale > 0 {
		for i := range g.Links {
			g.Links[i].Bandwidth *= o.BandwidthScale
		}
	}
	return g, yamlProvenance(st, o), nil
}

// rootElement is the local name of data's first element, "" when none.
func rootElement(data []byte) string {
	d := xml.NewDecoder(bytes.NewReader(data))
	d.CharsetReader = charsetReader
	for {
		tok, err := d.Token()
		if err != nil {
			return ""
		}
		if e, ok := tok.(xml.StartElement); ok {
			return e.Name.Local
		}
	}
}

// yamlProvenance says where a YAML topology file's link values came from.
func yamlProvenance(st *buildStats, o ReadOptions) *Provenance {
	pv := &Provenance{}
	line := func(field string, own, defs, other int, otherWhat string) {
		var parts []string
		if own > 0 {
			parts = append(parts, fmt.Sprintf("%s from the link's %s", plural(own, "link"), field))
		}
		if defs > 0 {
			parts = append(parts, fmt.Sprintf("%s from defaults.%s", plural(defs, "link"), field))
		}
		if other > 0 {
			parts = append(parts, fmt.Sprintf("%s %s", plural(other, "link"), otherWhat))
		}
		if len(parts) > 0 {
			pv.Fields = append(pv.Fields, field+": "+strings.Join(parts, ", "))
		}
	}
	bw := "default " + yamlBandwidth(DefaultBandwidth)
	line("bandwidth", st.bwOwn, st.bwDefaults, st.bwDefault, bw)
	if o.BandwidthScale > 0 {
		pv.Fields[len(pv.Fields)-1] += fmt.Sprintf(", all × %s", strconv.FormatFloat(o.BandwidthScale, 'g', -1, 64))
	}
	how := "from great-circle distance (haversine) at 2·10^8 m/s"
	if st.coordKind == sim.Plane {
		how = "from plane distance at 2·10^8 m/s"
	}
	line("delay", st.delayOwn, st.delayDefaults, st.delayCoord, how)
	if st.delayDefault > 0 {
		pv.Fields = append(pv.Fields, fmt.Sprintf("delay (no coordinates): %s default %s", plural(st.delayDefault, "link"), yamlDuration(DefaultDelay)))
	}
	line("buffer", st.bufOwn, st.bufDefaults, st.bufDefault, fmt.Sprintf("default %d packets", DefaultBuffer))
	pv.Notes = st.notes
	return pv
}

// ParseFile decodes the YAML topology file data (read from path, which only
// names it in errors) and builds its graph. Every problem is a *yamlx.Error
// naming FILE:LINE:COL.
func ParseFile(path string, data []byte) (g *sim.Graph, err error) {
	var f File
	if err := decodeYAML(path, data, &f); err != nil {
		return nil, err
	}
	return BuildFile(path, &f)
}

// decodeYAML decodes strictly, turning a panic of the YAML library on
// hostile input into an input error.
func decodeYAML(path string, data []byte, v any) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = yamlx.Errorf(path, yamlx.Pos{}, "cannot read YAML: %v", r)
		}
	}()
	return yamlx.Decode(path, data, v)
}

// BuildFile turns a decoded topology file into a graph that passes Validate.
// path names the file in errors (for an inline topology, the experiment
// file). Every problem is a *yamlx.Error at the offending field.
//
// A link's delay is its own delay, else defaults.delay, else the
// propagation delay between its nodes' coordinates (sim.PropagationDelay)
// when both have them, else DefaultDelay. Bandwidth and buffer come from the
// link, else defaults, else DefaultBandwidth and DefaultBuffer. Nodes must
// all use the same kind of coordinates (x_km/y_km or lat/lon) or none.
func BuildFile(path string, f *File) (*sim.Graph, error) {
	g, _, err := buildFile(path, f, buildOptions{})
	return g, err
}

// buildOptions relax BuildFile for files written by other tools.
type buildOptions struct {
	mergeParallel bool // links joining the same pair become one, bandwidths summed
	keepLargest   bool // keep the largest component, drop the others
}

// buildStats counts where each link's values came from, and what was merged
// or dropped, for a reader's Provenance.
type buildStats struct {
	bwOwn, bwDefaults, bwDefault        int
	delayOwn, delayDefaults, delayCoord int
	delayDefault                        int
	bufOwn, bufDefaults, bufDefault     int
	coordKind                           sim.Coord
	notes                               []string
}

func buildFile(path string, f *File, o buildOptions) (*sim.Graph, *buildStats, error) {
	st := &buildStats{}
	errAt := func(pos yamlx.Pos, format string, args ...any) error {
		return yamlx.Errorf(path, pos, format, args...)
	}
	g := &sim.Graph{Name: f.Name.S}
	if !f.Name.Set || f.Name.S == "" {
		g.Name = strings.TrimSuffix(filepath.Base(path), filepath.Ext(path))
	}
	d := f.Defaults
	bandwidth, buffer := float64(DefaultBandwidth), DefaultBuffer
	if d.Bandwidth.Set {
		if err := checkBandwidth(d.Bandwidth.BPS); err != "" {
			return nil, nil, errAt(d.Bandwidth.Pos, "defaults.bandwidth: %s", err)
		}
		bandwidth = d.Bandwidth.BPS
	}
	if d.Delay.Set && d.Delay.D < 0 {
		return nil, nil, errAt(d.Delay.Pos, "defaults.delay: must not be negative, got %v", d.Delay.D)
	}
	if d.Buffer.Set {
		if d.Buffer.V < 0 {
			return nil, nil, errAt(d.Buffer.Pos, "defaults.buffer: must not be negative, got %d", d.Buffer.V)
		}
		buffer = d.Buffer.V
	}

	if len(f.Nodes) == 0 {
		pos := f.NodesPos
		if pos == (yamlx.Pos{}) {
			pos = f.Pos
		}
		return nil, nil, errAt(pos, "nodes: a topology needs at least one node")
	}
	index := make(map[string]int, len(f.Nodes))
	coordOf := -1 // first node with coordinates
	for i, s := range f.Nodes {
		name := s.Name.S
		if name == "" {
			pos := s.Pos
			if pos == (yamlx.Pos{}) {
				pos = f.NodesPos
			}
			return nil, nil, errAt(pos, "nodes: node %d has an empty name", i+1)
		}
		if j, dup := index[name]; dup {
			return nil, nil, errAt(s.Name.Pos, "nodes: node %q is listed twice (first at line %d)", name, f.Nodes[j].Name.Pos.Line)
		}
		index[name] = i
		n := sim.Node{Name: name}
		plane, geo := s.X.Set || s.Y.Set, s.Lat.Set || s.Lon.Set
		switch {
		case plane && geo:
			p := s.Lat.Pos
			if !s.Lat.Set {
				p = s.Lon.Pos
			}
			return nil, nil, errAt(p, "node %q: give either x_km/y_km or lat/lon, not both", name)
		case plane:
			if !s.X.Set || !s.Y.Set {
				p := s.X.Pos
				if !s.X.Set {
					p = s.Y.Pos
				}
				return nil, nil, errAt(p, "node %q: x_km and y_km go together", name)
			}
			n.Coord, n.X, n.Y = sim.Plane, s.X.V, s.Y.V
		case geo:
			if !s.Lat.Set || !s.Lon.Set {
				p := s.Lat.Pos
				if !s.Lat.Set {
					p = s.Lon.Pos
				}
				return nil, nil, errAt(p, "node %q: lat and lon go together", name)
			}
			if s.Lat.V < -90 || s.Lat.V > 90 {
				return nil, nil, errAt(s.Lat.Pos, "node %q: lat must be between -90 and 90, got %g", name, s.Lat.V)
			}
			if s.Lon.V < -180 || s.Lon.V > 180 {
				return nil, nil, errAt(s.Lon.Pos, "node %q: lon must be between -180 and 180, got %g", name, s.Lon.V)
			}
			n.Coord, n.Lat, n.Lon = sim.Geo, s.Lat.V, s.Lon.V
		}
		if n.Coord != sim.NoCoord {
			if coordOf < 0 {
				coordOf = i
				st.coordKind = n.Coord
			} else if first := g.Nodes[coordOf]; first.Coord != n.Coord {
				p := s.X.Pos
				if n.Coord == sim.Geo {
					p = s.Lat.Pos
				}
				return nil, nil, errAt(p, "node %q: uses %s but node %q (line %d) uses %s; use one kind of coordinates", name, coordName(n.Coord), first.Name, f.Nodes[coordOf].Pos.Line, coordName(first.Coord))
			}
		}
		if s.Processing.Set {
			if s.Processing.D < 0 {
				return nil, nil, errAt(s.Processing.Pos, "node %q: processing must not be negative, got %v", name, s.Processing.D)
			}
			n.Processing = sim.Time(s.Processing.D)
		}
		g.Nodes = append(g.Nodes, n)
	}

	pairs := make(map[[2]int]int, len(f.Links))  // pair -> index in f.Links
	linkOf := make(map[[2]int]int, len(f.Links)) // pair -> index in g.Links
	merged := map[int]int{}                      // index in g.Links -> edges merged into it
	for i, s := range f.Links {
		if s.Pos == (yamlx.Pos{}) {
			s.Pos = f.LinksPos
		}
		end := func(v yamlx.String, field string) (int, error) {
			if !v.Set || v.S == "" {
				return 0, errAt(s.Pos, "link %d: %s: missing node name", i+1, field)
			}
			j, ok := index[v.S]
			if !ok {
				return 0, errAt(v.Pos, "link %d: %s: unknown node %q", i+1, field, v.S)
			}
			return j, nil
		}
		a, err := end(s.A, "a")
		if err != nil {
			return nil, nil, err
		}
		b, err := end(s.B, "b")
		if err != nil {
			return nil, nil, err
		}
		if a == b {
			return nil, nil, errAt(s.B.Pos, "link %d: joins node %q to itself", i+1, s.A.S)
		}
		key := [2]int{min(a, b), max(a, b)}
		j, dup := pairs[key]
		if dup && !o.mergeParallel {
			return nil, nil, errAt(s.Pos, "link %d: %s-%s is listed twice (first at line %d)", i+1, s.A.S, s.B.S, f.Links[j].Pos.Line)
		}
		l := sim.Link{A: a, B: b, Bandwidth: bandwidth, Buffer: buffer}
		if s.Bandwidth.Set {
			if err := checkBandwidth(s.Bandwidth.BPS); err != "" {
				return nil, nil, errAt(s.Bandwidth.Pos, "link %s-%s: bandwidth: %s", s.A.S, s.B.S, err)
			}
			l.Bandwidth = s.Bandwidth.BPS
			st.bwOwn++
		} else if d.Bandwidth.Set {
			st.bwDefaults++
		} else {
			st.bwDefault++
		}
		if s.Buffer.Set {
			if s.Buffer.V < 0 {
				return nil, nil, errAt(s.Buffer.Pos, "link %s-%s: buffer: must not be negative, got %d", s.A.S, s.B.S, s.Buffer.V)
			}
			l.Buffer = s.Buffer.V
			st.bufOwn++
		} else if d.Buffer.Set {
			st.bufDefaults++
		} else {
			st.bufDefault++
		}
		switch {
		case s.Delay.Set:
			if s.Delay.D < 0 {
				return nil, nil, errAt(s.Delay.Pos, "link %s-%s: delay: must not be negative, got %v", s.A.S, s.B.S, s.Delay.D)
			}
			l.Delay = sim.Time(s.Delay.D)
			st.delayOwn++
		case d.Delay.Set:
			l.Delay = sim.Time(d.Delay.D)
			st.delayDefaults++
		default:
			var ok bool
			if l.Delay, ok = sim.PropagationDelay(g.Nodes[a], g.Nodes[b]); ok {
				st.delayCoord++
			} else {
				l.Delay = DefaultDelay
				st.delayDefault++
			}
		}
		if dup {
			// A parallel edge: one link carries the sum of the bandwidths and
			// keeps the first edge's delay and buffer.
			k := linkOf[key]
			g.Links[k].Bandwidth += l.Bandwidth
			merged[k]++
			continue
		}
		pairs[key] = i
		linkOf[key] = len(g.Links)
		g.Links = append(g.Links, l)
	}
	if len(merged) > 0 {
		ks := make([]int, 0, len(merged))
		for k := range merged {
			ks = append(ks, k)
		}
		sort.Ints(ks)
		parts := make([]string, 0, len(ks))
		for _, k := range ks {
			l := g.Links[k]
			parts = append(parts, fmt.Sprintf("%s-%s (%d edges, %s)", g.Nodes[l.A].Name, g.Nodes[l.B].Name, merged[k]+1, yamlBandwidth(l.Bandwidth)))
		}
		st.notes = append(st.notes, fmt.Sprintf("parallel edges merged into one link each, bandwidths summed, delay and buffer of the first edge: %s", strings.Join(parts, ", ")))
	}

	if comps := g.Components(); len(comps) > 1 {
		if o.keepLargest {
			g, st.notes = keepLargest(g, comps, st.notes)
		} else {
			pos, field := f.LinksPos, "links: "
			if pos == (yamlx.Pos{}) {
				pos, field = f.Pos, ""
			}
			return nil, nil, errAt(pos, "%stopology %q is not connected: %s (keep: largest-component keeps only the largest)", field, g.Name, describeComponents(g, comps))
		}
	}
	if err := g.Validate(); err != nil {
		return nil, nil, errAt(f.Pos, "%v", err)
	}
	return g, st, nil
}

// keepLargest returns the subgraph of g on its largest component (the
// first, by lowest node index, among equally large ones) and a note naming
// what was dropped.
func keepLargest(g *sim.Graph, comps [][]int, notes []string) (*sim.Graph, []string) {
	best := 0
	for i, c := range comps {
		if len(c) > len(comps[best]) {
			best = i
		}
	}
	keep := make([]int, len(g.Nodes))
	for i := range keep {
		keep[i] = -1
	}
	out := &sim.Graph{Name: g.Name}
	for _, n := range comps[best] {
		keep[n] = len(out.Nodes)
		out.Nodes = append(out.Nodes, g.Nodes[n])
	}
	dropped := 0
	for _, l := range g.Links {
		if keep[l.A] < 0 {
			dropped++
			continue
		}
		l.A, l.B = keep[l.A], keep[l.B]
		out.Links = append(out.Links, l)
	}
	rest := make([][]int, 0, len(comps)-1)
	for i, c := range comps {
		if i != best {
			rest = append(rest, c)
		}
	}
	notes = append(notes, fmt.Sprintf("kept the largest component (%d of %d nodes); dropped %s and %s in %s",
		len(out.Nodes), len(g.Nodes), plural(len(g.Nodes)-len(out.Nodes), "node"), plural(dropped, "link"), describeComponents(g, rest)))
	return out, notes
}

// coordDelay is the propagation delay implied by the coordinates of a and b,
// or DefaultDelay when they have none.
func coordDelay(a, b sim.Node) sim.Time {
	if d, ok := sim.PropagationDelay(a, b); ok {
		return d
	}
	return DefaultDelay
}

func checkBandwidth(bps float64) string {
	if !(bps > 0) || math.IsInf(bps, 0) {
		return fmt.Sprintf("must be positive, got %g bit/s", bps)
	}
	return ""
}

func coordName(c sim.Coord) string {
	if c == sim.Geo {
		return "lat/lon"
	}
	return "x_km/y_km"
}

// describeComponents names each component by up to 8 of its nodes.
func describeComponents(g *sim.Graph, comps [][]int) string {
	parts := make([]string, len(comps))
	for i, c := range comps {
		names := make([]string, 0, min(len(c), 9))
		for j, n := range c {
			if j == 8 {
				names = append(names, fmt.Sprintf("and %d more", len(c)-8))
				break
			}
			names = append(names, g.Nodes[n].Name)
		}
		parts[i] = "{" + strings.Join(names, " ") + "}"
	}
	return fmt.Sprintf("%s %s", plural(len(comps), "component"), strings.Join(parts, ", "))
}
