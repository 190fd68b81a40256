package topologies

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"hoplore/sim"
)

// Great-circle delays of the fixture's links at 2·10^8 m/s, worked by hand
// with the haversine formula (Sinnott, "Virtues of the Haversine", Sky and
// Telescope 1984) on a sphere of radius 6371 km:
//   - Arvenport (10°N 20°E) – Bellcaster (11°N 20°E): one degree of a
//     meridian, 6371·π/180 = 111.19493 km, 555.975 µs;
//   - Bellcaster – Corlund (11°N 21°E): 2·6371·asin(cos 11°·sin 0.5°) =
//     109.15191 km, 545.760 µs;
//   - Corlund – Gilden#3 (10°N 21°E): one degree of a meridian, 555.975 µs;
//   - Gilden#3 – Arvenport: 2·6371·asin(cos 10°·sin 0.5°) = 109.50558 km,
//     547.528 µs;
//   - Gilden#3 – Gilden#4 (10.5°N 21.5°E): 78.00166 km, 390.008 µs.
const (
	oneDegree    = 555975 * sim.Nanosecond
	bellCorlund  = 545760 * sim.Nanosecond
	gildenArven  = 547528 * sim.Nanosecond
	gildenGilden = 390008 * sim.Nanosecond
)

func readFixture(t *testing.T, o ReadOptions) (*sim.Graph, *Provenance, error) {
	t.Helper()
	path := filepath.Join("..", "testdata", "collection-layout.graphml")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return ReadGraphML(path, data, o)
}

