package topologies

import "hoplore/sim"

// backboneSites are the invented sites of the backbone generator, in node
// order: six hubs (n0–n5), then two regional sites per hub (n6–n17).
//
//	n0  Caldrenmoor  hub      n6  Brenlow       n7  Fellmarsh    (hub n0)
//	n1  Varnholt     hub      n8  Halvenmark    n9  Kestrelford  (hub n1)
//	n2  Esterhaven   hub      n10 Lindqvar      n11 Oskavel      (hub n2)
//	n3  Moravane     hub      n12 Pellanor      n13 Rivescombe   (hub n3)
//	n4  Quillon      hub      n14 Sunhallow     n15 Thistlemere  (hub n4)
//	n5  Tessary      hub      n16 Umbervale     n17 Wyncrest     (hub n5)
var backboneSites = []struct {
	name     string
	lat, lon float64
}{
	{"Caldrenmoor", 47.0, -1.0},
	{"Varnholt", 50.5, 8.0},
	{"Esterhaven", 48.5, 18.0},
	{"Moravane", 43.0, 20.0},
	{"Quillon", 41.5, 10.0},
	{"Tessary", 43.5, 1.0},
	{"Brenlow", 49.0, -4.0},
	{"Fellmarsh", 45.0, -3.5},
	{"Halvenmark", 53.0, 6.0},
	{"Kestrelford", 51.5, 12.5},
	{"Lindqvar", 51.0, 21.0},
	{"Oskavel", 47.0, 23.5},
	{"Pellanor", 44.5, 25.0},
	{"Rivescombe", 40.0, 22.5},
	{"Sunhallow", 39.0, 13.0},
	{"Thistlemere", 40.0, 7.0},
	{"Umbervale", 41.0, -2.0},
	{"Wyncrest", 45.5, 4.5},
}

// backboneTrunks join the hubs: a ring n0…n5 and two chords.
var backboneTrunks = [][2]int{{0, 1}, {1, 2}, {2, 3}, {3, 4}, {4, 5}, {5, 0}, {1, 4}, {2, 4}}

// backboneRegional: each regional site to its hub, then one lateral link
// from a region to the neighbouring hub's region.
var backboneRegional = [][2]int{
	{0, 6}, {0, 7}, {1, 8}, {1, 9}, {2, 10}, {2, 11}, {3, 12}, {3, 13}, {4, 14}, {4, 15}, {5, 16}, {5, 17},
	{6, 8}, {9, 10}, {11, 12}, {13, 14}, {15, 16}, {17, 7},
}

func buildBackbone(v values) (*sim.Graph, error) {
	var b builder
	for _, s := range backboneSites {
		i := b.node()
		b.g.Nodes[i].Coord, b.g.Nodes[i].Lat, b.g.Nodes[i].Lon = sim.Geo, s.lat, s.lon
	}
	q := v.int("buffer")
	for _, l := range backboneTrunks {
		b.geoLink(l[0], l[1], v.mbps("trunk_mbps"), q)
	}
	for _, l := range backboneRegional {
		b.geoLink(l[0], l[1], v.mbps("bandwidth_mbps"), q)
	}
	return &b.g, nil
}
