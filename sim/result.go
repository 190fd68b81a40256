package sim

// DropReason says why a packet was dropped.
type DropReason uint8

// Drop reasons, as named in the results.
const (
	QueueFull DropReason = iota
	LinkDown
	NoRouteDrop
	HopLimit
	NodeDown
	// LinkLoss: lost on a channel with a loss probability (Config.Conditions)
	// after its transmission.
	LinkLoss
	NumDropReasons
)

var dropNames = [NumDropReasons]string{"queue_full", "link_down", "no_route", "hop_limit", "node_down", "link_loss"}

// String returns the reason's name in the results.
func (r DropReason) String() string { return dropNames[r] }

// Result holds what a run measured. Counts and statistics cover data packets
// generated at or after Config.Warmup, except Series, which covers the whole
// run by generation time.
type Result struct {
	Generated int64
	Delivered int64
	Dropped   [NumDropReasons]int64
	InFlight  int64
	// Unreachable counts, by reason, the dropped packets that were
	// unreachable: at their generation, or at some topology change while
	// they were in the network, their destination was down or in another
	// partition of the physical topology (nodes and links up at that moment)
	// than the node holding them (the sender, for a packet on a channel). No
	// routing could deliver them. Each is also counted in Dropped, so
	// Unreachable[r] ≤ Dropped[r]; a packet held by a failing node is always
	// unreachable.
	Unreachable [NumDropReasons]int64

	Delivery      *Histogram // delivery times of measured delivered packets, seconds
	DeliverySum   float64    // seconds
	DeliveryMax   float64    // seconds
	HopsSum       int64      // over measured delivered packets
	StretchSum    float64    // hops taken / intact shortest hops, over measured delivered packets
	DeliveredBits float64    // bits of measured delivered packets
	// DeliveryBatches holds the delivery times of measured delivered
	// packets, in order of delivery, in equal batches: the input of a
	// steady-state interval for the mean delivery time from this run alone.
	DeliveryBatches Batches

	ControlPackets int64 // control packets sent (in-band)
	ControlBytes   int64
	ControlDropped int64
	// RouteChanges counts the route changes the agent reported at or after
	// the warm-up (NodeView.CountRouteChanges, ControlView.CountRouteChanges);
	// what one change means is the agent kind's.
	RouteChanges int64

	Events int64 // events processed

	// Flows is what the flow traffic measured; nil without flow traffic.
	Flows *FlowResult

	Channels []ChannelResult // by channel ID
	Series   []Bin
	// Failures are the events applied, sorted by time.
	Failures []FailureEvent
	// Outcomes[k] is what followed Failures[k] (same length).
	Outcomes []Outcome
}

// Outcome is what followed one failure event, exactly (per packet, not
// binned). Every data packet counts here, warm-up included, like the Series.
// A drop of an unreachable packet is attributed to the event that made it
// unreachable (to none when it was generated unreachable before any event,
// on a topology disconnected from the start); any other drop to the event
// that took place last at or before it (several events at one instant: the
// last applied). On a connected topology the counts of all events add up to
// the drops from the first event to the end of the run.
type Outcome struct {
	// LostReachable counts the dropped reachable packets (see
	// Result.Unreachable) whose reason is a routing one: link_down,
	// no_route, hop_limit or node_down.
	LostReachable int64
	// LostUnreachable counts the dropped unreachable packets, every reason.
	LostUnreachable int64
	// LostQueueFull counts the dropped reachable packets whose reason is
	// queue_full (congestion, including the baseline).
	LostQueueFull int64
	// LastReachable is the time of the last drop counted in LostReachable,
	// or −1 when there was none.
	LastReachable Time
}

// DroppedUnreachable returns the measured unreachable drops over all reasons.
func (r *Result) DroppedUnreachable() int64 {
	var s int64
	for _, d := range r.Unreachable {
		s += d
	}
	return s
}

// DroppedTotal returns the measured drops over all reasons.
func (r *Result) DroppedTotal() int64 {
	var s int64
	for _, d := range r.Dropped {
		s += d
	}
	return s
}

// ChannelResult is what one directed channel measured over the measured window.
type ChannelResult struct {
	Util             float64 // fraction of the window spent transmitting (data and control)
	Packets          int64   // packets (data and control) whose transmission completed
	DroppedQueueFull int64   // measured data packets
	DroppedLinkDown  int64   // measured data packets
	DroppedLinkLoss  int64   // measured data packets
	Down             Time    // time spent down within the measured window
}

// Bin is one interval of the time series. Packets are counted in the bin of
// their generation time, so Generated = Delivered + Dropped + still in flight.
type Bin struct {
	Start, End Time
	Generated  int64
	Delivered  int64
	Dropped    int64
	// Unreachable counts the dropped packets that were unreachable (see
	// Result.Unreachable); they are also in Dropped.
	Unreachable int64
	DelaySum    float64 // seconds, over Delivered
	Delivery    *Histogram
	UtilMax     float64 // busiest channel's utilisation within the bin
	// RouteChanges counts the route changes the agent reported while the
	// clock was within the bin (warm-up included).
	RouteChanges int64
}

// DeliveryMean returns the bin's mean delivery time in seconds, or NaN.
func (b *Bin) DeliveryMean() float64 {
	if b.Delivered == 0 {
		return nan()
	}
	return b.DelaySum / float64(b.Delivered)
}
