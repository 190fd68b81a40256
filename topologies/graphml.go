package topologies

import (
	"bufio"
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

// GraphML attribute names understood by ParseGraphML (the attr.name of a
// <key>); other attributes are ignored.
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

type gmlKey struct {
	name   string // attr.name
	domain string // node, edge, graph or all
	def    *gmlData
}

// gmlData is one value as written, with where it was written.
type gmlData struct {
	val string
	pos yamlx.Pos
}

type gmlParser struct {
	path string
	d    *xml.Decoder
	keys map[string]*gmlKey
	ord  []*gmlKey // keys in declaration order
	pos  yamlx.Pos // where the last token started
	file File
	ids  map[string]int // node id -> index in file.Nodes
	// edges refer to node ids, resolved once every node is known.
	edges []gmlEdge
	graph bool
}

type gmlEdge struct {
	source, target string
	pos            yamlx.Pos
	spec           LinkSpec
}

// ParseGraphML reads an undirected GraphML graph (data read from path, which
// only names it in errors) and builds it as a topology file would be built
// (see BuildFile for defaults). Nodes are named by their id, or by a "name"
// attribute when they have one. Attributes are declared with <key> elements
// and recognised by their attr.name: edges' bandwidth (bit/s or an SI string
// such as 10Mbps), delay (seconds or a Go duration string) and buffer
// (packets); nodes' x_km/y_km or lat/lon and processing; the graph's name.
// Key defaults apply. Every problem, malformed XML included, is a
// *yamlx.Error naming FILE:LINE:COL.
func ParseGraphML(path string, data []byte) (*sim.Graph, error) {
	p := &gmlParser{path: path, d: xml.NewDecoder(bytes.NewReader(data)), keys: map[string]*gmlKey{}, ids: map[string]int{}}
	p.d.Strict = true
	if err := p.document(); err != nil {
		return nil, err
	}
	return BuildFile(path, &p.file)
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
	k := &gmlKey{domain: "all"}
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

// dataOf collects the <data> children of the current element that belong
// to domain, by attribute name; other children are skipped, except those
// forbid lists, which are errors.
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
		if k.domain != domain && k.domain != "all" || !known(domain, k.name) {
			return p.skip()
		}
		v, err := p.text(fmt.Sprintf("<data key=%q>", id))
		if err != nil {
			return err
		}
		out[k.name] = gmlData{val: v, pos: pos}
		return nil
	})
	if err != nil {
		return nil, err
	}
	for _, k := range p.ord {
		if k.def != nil && (k.domain == domain || k.domain == "all") && known(domain, k.name) {
			if _, ok := out[k.name]; !ok {
				out[k.name] = *k.def
			}
		}
	}
	return out, nil
}

func known(domain, name string) bool {
	switch domain {
	case "graph":
		return name == gmlName
	case "node":
		switch name {
		case gmlName, gmlX, gmlY, gmlLat, gmlLon, gmlProcessing:
			return true
		}
	case "edge":
		switch name {
		case gmlBandwidth, gmlDelay, gmlBuffer:
			return true
		}
	}
	return false
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
			if k, ok := p.keys[id]; !ok {
				return p.errAt(cpos, "<data> refers to key %q, which is not declared (declare keys before the graph)", id)
			} else if k.name == gmlName && (k.domain == "graph" || k.domain == "all") {
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
	if v, ok := data[gmlName]; ok {
		s.Name = yamlx.String{S: v.val, Pos: v.pos, Set: true}
	}
	for _, f := range []struct {
		name string
		dst  *yamlx.Float
	}{{gmlX, &s.X}, {gmlY, &s.Y}, {gmlLat, &s.Lat}, {gmlLon, &s.Lon}} {
		if v, ok := data[f.name]; ok {
			x, err := strconv.ParseFloat(v.val, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				return p.errAt(v.pos, "node %q: %s: %q is not a number", id, f.name, v.val)
			}
			*f.dst = yamlx.Float{V: x, Pos: v.pos, Set: true}
		}
	}
	if v, ok := data[gmlProcessing]; ok {
		d, err := gmlDuration(v.val)
		if err != nil {
			return p.errAt(v.pos, "node %q: processing: %v", id, err)
		}
		s.Processing = yamlx.Duration{D: d, Pos: v.pos, Set: true}
	}
	p.ids[id] = len(p.file.Nodes)
	p.file.Nodes = append(p.file.Nodes, s)
	return nil
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
	if v, ok := data[gmlBandwidth]; ok {
		bps, err := yamlx.ParseBandwidth(v.val)
		if err != nil {
			return p.errAt(v.pos, "edge %s: bandwidth: %v", what, err)
		}
		ed.spec.Bandwidth = yamlx.Bandwidth{BPS: bps, Pos: v.pos, Set: true}
	}
	if v, ok := data[gmlDelay]; ok {
		d, err := gmlDuration(v.val)
		if err != nil {
			return p.errAt(v.pos, "edge %s: delay: %v", what, err)
		}
		ed.spec.Delay = yamlx.Duration{D: d, Pos: v.pos, Set: true}
	}
	if v, ok := data[gmlBuffer]; ok {
		// Whole numbers written as doubles (64.0) are accepted too.
		x, err := strconv.ParseFloat(v.val, 64)
		if err != nil || x != math.Trunc(x) || math.Abs(x) > 1<<53 {
			return p.errAt(v.pos, "edge %s: buffer: %q is not a whole number", what, v.val)
		}
		n := int(x)
		ed.spec.Buffer = yamlx.Int{V: n, Pos: v.pos, Set: true}
	}
	p.edges = append(p.edges, ed)
	return nil
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
