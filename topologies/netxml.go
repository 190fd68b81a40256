package topologies

import (
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

// The network-design library XML layout: one <network> holding a
// <networkStructure> (nodes with coordinates, links with pre-installed
// capacity modules) and optionally <demands>:
//
//	<network>
//	  <networkStructure>
//	    <nodes coordinatesType="geographical">
//	      <node id="Arvenport"><coordinates><x>20.0</x><y>10.0</y></coordinates></node>
//	    </nodes>
//	    <links>
//	      <link id="L1"><source>Arvenport</source><target>Bellcaster</target>
//	        <preInstalledModule><capacity>2500</capacity><cost>0</cost></preInstalledModule>
//	      </link>
//	    </links>
//	  </networkStructure>
//	  <demands>
//	    <demand id="D1"><source>Arvenport</source><target>Bellcaster</target><demandValue>12.5</demandValue></demand>
//	  </demands>
//	</network>

// DefaultCapacityUnit is the unit of the network-design XML's capacities
// (the layout carries none) unless ReadOptions.CapacityUnit says otherwise.
const DefaultCapacityUnit = "Mbps"

// xnode is one element of an XML document with where it starts.
type xnode struct {
	name  string
	attrs []xml.Attr
	text  string
	kids  []*xnode
	pos   yamlx.Pos
	tpos  yamlx.Pos // where its text starts
}

func (n *xnode) attr(name string) (string, bool) {
	for _, a := range n.attrs {
		if a.Name.Local == name {
			return a.Value, true
		}
	}
	return "", false
}

func (n *xnode) child(name string) *xnode {
	for _, k := range n.kids {
		if k.name == name {
			return k
		}
	}
	return nil
}

func (n *xnode) all(name string) []*xnode {
	var out []*xnode
	for _, k := range n.kids {
		if k.name == name {
			out = append(out, k)
		}
	}
	return out
}

// parseXMLTree reads a whole XML document into a tree of elements, each
// remembering its line and column; what names the layout in errors.
func parseXMLTree(path string, data []byte, what string) (*xnode, error) {
	d := xml.NewDecoder(bytes.NewReader(data))
	d.Strict = true
	d.CharsetReader = charsetReader
	var stack []*xnode
	var root *xnode
	for {
		line, col := d.InputPos()
		pos := yamlx.Pos{Line: line, Col: col}
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			msg := err.Error()
			var se *xml.SyntaxError
			if errors.As(err, &se) {
				msg = se.Msg
				if se.Line != pos.Line {
					l, c := d.InputPos()
					pos = yamlx.Pos{Line: l, Col: c}
				}
			}
			return nil, yamlx.Errorf(path, pos, "malformed %s: %s", what, msg)
		}
		switch t := tok.(type) {
		case xml.StartElement:
			n := &xnode{name: t.Name.Local, attrs: t.Copy().Attr, pos: pos}
			if len(stack) == 0 {
				if root != nil {
					return nil, yamlx.Errorf(path, pos, "malformed %s: a second root element <%s>", what, n.name)
				}
				root = n
			} else {
				p := stack[len(stack)-1]
				p.kids = append(p.kids, n)
			}
			stack = append(stack, n)
		case xml.EndElement:
			stack = stack[:len(stack)-1]
		case xml.CharData:
			if len(stack) > 0 {
				n := stack[len(stack)-1]
				if n.text == "" && len(bytes.TrimSpace(t)) > 0 {
					n.tpos = pos
				}
				n.text += string(t)
			}
		}
	}
	if root == nil {
		return nil, yamlx.Errorf(path, yamlx.Pos{Line: 1, Col: 1}, "not a %s file: no root element", what)
	}
	return root, nil
}

// value is an element's trimmed text and where it is (the element when it
// has none).
func (n *xnode) value() (string, yamlx.Pos) {
	s := strings.TrimSpace(n.text)
	if s == "" || n.tpos == (yamlx.Pos{}) {
		return s, n.pos
	}
	return s, n.tpos
}

// NetworkXML is a network-design library XML file as read: its topology and
// its demands (empty when it has none).
type NetworkXML struct {
	Graph      *sim.Graph
	Provenance *Provenance
	Demands    []Demand
}

// Demand is one <demand> of a network-design XML file: a value from source
// to target in the file's own unit.
type Demand struct {
	ID             string
	Source, Target string
	Value          float64
	Pos            yamlx.Pos // where the demand starts
}

const netXMLWhat = "network-design XML"

