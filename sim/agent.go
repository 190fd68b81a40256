package sim

import "math"

// This file declares what the engine asks of routing agents. Agents live in
// package agents; the engine calls them, they never own the loop.
//
// The information boundary between per-node and central agents is a type:
// a per-node agent is handed a *NodeView of its own node, whose methods
// refuse (panic on) any channel not attached to that node; a central agent is
// handed a *ControlView whose telemetry is Snapshot values taken
// control-delay ago.

// NoRoute is returned by a routing decision that has no usable channel; the
// engine drops the packet with reason no_route.
const NoRoute = -1

// Agent is one routing kind set up for one run. It is either a PerNode or a
// Central; the engine checks which by type assertion.
type Agent interface {
	// Name is the agent's label, for messages.
	Name() string
}

// PerNode is an Agent made of one independent router per node.
type PerNode interface {
	Agent
	// Node builds the router for the node behind v. Called once per node, in
	// node order, before the run starts. The router keeps v.
	Node(v *NodeView) Router
}

// Router decides, at one node, the outgoing channel for a packet.
type Router interface {
	// Route returns the ID of one of this node's outgoing channels, or
	// NoRoute. It is called for every packet at every node it visits except
	// its destination, including the source. It must not retain p.
	Route(p *Packet) int
}

// Optional abilities of a Router, checked by type assertion once per node.

// Arrivals is told of each data packet that reaches this node over channel
// in (an incoming channel of this node), including at its destination, before
// any routing decision there. p.LastWait and p.LastTx describe the hop just
// made.
type Arrivals interface {
	Arrived(p *Packet, in int)
}

// Dropper is told when a data packet this node routed is lost on one of its
// own outgoing channels: refused by the full output queue (QueueFull) or
// lost on the link after its transmission (LinkLoss). out is that channel.
// It is what a sender observes of its own channel; drops elsewhere are not
// reported. p is valid only during the call.
type Dropper interface {
	Dropped(p *Packet, out int, reason DropReason)
}

// FlowWatcher is told when a flow of flow traffic (FlowGen) ends: all its
// packets delivered (FlowCompleted) or one of them lost or its source
// stopped (FlowFailed), at the instant the last packet was delivered or
// dropped (no acknowledgement delay is modelled). A per-node Router
// implementing it hears of the flows its node sent, while the node is up; a
// Central agent implementing it hears of every flow. Flows still going when
// the run ends are not reported. Warm-up flows are reported too
// (FlowEnd.Measured tells them apart). f is valid only during the call; the
// engine allocates nothing to make it.
type FlowWatcher interface {
	FlowEnded(f *FlowEnd)
}

// FlowEnd is what the engine knows of a flow when it ends (FlowWatcher).
type FlowEnd struct {
	// Slot is the flow's slot, the Packet.FlowSlot of its packets: unique
	// among the flows in progress, reused after the flow ends; an agent can
	// index a dense table with it (slots stay below the most flows ever in
	// progress at once).
	Slot     int
	ID       int64 // FlowRecord.ID
	Src, Dst int
	Size     int64 // bytes
	Class    FlowClass
	Label    uint32 // the Packet.Flow of its packets
	Start    Time   // emission of the first packet
	// End is the delivery of the last packet of a completed flow, the
	// instant of the ending (last delivery or drop) of a failed one.
	End Time
	// Ideal is the completion time alone on the idle network along the best
	// of IdealFCT's candidate paths (FlowRecord.Ideal), −1 when the
	// destination cannot be reached on the intact network.
	Ideal     Time
	Packets   int32 // packets sent
	Delivered int32 // packets delivered
	Reordered int32 // packets delivered below the next expected sequence number
	Outcome   FlowOutcome
	// First is the channel the flow's first packet was sent on at the
	// source (NoRoute when it was dropped there without one).
	First    int
	Measured bool // started at or after the warm-up
}

// FCT returns the flow's completion time (End − Start) in seconds, NaN
// unless it completed.
func (f *FlowEnd) FCT() float64 {
	if f.Outcome != FlowCompleted {
		return math.NaN()
	}
	return (f.End - f.Start).Seconds()
}

