package topologies

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

func TestReadNetworkXML(t *testing.T) {
	path := filepath.Join("..", "testdata", "design-layout.xml")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	x, err := ReadNetworkXML(path, data, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	geo := func(name string, lat, lon float64) sim.Node {
		return sim.Node{Name: name, Coord: sim.Geo, Lat: lat, Lon: lon}
	}
	// Capacities in Mbit/s scaled by 10^-3: 2500 + 155 (parallel, merged)
	// -> 2.655 Mbit/s; 622 -> 622 kbit/s (additional modules are options of
	// a design, not installed); no module -> the 10 Mbit/s default. Delays
	// are the great-circle ones worked by hand in collection_test.go.
	want := &sim.Graph{Name: "design-layout", Nodes: []sim.Node{
		geo("Arvenport", 10, 20), geo("Bellcaster", 11, 20), geo("Corlund", 11, 21),
	}, Links: []sim.Link{
		{A: 0, B: 1, Bandwidth: 2655e3, Delay: oneDegree, Buffer: DefaultBuffer},
		{A: 1, B: 2, Bandwidth: 622e3, Delay: bellCorlund, Buffer: DefaultBuffer},
		{A: 2, B: 0, Bandwidth: DefaultBandwidth, Delay: x.Graph.Links[2].Delay, Buffer: DefaultBuffer},
	}}
	if !reflect.DeepEqual(x.Graph, want) {
		t.Errorf("got  %+v\nwant %+v", x.Graph, want)
	}
	wantDemands := []Demand{
		{ID: "D1", Source: "Arvenport", Target: "Corlund", Value: 30, Pos: yamlx.Pos{Line: 67, Col: 3}},
		{ID: "D2", Source: "Corlund", Target: "Bellcaster", Value: 10, Pos: yamlx.Pos{Line: 72, Col: 3}},
	}
	if !reflect.DeepEqual(x.Demands, wantDemands) {
		t.Errorf("demands %+v\nwant %+v", x.Demands, wantDemands)
	}
	wantLines := []string{
		"name: 3 nodes by id",
		"coordinates: lon from x, lat from y (geographical, degrees) for 3 nodes",
		"bandwidth: 3 links from preInstalledModule capacity in Mbps × 0.001, 1 link default 10Mbps (no pre-installed module)",
		"delay: 4 links from great-circle distance (haversine) at 2·10^8 m/s",
		"buffer: 4 links default 64 packets",
		"demands: 2, not part of the topology (give the file as traffic.matrix to use them)",
		"note: parallel edges merged into one link each, bandwidths summed, delay and buffer of the first edge: Arvenport-Bellcaster (2 edges, 2.655Mbps)",
	}
	if got := x.Provenance.Lines(); !reflect.DeepEqual(got, wantLines) {
		t.Errorf("provenance:\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(wantLines, "\n"))
	}

	// Load tells the layouts apart by their root element.
	g, err := Load(path)
	if err != nil || !reflect.DeepEqual(g, x.Graph) {
		t.Errorf("Load: %v, %+v", err, g)
	}
	// A capacity unit of Gbps with a scale of 1 reads 2500 as 2.5 Tbit/s.
	y, err := ReadNetworkXML(path, data, ReadOptions{CapacityUnit: "Gbps", BandwidthScale: 1})
	if err != nil || y.Graph.Links[1].Bandwidth != 622e9 {
		t.Errorf("Gbps: %v, %+v", err, y)
	}
}

func TestReadNetworkXMLErrors(t *testing.T) {
	const head = "<network>\n <networkStructure>\n  <nodes coordinatesType=\"pixel\">\n   <node id=\"a\"><coordinates><x>0</x><y>0</y></coordinates></node>\n   <node id=\"b\"><coordinates><x>3</x><y>4</y></coordinates></node>\n  </nodes>\n"
	cases := []struct{ name, text, want string }{
		{"unknown link end", head + "  <links>\n   <link id=\"L1\"><source>a</source><target>c</target></link>\n  </links>\n </networkStructure>\n</network>\n",
			`t.xml:8:44: link "L1": target: unknown node "c"`},
		{"negative capacity", head + "  <links>\n   <link id=\"L1\"><source>a</source><target>b</target><preInstalledModule><capacity>-1</capacity></preInstalledModule></link>\n  </links>\n </networkStructure>\n</network>\n",
			`t.xml:8:84: link "L1": capacity: must not be negative, got -1`},
		{"demand for unknown node", head + "  <links>\n   <link id=\"L1\"><source>a</source><target>b</target></link>\n  </links>\n </networkStructure>\n <demands>\n  <demand id=\"D1\"><source>a</source><target>z</target><demandValue>1</demandValue></demand>\n </demands>\n</network>\n",
			`t.xml:12:45: demand "D1": target: unknown node "z"`},
		{"bad demand value", head + "  <links>\n   <link id=\"L1\"><source>a</source><target>b</target></link>\n  </links>\n </networkStructure>\n <demands>\n  <demand id=\"D1\"><source>a</source><target>b</target><demandValue>lots</demandValue></demand>\n </demands>\n</network>\n",
			`t.xml:12:68: demand "D1": demandValue: "lots" is not a number`},
		{"not the layout", "<graphml/>\n", `t.xml:1:1: not a network-design XML file: the root element is <graphml>, not <network>`},
		{"malformed", "<network>\n <networkStructure>\n</network>\n", `t.xml:3:1: malformed network-design XML: element <networkStructure> closed by </network>`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := ReadNetworkXML("t.xml", []byte(c.text), ReadOptions{})
			if err == nil || err.Error() != c.want {
				t.Errorf("got  %v\nwant %s", err, c.want)
			}
		})
	}
	// Plane coordinates are read as km: a and b are 5 km apart, 25 µs.
	g, err := ReadNetworkXML("t.xml", []byte(head+"  <links>\n   <link id=\"L1\"><source>a</source><target>b</target></link>\n  </links>\n </networkStructure>\n</network>\n"), ReadOptions{})
	if err != nil || g.Graph.Links[0].Delay != 25*sim.Microsecond {
		t.Errorf("plane: %v %+v", err, g)
	}
}
