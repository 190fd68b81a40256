package topologies

import (
	"bytes"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

var update = flag.Bool("update", false, "rewrite golden files in testdata")

// malformed are topology files with one mistake each, and the FILE:LINE:COL
// the error must point at (worked out by hand from the text).
var malformed = []struct {
	name, file, text, at string
}{
	{"yaml-unknown-field", "t.yaml", "name: x\nnodes: [a, b]\nlinks:\n  - {a: a, b: b, bw: 1Mbps}\n", "t.yaml:4:18: "},
	{"yaml-unknown-top-field", "t.yaml", "name: x\nnodes: [a, b]\nlnks:\n  - {a: a, b: b}\n", "t.yaml:3:1: "},
	{"yaml-unknown-node", "t.yaml", "nodes: [a, b]\nlinks:\n  - {a: a, b: c}\n", "t.yaml:3:15: "},
	{"yaml-missing-end", "t.yaml", "nodes: [a, b]\nlinks:\n  - {a: a}\n", "t.yaml:3:5: "},
	{"yaml-duplicate-node", "t.yaml", "nodes:\n  - a\n  - b\n  - a\n", "t.yaml:4:5: "},
	{"yaml-duplicate-link", "t.yaml", "nodes: [a, b]\nlinks:\n  - {a: a, b: b}\n  - {a: b, b: a}\n", "t.yaml:4:5: "},
	{"yaml-duplicate-link-block", "t.yaml", "nodes: [a, b]\nlinks:\n  - a: a\n    b: b\n  - b: a\n    a: b\n", "t.yaml:5:5: "},
	{"yaml-block-node-no-name", "t.yaml", "nodes:\n  - a\n  - x_km: 1\n    y_km: 2\n", "t.yaml:3:5: "},
	{"yaml-self-loop", "t.yaml", "nodes: [a, b]\nlinks:\n  - {a: a, b: a}\n", "t.yaml:3:15: "},
	{"yaml-negative-bandwidth", "t.yaml", "nodes: [a, b]\nlinks:\n  - a: a\n    b: b\n    bandwidth: -2Mbps\n", "t.yaml:5:16: "},
	{"yaml-zero-default-bandwidth", "t.yaml", "defaults: {bandwidth: 0}\nnodes: [a, b]\nlinks:\n  - {a: a, b: b}\n", "t.yaml:1:23: "},
	{"yaml-bad-bandwidth", "t.yaml", "nodes: [a, b]\nlinks:\n  - {a: a, b: b, bandwidth: fast}\n", "t.yaml:3:29: "},
	{"yaml-negative-delay", "t.yaml", "nodes: [a, b]\nlinks:\n  - {a: a, b: b, delay: -3ms}\n", "t.yaml:3:25: "},
	{"yaml-bad-delay", "t.yaml", "nodes: [a, b]\nlinks:\n  - {a: a, b: b, delay: 3 ms}\n", "t.yaml:3:25: "},
	{"yaml-negative-buffer", "t.yaml", "nodes: [a, b]\nlinks:\n  - {a: a, b: b, buffer: -1}\n", "t.yaml:3:26: "},
	{"yaml-negative-default-delay", "t.yaml", "defaults:\n  delay: -1ms\nnodes: [a, b]\nlinks:\n  - {a: a, b: b}\n", "t.yaml:2:10: "},
	{"yaml-disconnected", "t.yaml", "name: split\nnodes: [a, b, c, d]\nlinks:\n  - {a: a, b: b}\n  - {a: c, b: d}\n", "t.yaml:3:1: "},
	{"yaml-disconnected-no-links", "t.yaml", "nodes: [a, b]\n", "t.yaml:1:1: "},
	{"yaml-mixed-coords-node", "t.yaml", "nodes:\n  - {name: a, x_km: 1, y_km: 2, lat: 3}\n", "t.yaml:2:38: "},
	{"yaml-mixed-coords-nodes", "t.yaml", "nodes:\n  - {name: a, x_km: 1, y_km: 2}\n  - {name: b, lat: 3, lon: 4}\nlinks:\n  - {a: a, b: b}\n", "t.yaml:3:20: "},
	{"yaml-half-coords", "t.yaml", "nodes:\n  - {name: a, y_km: 2}\n", "t.yaml:2:21: "},
	{"yaml-lat-range", "t.yaml", "nodes:\n  - {name: a, lat: 91, lon: 0}\n", "t.yaml:2:20: "},
	{"yaml-negative-processing", "t.yaml", "nodes:\n  - {name: a, processing: -1us}\n  - b\nlinks:\n  - {a: a, b: b}\n", "t.yaml:2:27: "},
	{"yaml-node-list", "t.yaml", "nodes:\n  - a\n  - [b, c]\n", "t.yaml:3:5: "},
	{"yaml-node-bool", "t.yaml", "nodes:\n  - a\n  - true\n", "t.yaml:3:5: "},
	{"yaml-node-no-name", "t.yaml", "nodes:\n  - a\n  - {x_km: 1, y_km: 1}\n", "t.yaml:3:5: "},
	{"yaml-no-nodes", "t.yaml", "name: empty\nnodes: []\n", "t.yaml:2:1: "},
	{"yaml-empty-file", "t.yaml", "", "t.yaml:1:1: "},
	{"yaml-not-mapping", "t.yaml", "- a\n- b\n", "t.yaml:1:1: "},
	{"yaml-syntax", "t.yaml", "nodes: [a, b\nlinks: []\n", "t.yaml:2:1: "},

	{"graphml-syntax", "t.graphml", "<graphml>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\">\n  </graph>\n</graphml>\n", "t.graphml:4:3: "},
	{"graphml-not-graphml", "t.graphml", "<?xml version=\"1.0\"?>\n<network/>\n", "t.graphml:2:1: "},
	{"graphml-no-graph", "t.graphml", "<graphml>\n</graphml>\n", "t.graphml:2:1: "},
	{"graphml-directed", "t.graphml", "<graphml>\n  <graph edgedefault=\"directed\">\n  </graph>\n</graphml>\n", "t.graphml:2:3: "},
	{"graphml-directed-edge", "t.graphml", "<graphml>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/>\n    <edge source=\"a\" target=\"b\" directed=\"true\"/>\n  </graph>\n</graphml>\n", "t.graphml:4:5: "},
	{"graphml-unknown-node", "t.graphml", "<graphml>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/>\n    <edge source=\"a\" target=\"c\"/>\n  </graph>\n</graphml>\n", "t.graphml:4:5: "},
	{"graphml-undeclared-key", "t.graphml", "<graphml>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"><data key=\"d9\">1</data></node>\n  </graph>\n</graphml>\n", "t.graphml:3:18: "},
	{"graphml-bad-bandwidth", "t.graphml", "<graphml>\n  <key id=\"bw\" for=\"edge\" attr.name=\"bandwidth\" attr.type=\"string\"/>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/>\n    <edge source=\"a\" target=\"b\">\n      <data key=\"bw\">fast</data>\n    </edge>\n  </graph>\n</graphml>\n", "t.graphml:6:7: "},
	{"graphml-negative-delay", "t.graphml", "<graphml>\n  <key id=\"d\" for=\"edge\" attr.name=\"delay\" attr.type=\"double\"/>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/>\n    <edge source=\"a\" target=\"b\"><data key=\"d\">-0.001</data></edge>\n  </graph>\n</graphml>\n", "t.graphml:5:33: "},
	{"graphml-bad-buffer-default", "t.graphml", "<graphml>\n  <key id=\"q\" for=\"edge\" attr.name=\"buffer\" attr.type=\"int\">\n    <default>lots</default>\n  </key>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/>\n    <edge source=\"a\" target=\"b\"/>\n  </graph>\n</graphml>\n", "t.graphml:3:5: "},
	{"graphml-duplicate-node", "t.graphml", "<graphml>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/>\n    <node id=\"a\"/>\n  </graph>\n</graphml>\n", "t.graphml:4:5: "},
	{"graphml-self-loop", "t.graphml", "<graphml>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/>\n    <edge source=\"a\" target=\"b\"/>\n    <edge source=\"b\" target=\"b\"/>\n  </graph>\n</graphml>\n", "t.graphml:5:5: "},
	{"graphml-disconnected", "t.graphml", "<graphml>\n  <graph id=\"G\" edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/><node id=\"c\"/>\n    <edge source=\"a\" target=\"b\"/>\n  </graph>\n</graphml>\n", "t.graphml:2:3: "},
	{"graphml-nested-graph", "t.graphml", "<graphml>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\">\n      <graph edgedefault=\"undirected\"/>\n    </node>\n  </graph>\n</graphml>\n", "t.graphml:4:7: "},
	{"graphml-two-graphs", "t.graphml", "<graphml>\n  <graph edgedefault=\"undirected\"><node id=\"a\"/></graph>\n  <graph edgedefault=\"undirected\"><node id=\"b\"/></graph>\n</graphml>\n", "t.graphml:3:3: "},
	{"graphml-mixed-coords", "t.graphml", "<graphml>\n  <key id=\"x\" for=\"node\" attr.name=\"x_km\"/><key id=\"y\" for=\"node\" attr.name=\"y_km\"/><key id=\"la\" for=\"node\" attr.name=\"lat\"/>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"><data key=\"x\">1</data><data key=\"y\">2</data><data key=\"la\">3</data></node>\n  </graph>\n</graphml>\n", "t.graphml:4:62: "},
	{"graphml-empty", "t.graphml", "", "t.graphml:1:1: "},
	{"graphml-unknown-speed-unit", "t.graphml", "<graphml>\n  <key id=\"s\" for=\"edge\" attr.name=\"LinkSpeed\"/><key id=\"u\" for=\"edge\" attr.name=\"LinkSpeedUnits\"/>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/>\n    <edge source=\"a\" target=\"b\"><data key=\"s\">10</data><data key=\"u\">Q</data></edge>\n  </graph>\n</graphml>\n", "t.graphml:5:56: "},
	{"graphml-speed-without-unit", "t.graphml", "<graphml>\n  <key id=\"s\" for=\"edge\" attr.name=\"LinkSpeed\"/>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/>\n    <edge source=\"a\" target=\"b\"><data key=\"s\">10</data></edge>\n  </graph>\n</graphml>\n", "t.graphml:5:33: "},
	{"graphml-negative-speed", "t.graphml", "<graphml>\n  <key id=\"r\" for=\"edge\" attr.name=\"linkspeedraw\"/>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/>\n    <edge source=\"a\" target=\"b\"><data key=\"r\">-1e9</data></edge>\n  </graph>\n</graphml>\n", "t.graphml:5:33: "},
	{"graphml-negative-bandwidth", "t.graphml", "<graphml>\n  <key id=\"w\" for=\"edge\" attr.name=\"bandwidth\"/>\n  <graph edgedefault=\"undirected\">\n    <node id=\"a\"/><node id=\"b\"/>\n    <edge source=\"a\" target=\"b\"><data key=\"w\">-5Mbps</data></edge>\n  </graph>\n</graphml>\n", "t.graphml:5:33: "},
}

// TestMalformed checks that every malformed file gives a *yamlx.Error at
// the expected FILE:LINE:COL, with the message recorded in
// testdata/errors.golden (go test -update rewrites it).
func TestMalformed(t *testing.T) {
	var got strings.Builder
	for _, c := range malformed {
		var err error
		if strings.HasSuffix(c.file, ".graphml") {
			_, err = ParseGraphML(c.file, []byte(c.text))
		} else {
			_, err = ParseFile(c.file, []byte(c.text))
		}
		if err == nil {
			t.Errorf("%s: no error", c.name)
			continue
		}
		var ye *yamlx.Error
		if !errors.As(err, &ye) {
			t.Errorf("%s: error %T %v, want *yamlx.Error", c.name, err, err)
		}
		if !strings.HasPrefix(err.Error(), c.at) {
			t.Errorf("%s: got %q, want it at %q", c.name, err, c.at)
		}
		fmt.Fprintf(&got, "%s: %v\n", c.name, err)
	}
	golden := filepath.Join("testdata", "errors.golden")
	if *update {
		if err := os.WriteFile(golden, []byte(got.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if got.String() != string(want) {
		gl, wl := strings.Split(got.String(), "\n"), strings.Split(string(want), "\n")
		for i := range max(len(gl), len(wl)) {
			var g, w string
			if i < len(gl) {
				g = gl[i]
			}
			if i < len(wl) {
				w = wl[i]
			}
			if g != w {
				t.Errorf("error messages differ from %s:\n got %s\nwant %s", golden, g, w)
			}
		}
	}
}

// Exporting a generated topology and reading it back gives the same graph,
// for every generator and both formats.
func TestRoundTrip(t *testing.T) {
	graphs := []*sim.Graph{}
	for _, in := range List() {
		graphs = append(graphs, mustGenerate(t, in.Name, nil))
	}
	graphs = append(graphs,
		mustGenerate(t, "waxman", map[string]float64{"nodes": 30, "alpha": 0.4, "beta": 0.15, "seed": 7}),
		mustGenerate(t, "ring", map[string]float64{"bandwidth_mbps": 1.5, "delay_ms": 0.0123, "buffer": 0}),
		mustGenerate(t, "fat-tree", map[string]float64{"bandwidth_mbps": 0.000123}),
	)
	odd := &sim.Graph{Name: "odd names: \"quoted\" & <angled>", Nodes: []sim.Node{
		{Name: "true"}, {Name: "1"}, {Name: "a b"}, {Name: "ü-node", Processing: 1234}, {Name: "x: y"}, {Name: "null"},
	}, Links: []sim.Link{
		{A: 0, B: 1, Bandwidth: 1, Delay: 0, Buffer: 0},
		{A: 1, B: 2, Bandwidth: 123456789.125, Delay: 1, Buffer: 1},
		{A: 2, B: 3, Bandwidth: 1e12, Delay: 90 * sim.Second, Buffer: 100000},
		{A: 3, B: 4, Bandwidth: 2.5e3, Delay: 1500 * sim.Microsecond, Buffer: 7},
		{A: 4, B: 5, Bandwidth: 1e-3, Delay: 3, Buffer: 7},
	}}
	graphs = append(graphs, odd)
	for _, g := range graphs {
		t.Run(g.Name, func(t *testing.T) {
			var y, x bytes.Buffer
			if err := WriteYAML(&y, g); err != nil {
				t.Fatal(err)
			}
			if err := WriteGraphML(&x, g); err != nil {
				t.Fatal(err)
			}
			fromYAML, err := ParseFile("rt.yaml", y.Bytes())
			if err != nil {
				t.Fatalf("%v\n%s", err, y.String())
			}
			if !reflect.DeepEqual(g, fromYAML) {
				t.Errorf("YAML round trip differs:\n got %+v\nwant %+v\n%s", fromYAML, g, y.String())
			}
			fromXML, err := ParseGraphML("rt.graphml", x.Bytes())
			if err != nil {
				t.Fatalf("%v\n%s", err, x.String())
			}
			if !reflect.DeepEqual(g, fromXML) {
				t.Errorf("GraphML round trip differs:\n got %+v\nwant %+v\n%s", fromXML, g, x.String())
			}
		})
	}
}

// A link's delay is its own, else defaults.delay, else from the nodes'
// coordinates at 2e8 m/s, else 1 ms.
func TestDelayPrecedence(t *testing.T) {
	const text = `name: delays
nodes:
  - {name: a, x_km: 0, y_km: 0}
  - {name: b, x_km: 300, y_km: 400}
  - c
links:
  - {a: a, b: b, delay: 7ms}
  - {a: a, b: b2}
`
	cases := []struct {
		defaults string
		ab, bc   sim.Time
	}{
		{"", 2500 * sim.Microsecond, sim.Millisecond}, // 500 km / 2e8 m/s = 2.5 ms
		{"defaults: {delay: 3ms}\n", 3 * sim.Millisecond, 3 * sim.Millisecond},
	}
	for _, c := range cases {
		src := c.defaults + strings.Replace(text, "  - {a: a, b: b2}\n", "  - {a: a, b: b}\n", 1)
		src = strings.Replace(src, "  - {a: a, b: b, delay: 7ms}\n  - {a: a, b: b}\n", "  - {a: a, b: c, delay: 7ms}\n  - {a: a, b: b}\n  - {a: b, b: c}\n", 1)
		g, err := ParseFile("d.yaml", []byte(src))
		if err != nil {
			t.Fatalf("%v\n%s", err, src)
		}
		if g.Links[0].Delay != 7*sim.Millisecond {
			t.Errorf("explicit delay %v, want 7ms", g.Links[0].Delay)
		}
		if g.Links[1].Delay != c.ab {
			t.Errorf("%qa-b delay %v, want %v", c.defaults, g.Links[1].Delay, c.ab)
		}
		if g.Links[2].Delay != c.bc {
			t.Errorf("%qb-c delay %v, want %v", c.defaults, g.Links[2].Delay, c.bc)
		}
	}
}

// The example topology of examples/ reads as written.
func TestMesh10(t *testing.T) {
	g, err := Load(filepath.Join("..", "examples", "mesh-10.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if g.Name != "mesh-10" || len(g.Nodes) != 10 || len(g.Links) != 14 {
		t.Fatalf("got %s with %d nodes and %d links, want mesh-10 with 10 and 14", g.Name, len(g.Nodes), len(g.Links))
	}
	a, _ := g.NodeIndex("a")
	b, _ := g.NodeIndex("b")
	e, _ := g.NodeIndex("e")
	i, _ := g.NodeIndex("i")
	ab, _ := g.LinkIndex(a, b)
	ei, _ := g.LinkIndex(e, i)
	// a (0,0) – b (300,100): √(300²+100²) km = 316.228 km → 1.581139 ms at 2e8 m/s.
	if got := g.Links[ab]; got.Bandwidth != 2e6 || got.Buffer != 50 || got.Delay != 1581139 {
		t.Errorf("a-b = %+v, want 2 Mbit/s, buffer 50, delay 1.581139ms", got)
	}
	if got := g.Links[ei]; got.Bandwidth != 1e6 || got.Delay != 4*sim.Millisecond {
		t.Errorf("e-i = %+v, want 1 Mbit/s and 4ms", got)
	}
}

// GraphML as other tools write it: keys with defaults, SI and duration
// strings, a name attribute, attributes hoplore ignores, foreign elements.
func TestParseGraphML(t *testing.T) {
	const text = `<?xml version="1.0" encoding="UTF-8"?>
<!-- written by hand -->
<graphml xmlns="http://graphml.graphdrawing.org/xmlns" xmlns:y="http://example.org/y">
  <key id="d0" for="node" attr.name="label" attr.type="string"/>
  <key id="d1" for="node" attr.name="name" attr.type="string"/>
  <key id="d2" for="edge" attr.name="bandwidth" attr.type="string"><default>5Mbps</default></key>
  <key id="d3" for="edge" attr.name="delay" attr.type="string"/>
  <key id="d4" for="edge" attr.name="buffer" attr.type="int"><default>20</default></key>
  <key id="d5" for="node" attr.name="lat" attr.type="double"/>
  <key id="d6" for="node" attr.name="lon" attr.type="double"/>
  <key id="d7" for="node" attr.name="graphics"/>
  <key id="d8" for="graph" attr.name="name"/>
  <graph id="G" edgedefault="undirected">
    <desc>three sites</desc>
    <data key="d8">trio</data>
    <node id="0"><data key="d1">north</data><data key="d5">10</data><data key="d6">20</data><data key="d7"><y:Shape kind="box"/></data></node>
    <node id="1"><data key="d1">south</data><data key="d5">9</data><data key="d6">20</data></node>
    <node id="2"><data key="d0">just a label</data><data key="d5">9</data><data key="d6">21</data></node>
    <edge id="e0" source="0" target="1"><data key="d3">2ms</data></edge>
    <edge id="e1" source="1" target="2"><data key="d2">1e9</data><data key="d3">0.004</data><data key="d4">3</data></edge>
    <edge id="e2" source="2" target="0"/>
  </graph>
</graphml>
`
	g, err := ParseGraphML("trio.graphml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	north := sim.Node{Name: "north", Coord: sim.Geo, Lat: 10, Lon: 20}
	south := sim.Node{Name: "south", Coord: sim.Geo, Lat: 9, Lon: 20}
	two := sim.Node{Name: "just a label", Coord: sim.Geo, Lat: 9, Lon: 21}
	d20, _ := sim.PropagationDelay(two, north)
	want := &sim.Graph{Name: "trio", Nodes: []sim.Node{north, south, two}, Links: []sim.Link{
		{A: 0, B: 1, Bandwidth: 5e6, Delay: 2 * sim.Millisecond, Buffer: 20},
		{A: 1, B: 2, Bandwidth: 1e9, Delay: 4 * sim.Millisecond, Buffer: 3},
		{A: 2, B: 0, Bandwidth: 5e6, Delay: d20, Buffer: 20},
	}}
	if !reflect.DeepEqual(g, want) {
		t.Errorf("got  %+v\nwant %+v", g, want)
	}
}

func TestLoad(t *testing.T) {
	dir := t.TempDir()
	g := mustGenerate(t, "torus", nil)
	for _, name := range []string{"t.yaml", "t.yml", "t.graphml", "t.XML"} {
		var buf bytes.Buffer
		var err error
		if strings.HasSuffix(strings.ToLower(name), "ml") && !strings.HasSuffix(name, "yml") && !strings.HasSuffix(name, "yaml") {
			err = WriteGraphML(&buf, g)
		} else {
			err = WriteYAML(&buf, g)
		}
		if err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, buf.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		back, err := Load(p)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if !reflect.DeepEqual(g, back) {
			t.Errorf("%s: read back differently", name)
		}
	}
	if _, err := Load(filepath.Join(dir, "missing.yaml")); err == nil || !strings.HasPrefix(err.Error(), "topologies: ") {
		t.Errorf("missing file: got %v", err)
	}
}

// An inline topology: the experiments parser decodes the mapping under
// inline: into a File with yamlx.DecodeNode, then calls BuildFile with the
// experiment's path; positions are those of the experiment file.
func TestInline(t *testing.T) {
	type experiment struct {
		Name       string `yaml:"name"`
		Topologies []struct {
			Inline *File `yaml:"inline"`
		} `yaml:"topologies"`
	}
	const text = `name: e
topologies:
  - inline:
      name: one-link
      nodes: [src, dst]
      links:
        - {a: src, b: dst, bandwidth: 1Mbps, delay: 0s, buffer: 100000}
  - inline:
      nodes: [p, q]
      links:
        - {a: p, b: r}
`
	var e experiment
	if err := yamlx.Decode("exp.yaml", []byte(text), &e); err != nil {
		t.Fatal(err)
	}
	g, err := BuildFile("exp.yaml", e.Topologies[0].Inline)
	if err != nil {
		t.Fatal(err)
	}
	want := &sim.Graph{Name: "one-link", Nodes: []sim.Node{{Name: "src"}, {Name: "dst"}},
		Links: []sim.Link{{A: 0, B: 1, Bandwidth: 1e6, Delay: 0, Buffer: 100000}}}
	if !reflect.DeepEqual(g, want) {
		t.Errorf("got %+v, want %+v", g, want)
	}
	_, err = BuildFile("exp.yaml", e.Topologies[1].Inline)
	if err == nil || !strings.HasPrefix(err.Error(), "exp.yaml:11:21: ") {
		t.Errorf("got %v, want an error at exp.yaml:11:21", err)
	}
}

// The topology file shown in doc.go (copied into the README) reads as
// its comments say.
func TestDocFile(t *testing.T) {
	doc, err := os.ReadFile("doc.go")
	if err != nil {
		t.Fatal(err)
	}
	var text strings.Builder
	in := false
	for _, line := range strings.Split(string(doc), "\n") {
		if strings.HasPrefix(line, "//\tname: small-mesh") {
			in = true
		}
		if in && !strings.HasPrefix(line, "//\t") {
			break
		}
		if in {
			text.WriteString(strings.TrimPrefix(line, "//\t") + "\n")
		}
	}
	g, err := ParseFile("doc.yaml", []byte(text.String()))
	if err != nil {
		t.Fatalf("%v\n%s", err, text.String())
	}
	b, c := g.Nodes[1], g.Nodes[2]
	bc, _ := sim.PropagationDelay(b, c)
	want := []sim.Link{{A: 0, B: 1, Bandwidth: 1e6, Delay: 4 * sim.Millisecond, Buffer: 10}, {A: 1, B: 2, Bandwidth: 2e6, Delay: bc, Buffer: 50}}
	if !reflect.DeepEqual(g.Links, want) || b.Processing != 20*sim.Microsecond {
		t.Errorf("got %+v %+v, want %+v", g.Links, g.Nodes, want)
	}
}