func TestReadGraphMLCollectionLayout(t *testing.T) {
	g, pv, err := readFixture(t, ReadOptions{Keep: KeepLargestComponent})
	if err != nil {
		t.Fatal(err)
	}
	geo := func(name string, lat, lon float64) sim.Node {
		return sim.Node{Name: name, Coord: sim.Geo, Lat: lat, Lon: lon}
	}
	// Speeds scaled by the default 10^-3: 10 Gbit/s (LinkSpeedRaw, preferred
	// over LinkSpeed) plus the parallel 1 Gbit/s edge -> 11 Mbit/s; 2.5 G ->
	// 2.5 Mbit/s; 155.52 Mbit/s raw -> 155.52 kbit/s; no speed -> 10 Mbit/s
	// default; 100 M -> 100 kbit/s.
	want := &sim.Graph{Name: "collection-layout", Nodes: []sim.Node{
		geo("Arvenport", 10, 20), geo("Bellcaster", 11, 20), geo("Corlund", 11, 21),
		geo("Gilden#3", 10, 21), geo("Gilden#4", 10.5, 21.5),
	}, Links: []sim.Link{
		{A: 0, B: 1, Bandwidth: 11e6, Delay: oneDegree, Buffer: DefaultBuffer},
		{A: 1, B: 2, Bandwidth: 2.5e6, Delay: bellCorlund, Buffer: DefaultBuffer},
		{A: 2, B: 3, Bandwidth: 155.52e3, Delay: oneDegree, Buffer: DefaultBuffer},
		{A: 3, B: 0, Bandwidth: DefaultBandwidth, Delay: gildenArven, Buffer: DefaultBuffer},
		{A: 3, B: 4, Bandwidth: 100e3, Delay: gildenGilden, Buffer: DefaultBuffer},
	}}
	for i := range want.Links {
		// Bandwidths compared to a relative 1e-12: 155520000·0.001 is not
		// exactly 155520 in binary floating point.
		if got, w := g.Links[i].Bandwidth, want.Links[i].Bandwidth; math.Abs(got-w) <= 1e-12*w {
			g.Links[i].Bandwidth = w
		}
	}
	if !reflect.DeepEqual(g, want) {
		t.Errorf("got  %+v\nwant %+v", g, want)
	}
	wantLines := []string{
		"name: 7 nodes for label, 1 node by id",
		"coordinates: lat from Latitude, lon from Longitude (degrees) for 7 nodes, none for 1",
		"bandwidth: 2 edges from LinkSpeedRaw (bit/s) × 0.001, 4 edges from LinkSpeed × LinkSpeedUnits × 0.001, 1 edge default 10Mbps",
		"delay: 7 edges from great-circle distance (haversine) at 2·10^8 m/s",
		"buffer: 7 edges default 64 packets",
		"ignored: Network (graph, 1 value), Internal (node, 1 value), Country (node, 2 values), LinkLabel (edge labels, 2 values: not used by the model)",
		"note: labels shared by several nodes, named label#id: Gilden#3, Gilden#4",
		"note: parallel edges merged into one link each, bandwidths summed, delay and buffer of the first edge: Arvenport-Bellcaster (2 edges, 11Mbps)",
		"note: kept the largest component (5 of 8 nodes); dropped 3 nodes and 1 link in 2 components {Farrowby Hollin}, {7}",
	}
	if got := pv.Lines(); !reflect.DeepEqual(got, wantLines) {
		t.Errorf("provenance:\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(wantLines, "\n"))
	}
}

func TestReadGraphMLOptions(t *testing.T) {
	t.Run("disconnected without keep", func(t *testing.T) {
		_, _, err := readFixture(t, ReadOptions{})
		want := `collection-layout.graphml:16:3: links: topology "collection-layout" is not connected: 3 components {Arvenport Bellcaster Corlund Gilden#3 Gilden#4}, {Farrowby Hollin}, {7} (keep: largest-component keeps only the largest)`
		if err == nil || !strings.HasSuffix(err.Error(), want) {
			t.Errorf("got %v, want …%s", err, want)
		}
	})
	t.Run("bandwidth_scale", func(t *testing.T) {
		g, _, err := readFixture(t, ReadOptions{Keep: KeepLargestComponent, BandwidthScale: 1})
		if err != nil {
			t.Fatal(err)
		}
		// Unscaled: 10 Gbit/s + 1 Gbit/s; the default stays 10 Mbit/s.
		if got := []float64{g.Links[0].Bandwidth, g.Links[1].Bandwidth, g.Links[3].Bandwidth}; !reflect.DeepEqual(got, []float64{11e9, 2.5e9, DefaultBandwidth}) {
			t.Errorf("got %v, want [1.1e10 2.5e9 1e7]", got)
		}
	})
	bad := []struct {
		name string
		o    ReadOptions
		want string
	}{
		{"unknown keep", ReadOptions{Keep: "all"}, `topologies: keep: "all" is not largest-component`},
		{"negative scale", ReadOptions{BandwidthScale: -1}, "topologies: bandwidth_scale: must be a positive number, got -1"},
		{"unknown field", ReadOptions{Attributes: map[string]string{"colour": "c"}}, "topologies: attributes.colour: unknown field (known: label, lat, lon, x_km, y_km, processing, bandwidth, delay, buffer)"},
		{"missing key", ReadOptions{Attributes: map[string]string{"bandwidth": "Capacity"}}, `topologies: attributes.bandwidth: ../testdata/collection-layout.graphml declares no edge key "Capacity"`},
	}
	for _, c := range bad {
		t.Run(c.name, func(t *testing.T) {
			_, _, err := readFixture(t, c.o)
			var oe *OptionError
			if !errors.As(err, &oe) || err.Error() != c.want {
				t.Errorf("got %v, want *OptionError %s", err, c.want)
			}
		})
	}
}

// Another tool's layout read through an explicit attribute mapping.
func TestReadGraphMLAttributes(t *testing.T) {
	const text = `<graphml>
  <key id="k0" for="node" attr.name="site"/>
  <key id="k1" for="node" attr.name="northing"/>
  <key id="k2" for="node" attr.name="easting"/>
  <key id="k3" for="edge" attr.name="capacity"/>
  <key id="k4" for="edge" attr.name="latency"/>
  <key id="k5" for="node" attr.name="label"/>
  <graph edgedefault="undirected">
    <node id="a"><data key="k0">Quarrow</data><data key="k1">0</data><data key="k2">0</data><data key="k5">ignored label</data></node>
    <node id="b"><data key="k0">Tillmoor</data><data key="k1">3</data><data key="k2">4</data></node>
    <edge source="a" target="b"><data key="k3">2Gbps</data><data key="k4">7ms</data></edge>
  </graph>
</graphml>`
	o := ReadOptions{Attributes: map[string]string{"label": "site", "y_km": "northing", "x_km": "easting", "bandwidth": "capacity", "delay": "latency"}}
	g, pv, err := ReadGraphML("other.graphml", []byte(text), o)
	if err != nil {
		t.Fatal(err)
	}
	want := &sim.Graph{Name: "other", Nodes: []sim.Node{
		{Name: "Quarrow", Coord: sim.Plane},
		{Name: "Tillmoor", Coord: sim.Plane, X: 4, Y: 3},
	}, Links: []sim.Link{{A: 0, B: 1, Bandwidth: 2e6, Delay: 7 * sim.Millisecond, Buffer: DefaultBuffer}}}
	if !reflect.DeepEqual(g, want) {
		t.Errorf("got  %+v\nwant %+v", g, want)
	}
	if got := strings.Join(pv.Lines(), "\n"); !strings.Contains(got, "bandwidth: 1 edge from capacity (bit/s or SI) × 0.001") ||
		!strings.Contains(got, "ignored: label (node, 1 value)") || !strings.Contains(got, "delay: 1 edge from latency") {
		t.Errorf("provenance:\n%s", got)
	}
}