// ReadNetworkXML reads a file in the network-design library XML layout
// (data read from path, which only names it in errors): nodes named by their
// id with coordinates, lon/lat in degrees when <nodes
// coordinatesType="geographical">, else plane x/y read as km; links with the
// sum of their <preInstalledModule> capacities in o.CapacityUnit (default
// DefaultCapacityUnit) times the bandwidth scale (default
// DefaultSpeedScale), links without one at DefaultBandwidth; delays from
// the coordinates (see BuildFile); links joining the same pair merged,
// bandwidths summed. Demands are read as written; a demand naming an unknown
// node, or a negative or non-numeric value, is an error. Every problem is a
// *yamlx.Error naming FILE:LINE:COL.
func ReadNetworkXML(path string, data []byte, o ReadOptions) (*NetworkXML, error) {
	if err := o.check(); err != nil {
		return nil, err
	}
	if len(o.Attributes) > 0 {
		return nil, &OptionError{"attributes", "apply to GraphML files only; the network-design XML layout names its fields"}
	}
	unit, unitName := 1e6, DefaultCapacityUnit
	if o.CapacityUnit != "" {
		unitName = o.CapacityUnit
		u, err := yamlx.ParseBandwidth("1" + o.CapacityUnit)
		if err != nil || strings.TrimSpace(o.CapacityUnit) == "" {
			return nil, &OptionError{"capacity_unit", fmt.Sprintf("%q is not a unit of bit rate (use bps, kbps, Mbps, Gbps)", o.CapacityUnit)}
		}
		unit = u
	}
	root, err := parseXMLTree(path, data, netXMLWhat)
	if err != nil {
		return nil, err
	}
	errAt := func(pos yamlx.Pos, format string, args ...any) error {
		return yamlx.Errorf(path, pos, format, args...)
	}
	if root.name != "network" {
		return nil, errAt(root.pos, "not a %s file: the root element is <%s>, not <network>", netXMLWhat, root.name)
	}
	ns := root.child("networkStructure")
	if ns == nil {
		return nil, errAt(root.pos, "<network> has no <networkStructure>")
	}
	nodesEl, linksEl := ns.child("nodes"), ns.child("links")
	if nodesEl == nil {
		return nil, errAt(ns.pos, "<networkStructure> has no <nodes>")
	}
	f := File{Pos: ns.pos, NodesPos: nodesEl.pos, LinksPos: ns.pos}
	geo := false
	if v, ok := nodesEl.attr("coordinatesType"); ok {
		geo = strings.EqualFold(v, "geographical")
	}
	ids := map[string]bool{}
	num := func(n *xnode, what string) (float64, yamlx.Pos, error) {
		s, pos := n.value()
		x, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return 0, pos, errAt(pos, "%s: %q is not a number", what, s)
		}
		return x, pos, nil
	}
	withCoords := 0
	for _, n := range nodesEl.all("node") {
		id, ok := n.attr("id")
		if !ok || id == "" {
			return nil, errAt(n.pos, "<node> has no id")
		}
		if ids[id] {
			return nil, errAt(n.pos, "node id %q is used twice", id)
		}
		ids[id] = true
		s := NodeSpec{Name: yamlx.String{S: id, Pos: n.pos, Set: true}, Pos: n.pos}
		if c := n.child("coordinates"); c != nil {
			xe, ye := c.child("x"), c.child("y")
			if xe == nil || ye == nil {
				return nil, errAt(c.pos, "node %q: <coordinates> needs <x> and <y>", id)
			}
			x, xpos, err := num(xe, fmt.Sprintf("node %q: x", id))
			if err != nil {
				return nil, err
			}
			y, ypos, err := num(ye, fmt.Sprintf("node %q: y", id))
			if err != nil {
				return nil, err
			}
			if geo {
				s.Lon = yamlx.Float{V: x, Pos: xpos, Set: true}
				s.Lat = yamlx.Float{V: y, Pos: ypos, Set: true}
			} else {
				s.X = yamlx.Float{V: x, Pos: xpos, Set: true}
				s.Y = yamlx.Float{V: y, Pos: ypos, Set: true}
			}
			withCoords++
		}
		f.Nodes = append(f.Nodes, s)
	}
	scale := o.speedScale(false)
	var capRead, capDefault int
	if linksEl != nil {
		f.LinksPos = linksEl.pos
		for _, l := range linksEl.all("link") {
			id, _ := l.attr("id")
			s := LinkSpec{Pos: l.pos}
			for _, end := range []struct {
				name string
				dst  *yamlx.String
			}{{"source", &s.A}, {"target", &s.B}} {
				e := l.child(end.name)
				if e == nil {
					return nil, errAt(l.pos, "link %q has no <%s>", id, end.name)
				}
				v, pos := e.value()
				if !ids[v] {
					return nil, errAt(pos, "link %q: %s: unknown node %q", id, end.name, v)
				}
				*end.dst = yamlx.String{S: v, Pos: pos, Set: true}
			}
			total, has := 0.0, false
			for _, m := range l.all("preInstalledModule") {
				c := m.child("capacity")
				if c == nil {
					return nil, errAt(m.pos, "link %q: <preInstalledModule> has no <capacity>", id)
				}
				x, pos, err := num(c, fmt.Sprintf("link %q: capacity", id))
				if err != nil {
					return nil, err
				}
				if x < 0 {
					return nil, errAt(pos, "link %q: capacity: must not be negative, got %g", id, x)
				}
				if !has {
					s.Bandwidth.Pos = pos
				}
				total, has = total+x, true
			}
			if has {
				if !(total > 0) {
					return nil, errAt(s.Bandwidth.Pos, "link %q: capacity: must be positive, got %g", id, total)
				}
				s.Bandwidth.BPS, s.Bandwidth.Set = total*unit*scale, true
				capRead++
			} else {
				capDefault++
			}
			f.Links = append(f.Links, s)
		}
	}
	g, st, err := buildFile(path, &f, buildOptions{mergeParallel: true, keepLargest: o.Keep == KeepLargestComponent})
	if err != nil {
		return nil, err
	}
	pv := &Provenance{}
	pv.Fields = append(pv.Fields, fmt.Sprintf("name: %s by id", plural(len(f.Nodes), "node")))
	switch {
	case withCoords == 0:
		pv.Fields = append(pv.Fields, "coordinates: none")
	case geo:
		pv.Fields = append(pv.Fields, fmt.Sprintf("coordinates: lon from x, lat from y (geographical, degrees) for %s%s", plural(withCoords, "node"), noneFor(len(f.Nodes)-withCoords)))
	default:
		pv.Fields = append(pv.Fields, fmt.Sprintf("coordinates: plane x, y read as km for %s%s", plural(withCoords, "node"), noneFor(len(f.Nodes)-withCoords)))
	}
	var parts []string
	if capRead > 0 {
		parts = append(parts, fmt.Sprintf("%s from preInstalledModule capacity in %s × %s", plural(capRead, "link"), unitName, strconv.FormatFloat(scale, 'g', -1, 64)))
	}
	if capDefault > 0 {
		parts = append(parts, fmt.Sprintf("%s default %s (no pre-installed module)", plural(capDefault, "link"), yamlBandwidth(DefaultBandwidth)))
	}
	if len(parts) == 0 {
		parts = append(parts, "no links")
	}
	pv.Fields = append(pv.Fields, "bandwidth: "+strings.Join(parts, ", "))
	parts = parts[:0]
	if st.delayCoord > 0 {
		how := "great-circle distance (haversine)"
		if st.coordKind == sim.Plane {
			how = "plane distance"
		}
		parts = append(parts, fmt.Sprintf("%s from %s at 2·10^8 m/s", plural(st.delayCoord, "link"), how))
	}
	if st.delayDefault > 0 {
		parts = append(parts, fmt.Sprintf("%s default %s", plural(st.delayDefault, "link"), yamlDuration(DefaultDelay)))
	}
	if len(parts) > 0 {
		pv.Fields = append(pv.Fields, "delay: "+strings.Join(parts, ", "))
	}
	pv.Fields = append(pv.Fields, fmt.Sprintf("buffer: %s default %d packets", plural(len(f.Links), "link"), DefaultBuffer))
	pv.Notes = st.notes
	out := &NetworkXML{Graph: g, Provenance: pv}

	if dm := root.child("demands"); dm != nil {
		for _, d := range dm.all("demand") {
			id, _ := d.attr("id")
			dd := Demand{ID: id, Pos: d.pos}
			for _, end := range []struct {
				name string
				dst  *string
			}{{"source", &dd.Source}, {"target", &dd.Target}} {
				e := d.child(end.name)
				if e == nil {
					return nil, errAt(d.pos, "demand %q has no <%s>", id, end.name)
				}
				v, pos := e.value()
				if !ids[v] {
					return nil, errAt(pos, "demand %q: %s: unknown node %q", id, end.name, v)
				}
				*end.dst = v
			}
			if dd.Source == dd.Target {
				return nil, errAt(d.pos, "demand %q: source and target are both %q", id, dd.Source)
			}
			e := d.child("demandValue")
			if e == nil {
				return nil, errAt(d.pos, "demand %q has no <demandValue>", id)
			}
			x, pos, err := num(e, fmt.Sprintf("demand %q: demandValue", id))
			if err != nil {
				return nil, err
			}
			if x < 0 {
				return nil, errAt(pos, "demand %q: demandValue: must not be negative, got %g", id, x)
			}
			dd.Value = x
			out.Demands = append(out.Demands, dd)
		}
		pv.Fields = append(pv.Fields, fmt.Sprintf("demands: %d, not part of the topology (give the file as traffic.matrix to use them)", len(out.Demands)))
	}
	return out, nil
}

// charsetReader lets the XML readers take files declared in ISO-8859-1
// (Latin-1, whose bytes are the first 256 code points) or US-ASCII besides
// UTF-8.
func charsetReader(label string, in io.Reader) (io.Reader, error) {
	switch strings.ToLower(label) {
	case "iso-8859-1", "iso8859-1", "latin1", "latin-1", "l1", "us-ascii", "ascii":
		data, err := io.ReadAll(in)
		if err != nil {
			return nil, err
		}
		var b strings.Builder
		b.Grow(len(data))
		for _, c := range data {
			b.WriteRune(rune(c))
		}
		return strings.NewReader(b.String()), nil
	}
	return nil, fmt.Errorf("unsupported encoding %q (use UTF-8 or ISO-8859-1)", label)
}
