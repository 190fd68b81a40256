// Package topologies builds the networks hoplore runs on: nine bundled
// generators, topology files in YAML, and GraphML. Everything it returns is
// a *sim.Graph that passes sim.Graph.Validate (connected, positive
// bandwidths, no self-loops).
//
// # Bundled generators
//
// Generate(name, params) builds a generator's graph; List describes every
// generator and its parameters; Label gives the value of the results'
// topology column (the name alone at defaults, else the name with the
// parameters that differ, in declared order, e.g.
// "waxman(nodes=30,alpha=0.4,beta=0.15,seed=7)"). Nodes are named n0, n1, …
// in generation order. Every parameter is a number; parameters marked
// (whole) take whole numbers. Bandwidths are scaled down to Mbit/s so that
// minutes of simulated time cost seconds of CPU; raise them at will.
// Unless a generator says otherwise every link has bandwidth_mbps = 10,
// delay_ms = 1 and buffer = 64 (packets that may wait in each channel's
// queue, not counting the one being sent). Generators with coordinates
// derive each link's delay from distance at 2·10^8 m/s
// (sim.PropagationDelay) and have no delay_ms.
//
//	generator        parameters (defaults)                                     nodes links diameter
//	ring             nodes=8                                                    8     8    4
//	grid             rows=4 cols=4                                              16    24   6
//	torus            rows=4 cols=4                                              16    32   4
//	two-region       rows=6 cols=3 bridges=2 bridge_mbps=10                     36    56   10
//	waxman           nodes=20 alpha=0.3 beta=0.6 degree=0 seed=1 side_km=1000   20    34   5
//	barabasi-albert  nodes=50 m=2 seed=1                                        50    96   5
//	leaf-spine       spines=2 leaves=4 hosts=4 bandwidth_mbps=10 uplink_mbps=20 22    24   4
//	fat-tree         k=4                                                        36    48   6
//	backbone         trunk_mbps=40 bandwidth_mbps=10                            18    26   5
//
// ring: nodes (whole, ≥ 3) on a cycle; link i joins n(i) and n(i+1 mod
// nodes). nodes links, diameter floor(nodes/2).
//
// grid: rows × cols (whole, rows·cols ≥ 2) numbered row by row; each node
// links to its right neighbour, then to the one below. rows(cols−1) +
// cols(rows−1) links, diameter rows+cols−2.
//
// torus: a grid whose rows and columns wrap around (rows, cols ≥ 3 so that
// no two links join the same pair). 2·rows·cols links, every node of degree
// 4, diameter floor(rows/2) + floor(cols/2).
//
// two-region: the bottleneck case. Two rows × cols grids side by side (the
// left one n0 … n(rows·cols−1), then the right one), joined by bridges
// (whole, 1 … rows) links from the left grid's last column to the right
// grid's first column, at rows floor((2i+1)·rows/(2·bridges)): by default a
// 6 × 6 layout cut into two 6 × 3 regions joined at rows 1 and 4. Bridges
// have bandwidth bridge_mbps. Under hop-count shortest paths with uniform
// traffic the bridges are the busiest channels.
//
// waxman: the random graph of Waxman (IEEE JSAC 1988). nodes (whole, ≥ 2)
// are placed uniformly on a side_km × side_km square (plane coordinates in
// km), then each pair i < j is linked with probability
// beta·exp(−d/(L·alpha)), d their distance and L the largest distance
// between two nodes. beta (0 < beta ≤ 1) is the largest probability (more
// links); alpha (> 0) the length scale (relatively more long links). A draw
// that is not connected is thrown away and the whole graph, positions
// included, drawn again from the same random stream, up to 10000 times;
// the result is therefore the model conditioned on connectivity. Delays
// come from the coordinates: with side_km = 1000 they run up to about 7 ms.
// The defaults give a mean degree near 3.4. Every pair is looked at, so
// without degree nodes is at most 10000.
//
// waxman with degree > 0 (a target mean degree; alpha may then not be
// given) is the sparse form for large graphs. alpha is solved for so that
// the expected mean degree (nodes−1)·beta·E[exp(−d/(L·alpha))] equals
// degree, the expectation taken over the distance d between two uniform
// points of the square (its density in closed form), by bisection. One
// graph is drawn: positions as above, then links by cells of the plane
// (geometric skipping between cells, each pair still linked with its exact
// probability; pairs so far apart that all of them together would give
// fewer than 10^-3 links in expectation are not looked at). Its components
// are then joined by the shortest added links: every component but the
// largest repeatedly takes its shortest link to another component (a
// minimum spanning tree over the components, Borůvka 1926), so all nodes
// are kept and the mean degree rises by about 2/nodes per joining link
// (with degree 4, about e^−4 of the nodes are isolated before joining).
// 10,000 nodes at degree 4 take about 0.3 s; nodes may be up to 100000.
//
// barabasi-albert: preferential attachment (Barabási & Albert, Science
// 1999). The graph starts from a star on m+1 nodes (n0 linked to n1 … nm);
// each later node links to m distinct earlier nodes, each drawn with
// probability proportional to its degree (a node drawn twice for the same
// newcomer is drawn again). It has exactly m(nodes−m) links (m < nodes) and
// a degree distribution with tail ~k^−3.
//
// leaf-spine: a two-tier folded Clos. spines (n0 …), then leaves, each
// leaf linked to every spine at uplink_mbps; then hosts (whole, ≥ 0) per
// leaf linked to their leaf at bandwidth_mbps, leaf by leaf. spines·leaves
// + leaves·hosts links; hosts under different leaves have spines
// equal-cost paths. The defaults are non-blocking: 4 hosts × 10 Mbit/s per
// leaf against 2 uplinks × 20 Mbit/s.
//
// fat-tree: the k-ary fat-tree of Al-Fares, Loukissas & Vahdat (SIGCOMM
// 2008) with k-port switches, k even: (k/2)² core switches first, then for
// each of the k pods its k/2 aggregation and k/2 edge switches, then the
// k/2 hosts of each edge switch, pod by pod. Aggregation switch i of every
// pod links to core switches i·k/2 … i·k/2+k/2−1; every edge switch links
// to every aggregation switch of its pod. 5k²/4 switches, k³/4 hosts, 3k³/4
// links, all at bandwidth_mbps; hosts in different pods have (k/2)²
// equal-cost shortest paths. k=4: 20 switches, 16 hosts, 48 links.
//
// backbone: a synthetic continental backbone of 18 invented sites with
// latitude/longitude, spanning about 2300 km. Six hubs (n0 Caldrenmoor, n1
// Varnholt, n2 Esterhaven, n3 Moravane, n4 Quillon, n5 Tessary) form a
// ring of trunks with two chords (n1–n4, n2–n4) at trunk_mbps; twelve
// regional sites (n6 … n17, two per hub in hub order: Brenlow, Fellmarsh,
// Halvenmark, Kestrelford, Lindqvar, Oskavel, Pellanor, Rivescombe,
// Sunhallow, Thistlemere, Umbervale, Wyncrest) hang off their hub, with one
// lateral link from each region to the next, at bandwidth_mbps. Delays
// follow great-circle distance (about 1.5 to 5 ms per link).
//
// A generator refuses parameters that would give more than MaxNodes (10^6)
// nodes. Randomised generators draw from math/rand/v2's PCG seeded with their
// seed parameter and a constant per generator, so a topology is a pure
// function of its parameters.
//
// # Topology files
//
// A topology file (YAML, read by ParseFile and Load) names nodes and links:
//
//	name: small-mesh               # optional; defaults to the file's base name
//	defaults: {bandwidth: 2Mbps, buffer: 50}
//	nodes:
//	  - a                          # a bare name, or a mapping:
//	  - {name: b, x_km: 300, y_km: 100, processing: 20us}
//	  - {name: c, x_km: 600, y_km: 0}   # or lat: and lon:, one kind per file
//	links:
//	  - {a: a, b: b, bandwidth: 1Mbps, delay: 4ms, buffer: 10}
//	  - {a: b, b: c}               # 2Mbps, buffer 50, delay from distance
//
// Bandwidths are SI bit rates (1Mbps, 10Gbps, or a bare number of bit/s),
// delays Go durations, buffers packets. A link's bandwidth and buffer are
// its own, else defaults', else 10Mbps and 64. Its delay is its own, else
// defaults.delay, else the propagation delay between its nodes'
// coordinates when both have them, else 1ms. An experiment may give the
// same mapping inline; its parser decodes it into a File and calls
// BuildFile. Unknown fields, unknown or duplicate nodes, duplicate links,
// self-loops, non-positive bandwidths, negative delays or buffers, mixed or
// half-given coordinates and disconnected topologies (naming their
// components) are errors of type *yamlx.Error reading FILE:LINE:COL:
// message at the offending field.
//
// # GraphML
//
// ReadGraphML (and Load, for names ending in .graphml or .xml whose root
// element is <graphml>) reads one undirected graph. Attributes are declared
// with <key> elements and recognised by their attr.name, case-insensitively:
//
//	field        node/edge  attribute names                      value
//	name         node       name, then label                     text (else the node's id)
//	coordinates  node       x_km/y_km; lat or latitude,          km; degrees
//	                        lon or longitude (long, lng)
//	processing   node       processing                           seconds or a duration
//	bandwidth    edge       bandwidth                            bit/s or an SI rate, not scaled
//	                        LinkSpeedRaw                         bit/s, scaled
//	                        LinkSpeed with LinkSpeedUnits        number × K, M, G or T bit/s, scaled
//	delay        edge       delay                                seconds or a duration
//	buffer       edge       buffer                               packets
//	             edge       LinkLabel                            read and listed, not used
//	name         graph      name
//
// The first group are hoplore's own names (WriteGraphML writes them); the
// others are those of the public topology collections' GraphML layout. An
// edge's bandwidth is its bandwidth, else LinkSpeedRaw, else LinkSpeed ×
// LinkSpeedUnits. Measured speeds are multiplied by a bandwidth scale,
// DefaultSpeedScale = 10^-3 unless ReadOptions.BandwidthScale says
// otherwise, so that a 10 Gbit/s link becomes 10 Mbit/s: the bundled
// generators scale real speeds down the same way so that minutes of
// simulated time cost seconds of CPU. hoplore's own bandwidth key holds
// model bit rates and is scaled only by an explicit BandwidthScale. For
// other files, ReadOptions.Attributes maps a field (label, lat, lon, x_km,
// y_km, processing, bandwidth, delay, buffer) to the attribute that holds
// it; a mapped bandwidth is a measured speed.
//
// A label names its node when no other node has the same label; nodes that
// share one are named label#id. Edges joining the same pair of nodes are
// merged into one link whose bandwidth is the sum of theirs (delay and
// buffer of the first). A disconnected file is an error naming its
// components, unless ReadOptions.Keep is largest-component: then the
// largest component (the first among equals) is kept and the rest dropped.
// A link without a delay takes the propagation delay between its nodes'
// coordinates at 2·10^8 m/s: great-circle distance by the haversine formula
// (Sinnott 1984) for lat/lon, straight-line distance for x_km/y_km. Key
// defaults apply; other attributes and foreign elements are ignored. The
// Provenance returned beside the graph says, field by field, what was read
// from which attribute, what took a default, which attributes no field
// reads, and what was merged, renamed or dropped (hoplore topologies show
// FILE prints it). Malformed XML, directed graphs, hyperedges, nested
// graphs, unknown speed units, speeds that are not positive and speeds
// without a unit are errors at their line and column. WriteGraphML and
// WriteYAML export any graph so that the readers give it back identically.
//
// # Network-design XML
//
// ReadNetworkXML (and Load, for .xml files whose root element is
// <network>) reads the network-design library XML layout: nodes named by
// their id with <coordinates> <x>, <y> (longitude and latitude when <nodes
// coordinatesType="geographical">, else plane coordinates read as km),
// links with <source>, <target> and the sum of their <preInstalledModule>
// capacities (additional modules are options of a design, not installed),
// in ReadOptions.CapacityUnit (default Mbps, since the layout carries no
// unit) times the bandwidth scale; a link with no pre-installed module
// takes DefaultBandwidth. Parallel links are merged as in GraphML. The
// file's <demands> (source, target, demandValue) are returned as written,
// for use as a traffic matrix; a demand naming an unknown node is an error
// at its position. Files declared in ISO-8859-1 are read too.
package topologies
