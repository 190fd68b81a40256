package sim

import (
	"fmt"
	"math/rand/v2"
)

// NodeView is a per-node agent's window on the network: its own node's
// channels, the static topology known at start, and messages to and from
// neighbours. It cannot show another node's queue: every method taking a
// channel panics unless the channel leaves this node.
type NodeView struct {
	e    *engine
	node int
	out  []int // net.Out[node]
	rng  *rand.Rand
}

// ID returns this node's index.
func (v *NodeView) ID() int { return v.node }

// Now returns the current simulated time.
func (v *NodeView) Now() Time { return v.e.now }

// Net returns the static topology as known at start (failures not reflected).
func (v *NodeView) Net() *Net { return v.e.net }

// Out returns this node's outgoing channel IDs in tie-break order. The slice
// is shared; do not modify it.
func (v *NodeView) Out() []int { return v.out }

// Rand returns this node's own random stream for the agent's use.
func (v *NodeView) Rand() *rand.Rand { return v.rng }

func (v *NodeView) own(c int) *chanState {
	if from := v.e.chFrom; uint(c) >= uint(len(from)) || int(from[c]) != v.node {
		panic(fmt.Sprintf("sim: node %d asked about channel %d, which does not leave it", v.node, c))
	}
	return &v.e.ch[c]
}

// QueueLen returns the number of packets waiting in channel c's output queue
// (not counting the one being transmitted). c must leave this node.
func (v *NodeView) QueueLen(c int) int { return v.own(c).q.len() }

// Backlog returns the bits ahead of a packet joining channel c now: waiting
// packets plus what remains of the one being transmitted. c must leave this node.
func (v *NodeView) Backlog(c int) float64 {
	s := v.own(c)
	bits := float64(s.qBytes) * 8
	if s.busy && s.txEnd > v.e.now {
		bits += float64(s.txEnd-v.e.now) * 1e-9 * v.e.net.Channels[c].Bandwidth
	}
	return bits
}

// HopLimit returns the hop count at which a packet arriving at a node other
// than its destination is dropped (hop_limit), as a header's hop budget is
// known to every router.
func (v *NodeView) HopLimit() int { return v.e.hopLimit }

// Busy returns channel c's cumulative transmitting time up to now (any
// packet, the current transmission included). Its increase over an interval
// divided by the interval's length is the channel's utilisation there. c
// must leave this node.
func (v *NodeView) Busy(c int) Time {
	s := v.own(c)
	t := s.busyTotal
	if s.busy && v.e.now > s.txStart {
		t += v.e.now - s.txStart
	}
	return t
}

// Up reports whether this node believes channel c is usable: false from when
// it detected the link going down until it detected it coming back. c must
// leave this node.
func (v *NodeView) Up(c int) bool { return v.own(c).seenUp }

// Send queues m as an in-band control packet of m.Bytes bytes on channel c,
// which must leave this node. It reports false when the packet was lost at
// once (full queue or failed channel); it may still be lost on the way.
func (v *NodeView) Send(c int, m Message) bool {
	v.own(c)
	return v.e.sendControl(v.node, c, m)
}

// Tell delivers m at once and out of band to the neighbour at the other end
// of channel c (which must leave this node), as if over a separate
// instantaneous channel. It costs no bandwidth and is not counted as control
// traffic. It is lost if that neighbour is down.
func (v *NodeView) Tell(c int, m Message) {
	v.own(c)
	v.e.tell(v.node, c, m)
}

// After arranges for the router's Timer(tag) to be called after d.
func (v *NodeView) After(d Time, tag int) { v.e.schedTimer(d, v.node, tag) }

// CountRouteChanges reports n route changes made now at this node (see
// Result.RouteChanges). Cost: O(1), no allocation.
func (v *NodeView) CountRouteChanges(n int) { v.e.countRouteChanges(n) }

// ControlView is a central agent's window: the static topology, timers,
// and telemetry snapshots that arrive ControlDelay after being taken.
type ControlView struct {
	e   *engine
	rng *rand.Rand
}

