package topologies

import (
	"bufio"
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

// GraphML attribute names hoplore writes (the attr.name of a <key>).
const (
	gmlName       = "name"       // graph or node: name (a node's default is its id)
	gmlX          = "x_km"       // node: plane coordinates in km
	gmlY          = "y_km"       //
	gmlLat        = "lat"        // node: latitude/longitude in degrees
	gmlLon        = "lon"        //
	gmlProcessing = "processing" // node: seconds, or a Go duration such as 10us
	gmlBandwidth  = "bandwidth"  // edge: bit/s, or an SI rate such as 10Mbps
	gmlDelay      = "delay"      // edge: seconds, or a Go duration such as 4ms
	gmlBuffer     = "buffer"     // edge: packets
)

// Fields a GraphML key can be read into, per domain, with the attribute
// names recognised for each (case-insensitively, first match wins). The
// first group are hoplore's own names; the others are the names the public
// topology collections' GraphML layout uses.
const (
	fLabel      = "label"       // node: its name
	fX          = "x_km"        // node
	fY          = "y_km"        // node
	fLat        = "lat"         // node
	fLon        = "lon"         // node
	fProcessing = "processing"  // node
	fBandwidth  = "bandwidth"   // edge: bit/s or an SI rate
	fSpeedRaw   = "speed_raw"   // edge: bit/s
	fSpeed      = "speed"       // edge: a number in speed_units
	fSpeedUnits = "speed_units" // edge: K, M, G or T (bit/s)
	fDelay      = "delay"       // edge
	fBuffer     = "buffer"      // edge
	fLinkLabel  = "link_label"  // edge: recognised, not used by the model
	fGraphName  = "graph_name"  // graph
)

type gmlField struct {
	field, domain string
	names         []string
}

var gmlFields = []gmlField{
	{fLabel, "node", []string{"name", "label"}},
	{fX, "node", []string{"x_km"}},
	{fY, "node", []string{"y_km"}},
	{fLat, "node", []string{"lat", "latitude"}},
	{fLon, "node", []string{"lon", "longitude", "long", "lng"}},
	{fProcessing, "node", []string{"processing"}},
	{fBandwidth, "edge", []string{"bandwidth"}},
	{fSpeedRaw, "edge", []string{"linkspeedraw"}},
	{fSpeed, "edge", []string{"linkspeed"}},
	{fSpeedUnits, "edge", []string{"linkspeedunits"}},
	{fDelay, "edge", []string{"delay"}},
	{fBuffer, "edge", []string{"buffer"}},
	{fLinkLabel, "edge", []string{"linklabel"}},
	{fGraphName, "graph", []string{"name"}},
}

// MappableFields are the fields an explicit attribute mapping
// (ReadOptions.Attributes) may name.
var MappableFields = []string{fLabel, fLat, fLon, fX, fY, fProcessing, fBandwidth, fDelay, fBuffer}

// DefaultSpeedScale multiplies link speeds read from a file's measured-speed
// keys (LinkSpeedRaw, LinkSpeed with LinkSpeedUnits, a mapped bandwidth key
// or the network-design XML's capacities) unless ReadOptions.BandwidthScale
// says otherwise: 10^-3, so that a 10 Gbit/s link becomes 10 Mbit/s, as the
// bundled generators scale real speeds down so that minutes of simulated
// time cost seconds of CPU. hoplore's own bandwidth key holds model bit
// rates (WriteGraphML writes them) and is not scaled by default.
const DefaultSpeedScale = 1e-3

// KeepLargestComponent is the value of ReadOptions.Keep that keeps a
// disconnected file's largest component and drops the rest with a note.
const KeepLargestComponent = "largest-component"

// ReadOptions say how to read a topology file written by another tool. The
// zero value reads every file as ParseGraphML does.
type ReadOptions struct {
	// BandwidthScale, when positive, multiplies every link speed read from
	// the file, hoplore's own bandwidth key included; 0 means
	// DefaultSpeedScale for measured speeds and 1 for hoplore's key.
	BandwidthScale float64
	// Keep is "" (a disconnected file is an error) or KeepLargestComponent.
	Keep string
	// CapacityUnit is the unit of the network-design XML's capacities, an
	// SI bit-rate unit such as Mbps or Gbps; "" means DefaultCapacityUnit.
	CapacityUnit string
	// Attributes maps a field (one of MappableFields) to the attribute name
	// (or key id) that holds it in the file, replacing the recognised names.
	Attributes map[string]string
}

// OptionError is a problem with a ReadOptions value; Option names it
// (e.g. "attributes.lat").
type OptionError struct {
	Option string
	Msg    string
}

func (e *OptionError) Error() string { return fmt.Sprintf("topologies: %s: %s", e.Option, e.Msg) }

func (o ReadOptions) check() error {
	if o.BandwidthScale < 0 || math.IsNaN(o.BandwidthScale) || math.IsInf(o.BandwidthScale, 0) {
		return &OptionError{"bandwidth_scale", fmt.Sprintf("must be a positive number, got %g", o.BandwidthScale)}
	}
	if o.Keep != "" && o.Keep != KeepLargestComponent {
		return &OptionError{"keep", fmt.Sprintf("%q is not %s", o.Keep, KeepLargestComponent)}
	}
	for _, f := range sortedKeys(o.Attributes) {
		if !slices.Contains(MappableFields, f) {
			return &OptionError{"attributes." + f, fmt.Sprintf("unknown field (known: %s)", strings.Join(MappableFields, ", "))}
		}
		if o.Attributes[f] == "" {
			return &OptionError{"attributes." + f, "names no attribute"}
		}
	}
	return nil
}

func sortedKeys[V any](m map[string]V) []string {
	ks := make([]string, 0, len(m))
	for k := range m {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	return ks
}

// speedScale is the factor for speeds read from a measured-speed key (own
// false) or hoplore's own bandwidth key (own true).
func (o ReadOptions) speedScale(own bool) float64 {
	switch {
	case o.BandwidthScale > 0:
		return o.BandwidthScale
	case own:
		return 1
	}
	return DefaultSpeedScale
}

// Provenance says where each field of a topology read from a file came
// from, what took a default, what the file held that hoplore does not use,
// and what was changed (merged, dropped, renamed), so that nothing is lost
// silently. Its lines are plain sentences in a fixed order.
type Provenance struct {
	Fields  []string // one line per field: name, coordinates, processing, bandwidth, delay, buffer
	Ignored []string // attributes in the file that no field reads
	Notes   []string // changes made while reading
}

// Lines returns every line of p: fields, then ignored attributes, then notes.
func (p *Provenance) Lines() []string {
	var out []string
	out = append(out, p.Fields...)
	if len(p.Ignored) > 0 {
		out = append(out, "ignored: "+strings.Join(p.Ignored, ", "))
	}
	for _, n := range p.Notes {
		out = append(out, "note: "+n)
	}
	return out
}

type gmlKey struct {
	id     string
	name   string // attr.name (the id when absent)
	domain string // node, edge, graph or all
	def    *gmlData
	field  string // what it is read into; "" when ignored
	values int    // <data> elements naming it
}

// gmlData is one value as written, with where it was written.
type gmlData struct {
	val string
	pos yamlx.Pos
}

type gmlParser struct {
	path  string
	opts  ReadOptions
	d     *xml.Decoder
	keys  map[string]*gmlKey
	ord   []*gmlKey // keys in declaration order
	pos   yamlx.Pos // where the last token started
	file  File
	ids   map[string]int // node id -> index in file.Nodes
	nodes []gmlNode      // per node of file.Nodes
	// edges refer to node ids, resolved once every node is known.
	edges []gmlEdge
	graph bool
	bound bool

	// counts for the provenance
	nameFrom                    map[string]int // key name -> nodes named by it
	coordFrom                   map[string]int
	procFrom                    int
	bwFrom                      map[string]int
	delayFrom, bufFrom, nLabels int
	sharedLabels                []string
}

type gmlNode struct {
	id    string
	label string // "" when the node has none
	pos   yamlx.Pos
}

type gmlEdge struct {
	source, target string
	pos            yamlx.Pos
	spec           LinkSpec
}

// ParseGraphML reads an undirected GraphML graph (data read from path, which
// only names it in errors) with the zero ReadOptions; see ReadGraphML.
func ParseGraphML(path string, data []byte) (*sim.Graph, error) {
	g, _, err := ReadGraphML(path, data, ReadOptions{})
	return g, err
}

// ReadGraphML reads an undirected GraphML graph (data read from path, which
// only names it in errors) and builds it as a topology file would be built
// (see BuildFile for defaults), returning where each field came from.
//
// Keys are declared with <key> elements and recognised by their attr.name,
// case-insensitively: on nodes name or label (the node's name, else its id;
// a label shared by several nodes names each of them label#id), x_km/y_km,
// lat or latitude, lon or longitude (also long, lng) and processing; on
// edges bandwidth (bit/s or an SI rate), LinkSpeedRaw (bit/s), LinkSpeed
// with LinkSpeedUnits (K, M, G or T), delay (seconds or a Go duration),
// buffer (packets) and LinkLabel (read, not used); on the graph name. An
// edge's bandwidth is its bandwidth, else LinkSpeedRaw, else LinkSpeed ×
// LinkSpeedUnits, scaled as ReadOptions says. Edges joining the same pair
// are merged into one link whose bandwidth is their sum. Key defaults
// apply. Every problem, malformed XML included, is a *yamlx.Error naming
// FILE:LINE:COL; a bad option is an *OptionError.
func ReadGraphML(path string, data []byte, o ReadOptions) (*sim.Graph, *Provenance, error) {
	if err := o.check(); err != nil {
		return nil, nil, err
	}
	p := &gmlParser{path: path, opts: o, d: xml.NewDecoder(bytes.NewReader(data)), keys: map[string]*gmlKey{}, ids: map[string]int{},
		nameFrom: map[string]int{}, coordFrom: map[string]int{}, bwFrom: map[string]int{}}
	p.d.Strict = true
	p.d.CharsetReader = charsetReader
	if err := p.document(); err != nil {
		return nil, nil, err
	}
	g, st, err := buildFile(path, &p.file, buildOptions{mergeParallel: true, keepLargest: o.Keep == KeepLargestComponent})
	if err != nil {
		return nil, nil, err
	}
	return g, p.provenance(st), nil
}

func (p *gmlParser) errAt(pos yamlx.Pos, format string, args ...any) error {
	return yamlx.Errorf(p.path, pos, format, args...)
}

// next returns the next token and records where it starts.
func (p *gmlParser) next() (xml.Token, error) {
	line, col := p.d.InputPos()
	p.pos = yamlx.Pos{Line: line, Col: col}
	tok, err := p.d.Token()
	if err != nil {
		if err == io.EOF {
			return nil, err
		}
		// Point at the start of the token being read when the problem is on
		// its first line, else where the decoder stopped.
		pos := p.pos
		var se *xml.SyntaxError
		msg := err.Error()
		if errors.As(err, &se) {
			msg = se.Msg
			if se.Line != pos.Line {
				line, col = p.d.InputPos()
				pos = yamlx.Pos{Line: line, Col: col}
			}
		}
		return nil, p.errAt(pos, "malformed GraphML: %s", msg)
	}
	return tok, nil
}

func attr(e xml.StartElement, name string) (string, bool) {
	for _, a := range e.Attr {
		if a.Name.Local == name {
			return a.Value, true
		}
	}
	return "", false
}

func (p *gmlParser) document() error {
	for {
		tok, err := p.next()
		if err == io.EOF {
			return p.errAt(p.pos, "not a GraphML file: no <graphml> element")
		}
		if err != nil {
			return err
		}
		switch t := tok.(type) {
		case xml.StartElement:
			if t.Name.Local != "graphml" {
				return p.errAt(p.pos, "not a GraphML file: the root element is <%s>, not <graphml>", t.Name.Local)
			}
			if err := p.graphml(); err != nil {
				return err
			}
			if !p.graph {
				return p.errAt(p.pos, "GraphML file has no <graph>")
			}
			// Anything after the root must still be well formed.
			for {
				if _, err := p.next(); err == io.EOF {
					return nil
				} else if err != nil {
					return err
				}
			}
		case xml.CharData:
			if len(bytes.TrimSpace(t)) > 0 {
				return p.errAt(p.pos, "not a GraphML file: text before the root element")
			}
		}
	}
}

// children calls f for each child element of the current element and
// returns at its end tag; text between children is ignored.
func (p *gmlParser) children(f func(e xml.StartElement, pos yamlx.Pos) error) error {
	for {
		tok, err := p.next()
		if err == io.EOF {
			return p.errAt(p.pos, "malformed GraphML: unexpected end of file")
		}
		if err != nil {
			return err
		}
		switch t := tok.(type) {
		case xml.StartElement:
			if err := f(t.Copy(), p.pos); err != nil {
				return err
			}
		case xml.EndElement:
			return nil
		}
	}
}

// skip consumes the rest of the current element, however deeply nested.
func (p *gmlParser) skip() error {
	for depth := 1; depth > 0; {
		tok, err := p.next()
		if err == io.EOF {
			return p.errAt(p.pos, "malformed GraphML: unexpected end of file")
		}
		if err != nil {
			return err
		}
		switch tok.(type) {
		case xml.StartElement:
			depth++
		case xml.EndElement:
			depth--
		}
	}
	return nil
}

// text returns the character data of the current element, which must have
// no child elements.
func (p *gmlParser) text(what string) (string, error) {
	var sb strings.Builder
	for {
		tok, err := p.next()
		if err == io.EOF {
			return "", p.errAt(p.pos, "malformed GraphML: unexpected end of file")
		}
		if err != nil {
			return "", err
		}
		switch t := tok.(type) {
		case xml.CharData:
			sb.Write(t)
		case xml.StartElement:
			return "", p.errAt(p.pos, "%s holds an element <%s>; expected a plain value", what, t.Name.Local)
		case xml.EndElement:
			return strings.TrimSpace(sb.String()), nil
		}
	}
}

func (p *gmlParser) graphml() error {
	return p.children(func(e xml.StartElement, pos yamlx.Pos) error {
		switch e.Name.Local {
		case "key":
			return p.key(e, pos)
		case "graph":
			if p.graph {
				return p.errAt(pos, "GraphML file holds more than one <graph>; give one topology per file")
			}
			p.graph = true
			if err := p.bind(pos); err != nil {
				return err
			}
			return p.graphElem(e, pos)
		}
		return p.skip()
	})
}

func (p *gmlParser) key(e xml.StartElement, pos yamlx.Pos) error {
	id, ok := attr(e, "id")
	if !ok {
		return p.errAt(pos, "<key> has no id")
	}
	if _, dup := p.keys[id]; dup {
		return p.errAt(pos, "<key> id %q is declared twice", id)
	}
	k := &gmlKey{id: id, domain: "all"}
	if v, ok := attr(e, "for"); ok {
		k.domain = v
	}
	k.name = id
	if v, ok := attr(e, "attr.name"); ok {
		k.name = v
	}
	p.keys[id] = k
	p.ord = append(p.ord, k)
	return p.children(func(c xml.StartElement, cpos yamlx.Pos) error {
		if c.Name.Local != "default" {
			return p.skip()
		}
		v, err := p.text("<default>")
		if err != nil {
			return err
		}
		k.def = &gmlData{val: v, pos: cpos}
		return nil
	})
}

// bind decides which key each field is read from: the key the options map
// it to, else the first recognised name, in declaration order.
func (p *gmlParser) bind(pos yamlx.Pos) error {
	inDomain := func(k *gmlKey, domain string) bool { return k.domain == domain || k.domain == "all" }
	for _, f := range gmlFields {
		if want, ok := p.opts.Attributes[f.field]; ok && f.domain != "graph" {
			var hit *gmlKey
			for _, k := range p.ord {
				if inDomain(k, f.domain) && (strings.EqualFold(k.name, want) || k.id == want) {
					hit = k
					break
				}
			}
			if hit == nil {
				return &OptionError{"attributes." + f.field, fmt.Sprintf("%s declares no %s key %q", p.path, f.domain, want)}
			}
			if hit.field != "" && hit.field != f.field {
				return &OptionError{"attributes." + f.field, fmt.Sprintf("key %q is already read as %s", want, hit.field)}
			}
			hit.field = f.field
			continue
		}
		for _, name := range f.names {
			found := false
			for _, k := range p.ord {
				if k.field == "" && inDomain(k, f.domain) && strings.EqualFold(k.name, name) && !p.mappedElsewhere(k) {
					k.field, found = f.field, true
					break
				}
			}
			// Node names come from name, else from label: both are bound.
			if found && f.field != fLabel {
				break
			}
		}
	}
	return nil
}

// mappedElsewhere reports whether an explicit mapping names k.
func (p *gmlParser) mappedElsewhere(k *gmlKey) bool {
	for _, want := range p.opts.Attributes {
		if strings.EqualFold(k.name, want) || k.id == want {
			return true
		}
	}
	return false
}

// dataOf collects the <data> children of the current element that belong
// to domain, by the field they are read into; the names of label keys are
// kept apart so that name wins over label. Other children are skipped,
// except those forbid lists, which are errors.
func (p *gmlParser) dataOf(domain string, forbid map[string]string) (map[string]gmlData, error) {
	out := map[string]gmlData{}
	err := p.children(func(c xml.StartElement, pos yamlx.Pos) error {
		if msg, bad := forbid[c.Name.Local]; bad {
			return p.errAt(pos, "%s", msg)
		}
		if c.Name.Local != "data" {
			return p.skip()
		}
		id, ok := attr(c, "key")
		if !ok {
			return p.errAt(pos, "<data> has no key")
		}
		k, ok := p.keys[id]
		if !ok {
			return p.errAt(pos, "<data> refers to key %q, which is not declared (declare keys before the graph)", id)
		}
		if k.domain != domain && k.domain != "all" {
			return p.skip()
		}
		k.values++
		if k.field == "" {
			return p.skip()
		}
		v, err := p.text(fmt.Sprintf("<data key=%q>", id))
		if err != nil {
			return err
		}
		out[fieldKey(k)] = gmlData{val: v, pos: pos}
		return nil
	})
	if err != nil {
		return nil, err
	}
	for _, k := range p.ord {
		if k.def != nil && k.field != "" && (k.domain == domain || k.domain == "all") {
			if _, ok := out[fieldKey(k)]; !ok {
				out[fieldKey(k)] = *k.def
			}
		}
	}
	return out, nil
}

// fieldKey is where a key's value is kept in dataOf's map: the field, but
// for node names the attribute name too (name before label).
func fieldKey(k *gmlKey) string {
	if k.field == fLabel {
		return fLabel + "/" + k.id
	}
	return k.field
}

// labelOf returns a node's label: from the first label key in declaration
// order that has a value.
func (p *gmlParser) labelOf(data map[string]gmlData) (gmlData, string, bool) {
	for _, k := range p.ord {
		if k.field != fLabel {
			continue
		}
		if v, ok := data[fieldKey(k)]; ok && v.val != "" {
			return v, k.name, true
		}
	}
	return gmlData{}, "", false
}

func (p *gmlParser) graphElem(e xml.StartElement, pos yamlx.Pos) error {
	if v, ok := attr(e, "edgedefault"); ok && v != "undirected" {
		return p.errAt(pos, "graph has edgedefault=%q; hoplore reads undirected graphs", v)
	}
	p.file.Pos, p.file.NodesPos, p.file.LinksPos = pos, pos, pos
	err := p.children(func(c xml.StartElement, cpos yamlx.Pos) error {
		switch c.Name.Local {
		case "node":
			return p.node(c, cpos)
		case "edge":
			return p.edge(c, cpos)
		case "hyperedge":
			return p.errAt(cpos, "hyperedges are not supported")
		case "data":
			id, _ := attr(c, "key")
			k, ok := p.keys[id]
			if !ok {
				return p.errAt(cpos, "<data> refers to key %q, which is not declared (declare keys before the graph)", id)
			}
			if k.domain != "graph" && k.domain != "all" {
				return p.skip()
			}
			k.values++
			if k.field == fGraphName {
				v, err := p.text("graph name")
				if err != nil {
					return err
				}
				p.file.Name = yamlx.String{S: v, Pos: cpos, Set: true}
				return nil
			}
		}
		return p.skip()
	})
	if err != nil {
		return err
	}
	p.nameNodes()
	for _, ed := range p.edges {
		s := ed.spec
		for _, end := range []struct {
			id  string
			dst *yamlx.String
		}{{ed.source, &s.A}, {ed.target, &s.B}} {
			i, ok := p.ids[end.id]
			if !ok {
				return p.errAt(ed.pos, "edge refers to node %q, which is not in the graph", end.id)
			}
			*end.dst = yamlx.String{S: p.file.Nodes[i].Name.S, Pos: ed.pos, Set: true}
		}
		p.file.Links = append(p.file.Links, s)
	}
	return nil
}

// nameNodes names each node by its label when no other node has the same
// one, as label#id when several share it, and by its id when it has none.
func (p *gmlParser) nameNodes() {
	count := map[string]int{}
	for _, n := range p.nodes {
		if n.label != "" {
			count[n.label]++
		}
	}
	var shared []string
	for i, n := range p.nodes {
		switch {
		case n.label == "":
		case count[n.label] == 1:
			p.file.Nodes[i].Name.S = n.label
		default:
			p.file.Nodes[i].Name.S = n.label + "#" + n.id
			shared = append(shared, p.file.Nodes[i].Name.S)
		}
	}
	if len(shared) > 0 {
		p.sharedLabels = shared
	}
}

var nestedGraph = map[string]string{"graph": "nested graphs are not supported"}

func (p *gmlParser) node(e xml.StartElement, pos yamlx.Pos) error {
	id, ok := attr(e, "id")
	if !ok {
		return p.errAt(pos, "<node> has no id")
	}
	if _, dup := p.ids[id]; dup {
		return p.errAt(pos, "node id %q is used twice", id)
	}
	data, err := p.dataOf("node", nestedGraph)
	if err != nil {
		return err
	}
	s := NodeSpec{Name: yamlx.String{S: id, Pos: pos, Set: true}, Pos: pos}
	gn := gmlNode{id: id, pos: pos}
	if v, from, ok := p.labelOf(data); ok {
		gn.label = v.val
		s.Name.Pos = v.pos
		p.nameFrom[from]++
	}
	for _, f := range []struct {
		name string
		dst  *yamlx.Float
	}{{fX, &s.X}, {fY, &s.Y}, {fLat, &s.Lat}, {fLon, &s.Lon}} {
		if v, ok := data[f.name]; ok {
			x, err := strconv.ParseFloat(v.val, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				return p.errAt(v.pos, "node %q: %s: %q is not a number", id, p.keyName(f.name), v.val)
			}
			*f.dst = yamlx.Float{V: x, Pos: v.pos, Set: true}
			p.coordFrom[f.name]++
		}
	}
	if v, ok := data[fProcessing]; ok {
		d, err := gmlDuration(v.val)
		if err != nil {
			return p.errAt(v.pos, "node %q: processing: %v", id, err)
		}
		s.Processing = yamlx.Duration{D: d, Pos: v.pos, Set: true}
		p.procFrom++
	}
	p.ids[id] = len(p.file.Nodes)
	p.file.Nodes = append(p.file.Nodes, s)
	p.nodes = append(p.nodes, gn)
	return nil
}

// keyName is the attribute name a field is read from ("" when none).
func (p *gmlParser) keyName(field string) string {
	for _, k := range p.ord {
		if k.field == field {
			return k.name
		}
	}
	return ""
}

// speedUnits returns the bit/s in one unit of LinkSpeedUnits.
func speedUnits(s string) (float64, bool) {
	t := strings.ToLower(strings.TrimSpace(s))
	for _, suf := range []string{"bps", "bit/s", "b/s"} {
		if strings.HasSuffix(t, suf) {
			t = strings.TrimSuffix(t, suf)
			break
		}
	}
	switch t {
	case "":
		return 1, s != "" // "bps" alone is bit/s; nothing at all is no unit
	case "k":
		return 1e3, true
	case "m":
		return 1e6, true
	case "g":
		return 1e9, true
	case "t":
		return 1e12, true
	}
	return 0, false
}

func (p *gmlParser) edge(e xml.StartElement, pos yamlx.Pos) error {
	if v, ok := attr(e, "directed"); ok && v == "true" {
		return p.errAt(pos, "edge is directed; hoplore reads undirected graphs")
	}
	src, ok1 := attr(e, "source")
	dst, ok2 := attr(e, "target")
	if !ok1 || !ok2 {
		return p.errAt(pos, "<edge> needs source and target")
	}
	data, err := p.dataOf("edge", nestedGraph)
	if err != nil {
		return err
	}
	ed := gmlEdge{source: src, target: dst, pos: pos, spec: LinkSpec{Pos: pos}}
	what := src + "-" + dst
	positive := func(v gmlData, key string, bps float64) error {
		if msg := checkBandwidth(bps); msg != "" {
			return p.errAt(v.pos, "edge %s: %s: %s", what, key, msg)
		}
		return nil
	}
	if v, ok := data[fBandwidth]; ok {
		bps, err := yamlx.ParseBandwidth(v.val)
		if err != nil {
			return p.errAt(v.pos, "edge %s: %s: %v", what, p.keyName(fBandwidth), err)
		}
		if err := positive(v, p.keyName(fBandwidth), bps); err != nil {
			return err
		}
		own := p.keyName(fBandwidth) == gmlBandwidth
		ed.spec.Bandwidth = yamlx.Bandwidth{BPS: bps * p.opts.speedScale(own), Pos: v.pos, Set: true}
		p.bwFrom[fBandwidth]++
	} else if v, ok := data[fSpeedRaw]; ok {
		bps, err := strconv.ParseFloat(v.val, 64)
		if err != nil {
			return p.errAt(v.pos, "edge %s: %s: %q is not a number of bit/s", what, p.keyName(fSpeedRaw), v.val)
		}
		if err := positive(v, p.keyName(fSpeedRaw), bps); err != nil {
			return err
		}
		ed.spec.Bandwidth = yamlx.Bandwidth{BPS: bps * p.opts.speedScale(false), Pos: v.pos, Set: true}
		p.bwFrom[fSpeedRaw]++
	} else if v, ok := data[fSpeed]; ok {
		x, err := strconv.ParseFloat(v.val, 64)
		if err != nil {
			return p.errAt(v.pos, "edge %s: %s: %q is not a number", what, p.keyName(fSpeed), v.val)
		}
		u, ok := data[fSpeedUnits]
		if !ok {
			return p.errAt(v.pos, "edge %s: %s %s has no unit (declare a LinkSpeedUnits key)", what, p.keyName(fSpeed), v.val)
		}
		mult, ok := speedUnits(u.val)
		if !ok {
			return p.errAt(u.pos, "edge %s: %s: unknown unit %q (use K, M, G or T)", what, p.keyName(fSpeedUnits), u.val)
		}
		if err := positive(v, p.keyName(fSpeed), x); err != nil {
			return err
		}
		ed.spec.Bandwidth = yamlx.Bandwidth{BPS: x * mult * p.opts.speedScale(false), Pos: v.pos, Set: true}
		p.bwFrom[fSpeed]++
	}
	if v, ok := data[fDelay]; ok {
		d, err := gmlDuration(v.val)
		if err != nil {
			return p.errAt(v.pos, "edge %s: delay: %v", what, err)
		}
		ed.spec.Delay = yamlx.Duration{D: d, Pos: v.pos, Set: true}
		p.delayFrom++
	}
	if v, ok := data[fBuffer]; ok {
		// Whole numbers written as doubles (64.0) are accepted too.
		x, err := strconv.ParseFloat(v.val, 64)
		if err != nil || x != math.Trunc(x) || math.Abs(x) > 1<<53 {
			return p.errAt(v.pos, "edge %s: buffer: %q is not a whole number", what, v.val)
		}
		n := int(x)
		ed.spec.Buffer = yamlx.Int{V: n, Pos: v.pos, Set: true}
		p.bufFrom++
	}
	if _, ok := data[fLinkLabel]; ok {
		p.nLabels++
	}
	p.edges = append(p.edges, ed)
	return nil
}

// provenance describes where the fields came from.
func (p *gmlParser) provenance(st *buildStats) *Provenance {
	pv := &Provenance{}
	nodes, edges := len(p.file.Nodes), len(p.edges)
	var parts []string
	named := 0
	for _, k := range p.ord {
		if n := p.nameFrom[k.name]; k.field == fLabel && n > 0 {
			parts = append(parts, fmt.Sprintf("%s for %s", plural(n, "node"), k.name))
			named += n
		}
	}
	if named < nodes {
		parts = append(parts, fmt.Sprintf("%s by id", plural(nodes-named, "node")))
	}
	pv.Fields = append(pv.Fields, "name: "+strings.Join(parts, ", "))
	switch {
	case p.coordFrom[fLat] > 0 || p.coordFrom[fLon] > 0:
		pv.Fields = append(pv.Fields, fmt.Sprintf("coordinates: lat from %s, lon from %s (degrees) for %s%s", p.keyName(fLat), p.keyName(fLon), plural(p.coordFrom[fLat], "node"), noneFor(nodes-p.coordFrom[fLat])))
	case p.coordFrom[fX] > 0 || p.coordFrom[fY] > 0:
		pv.Fields = append(pv.Fields, fmt.Sprintf("coordinates: x from %s, y from %s (km) for %s%s", p.keyName(fX), p.keyName(fY), plural(p.coordFrom[fX], "node"), noneFor(nodes-p.coordFrom[fX])))
	default:
		pv.Fields = append(pv.Fields, "coordinates: none")
	}
	if p.procFrom > 0 {
		pv.Fields = append(pv.Fields, fmt.Sprintf("processing: from %s for %s, 0 for %d", p.keyName(fProcessing), plural(p.procFrom, "node"), nodes-p.procFrom))
	}
	parts = parts[:0]
	read := 0
	for _, src := range []struct{ field, how string }{
		{fBandwidth, "(bit/s or SI)"},
		{fSpeedRaw, "(bit/s)"},
		{fSpeed, "× " + p.keyName(fSpeedUnits)},
	} {
		if n := p.bwFrom[src.field]; n > 0 {
			own := src.field == fBandwidth && p.keyName(fBandwidth) == gmlBandwidth
			scale := ""
			if s := p.opts.speedScale(own); s != 1 {
				scale = " × " + strconv.FormatFloat(s, 'g', -1, 64)
			}
			parts = append(parts, fmt.Sprintf("%s from %s %s%s", plural(n, "edge"), p.keyName(src.field), src.how, scale))
			read += n
		}
	}
	if read < edges {
		parts = append(parts, fmt.Sprintf("%s default %s", plural(edges-read, "edge"), yamlBandwidth(DefaultBandwidth)))
	}
	pv.Fields = append(pv.Fields, "bandwidth: "+strings.Join(parts, ", "))
	parts = parts[:0]
	if st.delayOwn > 0 {
		parts = append(parts, fmt.Sprintf("%s from %s", plural(st.delayOwn, "edge"), p.keyName(fDelay)))
	}
	if st.delayCoord > 0 {
		how := "great-circle distance (haversine)"
		if st.coordKind == sim.Plane {
			how = "plane distance"
		}
		parts = append(parts, fmt.Sprintf("%s from %s at 2·10^8 m/s", plural(st.delayCoord, "edge"), how))
	}
	if st.delayDefault > 0 {
		parts = append(parts, fmt.Sprintf("%s default %v", plural(st.delayDefault, "edge"), yamlDuration(DefaultDelay)))
	}
	pv.Fields = append(pv.Fields, "delay: "+strings.Join(parts, ", "))
	parts = parts[:0]
	if st.bufOwn > 0 {
		parts = append(parts, fmt.Sprintf("%s from %s", plural(st.bufOwn, "edge"), p.keyName(fBuffer)))
	}
	if st.bufDefault > 0 {
		parts = append(parts, fmt.Sprintf("%s default %d packets", plural(st.bufDefault, "edge"), DefaultBuffer))
	}
	pv.Fields = append(pv.Fields, "buffer: "+strings.Join(parts, ", "))
	for _, k := range p.ord {
		switch {
		case k.field == fLinkLabel:
			pv.Ignored = append(pv.Ignored, fmt.Sprintf("%s (edge labels, %s: not used by the model)", k.name, plural(k.values, "value")))
		case k.field == "" || k.field == fSpeedUnits && p.bwFrom[fSpeed] == 0:
			if k.values > 0 || k.def != nil {
				pv.Ignored = append(pv.Ignored, fmt.Sprintf("%s (%s, %s)", k.name, k.domain, plural(k.values, "value")))
			}
		}
	}
	if len(p.sharedLabels) > 0 {
		pv.Notes = append(pv.Notes, fmt.Sprintf("labels shared by several nodes, named label#id: %s", strings.Join(p.sharedLabels, ", ")))
	}
	pv.Notes = append(pv.Notes, st.notes...)
	return pv
}

// noneFor says how many nodes have no coordinates, when some have none.
func noneFor(n int) string {
	if n == 0 {
		return ""
	}
	return fmt.Sprintf(", none for %d", n)
}

func plural(n int, what string) string {
	if n == 1 {
		return "1 " + what
	}
	return strconv.Itoa(n) + " " + what + "s"
}

// gmlDuration parses seconds (a number) or a Go duration string.
func gmlDuration(s string) (time.Duration, error) {
	if x, err := strconv.ParseFloat(s, 64); err == nil {
		if math.IsNaN(x) || math.IsInf(x, 0) || math.Abs(x) > math.MaxInt64/1e9 {
			return 0, fmt.Errorf("%q is out of range", s)
		}
		return time.Duration(sim.FromSeconds(x)), nil
	}
	d, err := time.ParseDuration(s)
	if err != nil {
		return 0, fmt.Errorf("%q is neither seconds nor a duration such as 4ms", s)
	}
	return d, nil
}

// WriteGraphML writes g as an undirected GraphML graph that ParseGraphML
// reads back identically: node ids are node names; bandwidth in bit/s,
// delay and processing in seconds, buffer in packets; coordinates as
// x_km/y_km or lat/lon; the graph's name as a graph attribute.
func WriteGraphML(w io.Writer, g *sim.Graph) error {
	bw := bufio.NewWriter(w)
	esc := func(s string) string {
		var sb strings.Builder
		xml.EscapeText(&sb, []byte(s)) //nolint:errcheck // strings.Builder does not fail
		return sb.String()
	}
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	secs := func(t sim.Time) string { return num(t.Seconds()) }
	fmt.Fprintln(bw, `<?xml version="1.0" encoding="UTF-8"?>`)
	fmt.Fprintln(bw, `<graphml xmlns="http://graphml.graphdrawing.org/xmlns">`)
	for _, k := range []struct{ name, domain, typ string }{
		{gmlName, "graph", "string"},
		{gmlX, "node", "double"}, {gmlY, "node", "double"},
		{gmlLat, "node", "double"}, {gmlLon, "node", "double"},
		{gmlProcessing, "node", "double"},
		{gmlBandwidth, "edge", "double"}, {gmlDelay, "edge", "double"}, {gmlBuffer, "edge", "int"},
	} {
		fmt.Fprintf(bw, "  <key id=%q for=%q attr.name=%q attr.type=%q/>\n", k.name, k.domain, k.name, k.typ)
	}
	fmt.Fprintln(bw, `  <graph id="G" edgedefault="undirected">`)
	fmt.Fprintf(bw, "    <data key=\"name\">%s</data>\n", esc(g.Name))
	for _, n := range g.Nodes {
		fmt.Fprintf(bw, "    <node id=\"%s\">", esc(n.Name))
		switch n.Coord {
		case sim.Plane:
			fmt.Fprintf(bw, `<data key="x_km">%s</data><data key="y_km">%s</data>`, num(n.X), num(n.Y))
		case sim.Geo:
			fmt.Fprintf(bw, `<data key="lat">%s</data><data key="lon">%s</data>`, num(n.Lat), num(n.Lon))
		}
		if n.Processing != 0 {
			fmt.Fprintf(bw, `<data key="processing">%s</data>`, secs(n.Processing))
		}
		fmt.Fprintln(bw, "</node>")
	}
	for _, l := range g.Links {
		fmt.Fprintf(bw, "    <edge source=\"%s\" target=\"%s\"><data key=\"bandwidth\">%s</data><data key=\"delay\">%s</data><data key=\"buffer\">%d</data></edge>\n",
			esc(g.Nodes[l.A].Name), esc(g.Nodes[l.B].Name), num(l.Bandwidth), secs(l.Delay), l.Buffer)
	}
	fmt.Fprintln(bw, "  </graph>")
	fmt.Fprintln(bw, "</graphml>")
	return bw.Flush()
}