// Slowdown returns the flow's completion time over its idle-network time
// (Ideal), NaN unless it completed with Ideal > 0.
func (f *FlowEnd) Slowdown() float64 {
	if f.Outcome != FlowCompleted || f.Ideal <= 0 {
		return math.NaN()
	}
	return float64(f.End-f.Start) / float64(f.Ideal)
}

// Receiver gets control messages sent by neighbours (in-band, over channel
// in, or instantly with NodeView.Tell, in which case in is the channel from
// the sender to this node). m is valid only during the call: copy what you
// keep (m.Vec may be kept: it belongs to the receiver).
type Receiver interface {
	Receive(m *Message, in int)
}

// Detector is told when this node detects that the link under one of its
// outgoing channels went down or came back up (after the failure schedule's
// detection delay).
type Detector interface {
	Detected(out int, up bool)
}

// LinkStater is told when news of a link change anywhere reaches this node by
// flooding: at detection time plus the flooding time from the nearer end node.
// Link-state agents add their own SPF delay.
type LinkStater interface {
	LinkChanged(link int, up bool)
}

// Timed receives timers set with NodeView.After or ControlView.After.
type Timed interface {
	Timer(tag int)
}

// Central is an Agent with one controller for the whole network. Routing
// decisions still happen at every node, from tables the controller installed.
type Central interface {
	Agent
	// Start is called once before the run starts.
	Start(v *ControlView)
	// Route decides at node for packet p from the installed tables.
	Route(node int, p *Packet) int
	// Telemetry receives a snapshot requested with ControlView.Request,
	// control-delay after it was taken.
	Telemetry(s *Snapshot)
}

// Message is a control message between neighbouring per-node agents. Its
// meaning is the agent's; the engine only moves it. In-band messages occupy
// Bytes on the wire and queue with data packets.
type Message struct {
	Type  uint8 // agent-defined
	From  int   // sending node (set by the engine)
	Dst   int   // destination the values refer to, if any
	Value float64
	Aux   float64
	Aux2  float64   // a third value, where an agent needs one
	Aux3  float64   // a fourth value, where an agent needs one
	Vec   []float64 // optional bulk payload (tables, parameters); owned by the receiver
	Bytes int       // size on the wire, in bytes; > 0 for in-band messages
}

// PacketKind tells data packets from control packets.
type PacketKind uint8

// Packet kinds.
const (
	Data PacketKind = iota
	Control
)

// Packet is one packet in flight. Agents read it during decisions and may
// write Aux, Route and RouteStep, which travel with the packet.
type Packet struct {
	Kind     PacketKind
	Src, Dst int
	Size     int    // bytes on the current hop
	Flow     uint32 // flow label: equal for all packets of one flow
	Born     Time   // generation time
	Hops     int    // hops made so far
	Measured bool   // generated after warm-up
	// Seq is the packet's position in its flow of flow traffic (0 for the
	// first), 0 for packet traffic.
	Seq int32

	// The hop just made (valid in Arrivals.Arrived and Receiver.Receive).
	LastWait Time // time spent waiting in the previous node's queue
	LastTx   Time // transmission time on the previous hop
	Prev     int  // previous node, -1 at the source

	// Agent-carried fields, cleared at generation.
	Aux       [3]float64
	Route     []int // a source route of channel IDs, if a central agent set one
	RouteStep int

	Msg Message // the payload of a control packet

	// engine bookkeeping
	id       int32
	queuedAt Time
	epoch    uint32
	bin      int32
	at       int32 // node holding the packet: the sender while it is on a channel
	live     bool  // a data packet in the network
	// unreachable: at generation or at some topology change while it was in
	// the network, the destination could not be reached from where it was
	unreachable bool
	cause       int32 // when unreachable: the failure event that made it so (index), −1 before any
	fl          int32 // flow traffic: index of the flow + 1; 0 for packet traffic
	// Config.PinFlows: the generation of its flow's pins the packet follows,
	// and Hops − pinOff, its position on that generation's pinned walk
	pinGen, pinOff int32
}

// FlowSlot returns the slot of the packet's flow of flow traffic
// (FlowEnd.Slot), −1 for packet traffic.
func (p *Packet) FlowSlot() int { return int(p.fl) - 1 }
