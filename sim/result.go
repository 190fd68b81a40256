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
	NumDropReasons
)

var dropNames = [NumDropReasons]string{"queue_full", "link_down", "no_route", "hop_limit", "node_down"}

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

	Delivery      *Histogram // delivery times of measured delivered packets, seconds
	DeliverySum   float64    // seconds
	DeliveryMax   float64    // seconds
	HopsSum       int64      // over measured delivered packets
	StretchSum    float64    // hops taken / intact shortest hops, over measured delivered packets
	DeliveredBits float64    // bits of measured delivered packets

	ControlPackets int64 // control packets sent (in-band)
	ControlBytes   int64
	ControlDropped int64
	// RouteChanges counts the route changes the agent reported at or after
	// the warm-up (NodeView.CountRouteChanges, ControlView.CountRouteChanges);
	// what one change means is the agent kind's.
	RouteChanges int64

	Events int64 // events processed

	Channels []ChannelResult // by channel ID
	Series   []Bin
	// Failures are the events applied, sorted by time.
	Failures []FailureEvent
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
	Down             Time    // time spent down within the measured window
}

// Bin is one interval of the time series. Packets are counted in the bin of
// their generation time, so Generated = Delivered + Dropped + still in flight.
type Bin struct {
	Start, End Time
	Generated  int64
	Delivered  int64
	Dropped    int64
	DelaySum   float64 // seconds, over Delivered
	Delivery   *Histogram
	UtilMax    float64 // busiest channel's utilisation within the bin
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
