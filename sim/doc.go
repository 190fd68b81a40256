// Package sim is hoplore's kernel: a packet-level discrete-event simulator
// of a network of store-and-forward routers.
//
// Time is integer nanoseconds (Time). Events run in (time, sequence) order
// from a typed 4-ary heap, so a run is a pure function of its Config. A
// Graph (nodes, links) is compiled into a Net whose links are two
// independent directed channels, each with a bandwidth (bit/s), a
// propagation delay and a FIFO output queue whose Buffer counts waiting
// packets, not the one being transmitted (Buffer K−1 makes an M/M/1/K
// queue). Transmission takes size·8/bandwidth, then the packet propagates.
//
// Sources emit Poisson traffic (or periodic, for hand-checked schedules)
// from a rate matrix, destinations drawn in O(1) from an alias table;
// sizes are fixed, exponential or bimodal, kept on every hop or redrawn
// per hop. Failures take links and nodes down and up: what is queued,
// transmitting or propagating on a failed channel is lost (link_down), a
// failed node loses what it holds (node_down) and stops emitting; end nodes
// detect after the schedule's detection delay, and link-state news floods
// to every node at detection plus the propagation distance.
//
// Traffic.Periods replace the whole matrix at given times (a replay of
// measured matrices), followed exactly by thinning from each source's peak.
// Config.Conditions change a link's bandwidth, delay or per-packet loss
// probability from given times on; a packet lost to loss is dropped with
// reason link_loss after its transmission, from the channel's own random
// stream.
//
// Flow traffic (Traffic.FlowGen) adds transfers: flows start as Poisson
// processes per pair, their sizes drawn from heavy-tailed distributions
// (Pareto, lognormal, a mix of classes, an empirical CDF), each cut into
// packets sent back to back at the source's access rate or a rate limit.
// Flows live in a free list like packets, so they allocate nothing in the
// steady state. Result.Flows holds completion times, slowdowns against the
// idle network (IdealFCT: exact by max-plus tandem algebra along the best
// of a few candidate paths, the hop-count one and the least-delay ones
// over channels of at least a few bandwidths) per size class, and
// reordering.
//
// Routing is delegated to agents through small interfaces declared here
// (PerNode/Router with optional Arrivals, Dropper, Receiver, Detector,
// LinkStater, Timed; or Central). A per-node router sees the network only through a
// *NodeView of its own node; a central agent only through Snapshots that
// are ControlDelay old. Of hoplore's packages sim imports only the leaf
// package paths (graph algorithms).
//
// A packet is unreachable when, at its generation or at any topology change
// while it is in the network, its destination is down or in another
// partition of the physical topology than the node holding it: no routing
// could deliver it. Drops of such packets are counted apart
// (Result.Unreachable, Bin.Unreachable), and every drop after a failure
// event is attributed to the latest event (Result.Outcomes): reachable
// routing losses with the time of the last one, unreachable losses, and
// reachable congestion losses.
//
// Every count in a Result covers data packets generated after the warm-up,
// and Run verifies conservation: generated = delivered + dropped + in
// flight. Delivery-time percentiles come from a mergeable log-bucketed
// Histogram with relative error at most 0.1%; the delivery times are also
// kept in equal Batches, in order of delivery, for a steady-state interval
// from the run alone (package stats). The time Series covers the whole
// run, warm-up included, so that the approach to steady state (a learning
// agent's learning) can be seen and its end detected.
package sim