// Now returns the current simulated time.
func (v *ControlView) Now() Time { return v.e.now }

// Net returns the static topology as known at start.
func (v *ControlView) Net() *Net { return v.e.net }

// Rand returns the controller's own random stream.
func (v *ControlView) Rand() *rand.Rand { return v.rng }

// ControlDelay returns the age of telemetry and the delay before installed
// tables take effect.
func (v *ControlView) ControlDelay() Time { return v.e.cfg.ControlDelay }

// After arranges for the agent's Timer(tag) to be called after d. The agent
// must implement Timed.
func (v *ControlView) After(d Time, tag int) { v.e.schedTimer(d, -1, tag) }

// Request takes a telemetry snapshot now; Central.Telemetry receives it
// ControlDelay later.
func (v *ControlView) Request() { v.e.requestSnapshot() }

// CountRouteChanges reports n route changes made now by the controller (see
// Result.RouteChanges).
func (v *ControlView) CountRouteChanges(n int) { v.e.countRouteChanges(n) }

// Flow returns the size in bytes and the size class of the flow of flow
// traffic packet p belongs to, and false for packet traffic: what a sender
// declares when a transfer starts, as size-aware schedulers assume. Cost:
// O(1), no allocation.
func (v *ControlView) Flow(p *Packet) (size int64, class FlowClass, ok bool) {
	if p.fl == 0 {
		return 0, 0, false
	}
	f := &v.e.fl[p.fl-1]
	return f.size, f.class, true
}

// Snapshot is global telemetry at one instant. Cumulative counters run from
// the start of the run; take differences between snapshots for rates.
type Snapshot struct {
	Taken  Time
	Busy   []Time  // per channel: cumulative transmitting time
	Sent   []int64 // per channel: cumulative packets transmitted
	Queue  []int   // per channel: packets waiting now
	Up     []bool  // per channel: usable now
	NodeUp []bool
	// Loss is, per channel, the probability that a packet it transmits is
	// lost on the link, as link conditions set it now (a link's configured
	// loss, as its interface reports it).
	Loss []float64
	// Bandwidth is, per channel, the bit rate in force now (link
	// conditions may change it from the topology's).
	Bandwidth []float64
	// Per source–destination pair (index s*N+d), cumulative over data packets
	// generated at any time: delivered, delivery time sum (seconds), dropped.
	PairDelivered []int64
	PairDelay     []float64
	PairDropped   []int64
	// PairGenerated counts, per pair, the data packets generated (what the
	// sources offered: ingress counters), cumulative from the start.
	PairGenerated []int64
	// PairFlowDelivered, PairFlowDelay and PairFlowDropped are the part of
	// PairDelivered, PairDelay and PairDropped from packets of flow traffic
	// (FlowGen); nil without flow traffic.
	PairFlowDelivered []int64
	PairFlowDelay     []float64
	PairFlowDropped   []int64
}

// Stream returns the random stream for one purpose of one run: a PCG seeded
// with (seed, a mix of purpose and index), so streams never overlap in use
// and adding a consumer of one purpose leaves the others unchanged.
func Stream(seed uint64, purpose, index uint64) *rand.Rand {
	return rand.New(rand.NewPCG(seed, Mix(purpose, index)))
}

// Purposes of random streams.
const (
	StreamArrivals uint64 = iota + 1
	StreamDestinations
	StreamSizes
	StreamRedraw
	StreamAgent
	StreamFailures
	StreamFlows
	StreamLoss
	StreamFlowArrivals
	StreamFlowDestinations
	StreamFlowSizes
	StreamFlowSample
)

// Mix hashes two values into one (splitmix64 finaliser over a combination).
func Mix(a, b uint64) uint64 {
	x := a*0x9E3779B97F4A7C15 ^ (b + 0x632BE59BD9B4E019 + (a << 6) + (a >> 2))
	x ^= x >> 30
	x *= 0xBF58476D1CE4E5B9
	x ^= x >> 27
	x *= 0x94D049BB133111EB
	x ^= x >> 31
	return x
}
