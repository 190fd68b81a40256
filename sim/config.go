package sim

import "math"

// Config is everything one run depends on. A run is a pure function of its
// Config: same Config, same Result.
type Config struct {
	Net      *Net
	Duration Time // simulated time; must exceed Warmup
	Warmup   Time // packets generated before this are not measured
	Bin      Time // width of the Result.Series bins
	HopLimit int  // packets are dropped on reaching this many hops; 0 means DefaultHopLimit
	Traffic  Traffic
	Failures Failures
	// Conditions change links' bandwidth, delay or loss from given times on.
	Conditions []LinkCondition
	Agent      Agent
	// PinFlows makes the packets of a flow of flow traffic follow, at every
	// node, the channel the flow's first packet to reach that node was sent
	// on: per-flow decisions. The agent is still asked (and learns) for
	// every packet; only the forwarding follows the pin. A pin is never
	// followed into a loop: it is re-decided (it takes the agent's choice for
	// the packet at hand) when the node sees its channel down; when a packet
	// of the flow comes back to the node further along the pinned path than
	// the path first reached it, or dies there at the hop limit (the path
	// loops through the node); and when it would send a packet straight back
	// to the node it came from. The packet that re-decided a pin then
	// chooses afresh, as a first packet, at the nodes after it, and the
	// packets sent before it take the new pins where they meet them: the
	// packets in flight round a loop when it is found go round it at most
	// once, the later ones not at all. No reordering comes of pinning on a
	// network without failures whose agent sends no first packet round a
	// loop.
	PinFlows bool
	// ControlDelay is the age of a central agent's telemetry and the delay
	// before its tables take effect.
	ControlDelay Time
	// Seed identifies the run's random streams; see Stream.
	Seed uint64
	// AgentSeed seeds the agent's own randomness (exploration), kept apart so
	// that agents compared in one cell see identical traffic and failures.
	AgentSeed uint64
}

// DefaultHopLimit is the hop limit when Config.HopLimit is zero.
const DefaultHopLimit = 64

// Traffic describes what the sources emit.
type Traffic struct {
	// Rates[s][d] is the Poisson rate, packets per second, from node s to d.
	Rates [][]float64
	Size  SizeDist
	// Redraw draws a fresh size at every hop (Kleinrock's independence
	// assumption) instead of keeping it.
	Redraw bool
	// Periodic replaces Poisson emission by packets exactly 1/rate apart
	// (first at 1/rate), for hand-checkable schedules.
	Periodic bool
	// Phases scale every rate by Factor from time At on (before the first
	// phase the factor is 1): load that rises or falls during a run.
	// Poisson sources follow the changing rate exactly, by thinning.
	Phases []RatePhase
	// Periods replace the whole matrix at given times: from Periods[k].At
	// until the next period's At (the last until the end of the run) the
	// rates are Periods[k].Rates, before the first one Rates. Phases still
	// scale them. Poisson sources follow the changes exactly, by thinning;
	// Periodic sources do not take periods. A replay of measured matrices.
	Periods []RatePeriod
	// Flows is the number of flow labels per source–destination pair that
	// ECMP hashing can spread; 0 means DefaultFlows.
	Flows int
	// FlowGen adds flow traffic (transfers of many packets) beside the
	// packets of Rates; nil means none. See FlowGen.
	FlowGen *FlowGen
}

// RatePhase multiplies all traffic rates by Factor (≥ 0) from At on.
type RatePhase struct {
	At     Time
	Factor float64
}

// RatePeriod is one matrix of a replay: Rates[s][d] packets per second
// from At on.
type RatePeriod struct {
	At    Time
	Rates [][]float64
}

// LinkCondition sets parameters of both channels of a link from At on,
// piecewise constant: the bandwidth (bit/s) when Bandwidth > 0, the
// propagation delay when SetDelay, the loss probability when SetLoss. A
// packet being transmitted at At finishes at the old bandwidth; one already
// propagating keeps its arrival time. With loss probability q every packet
// (data or control) that finishes its transmission on the channel is lost
// with probability q, independently (drop reason LinkLoss), drawn from the
// channel's own stream.
type LinkCondition struct {
	At        Time
	Link      int
	Bandwidth float64
	Delay     Time
	SetDelay  bool
	Loss      float64
	SetLoss   bool
}

// DefaultFlows is the number of flow labels per pair when Traffic.Flows is zero.
const DefaultFlows = 8

// SizeKind names a packet size distribution.
type SizeKind uint8

// Size distributions.
const (
	Fixed SizeKind = iota
	Exponential
	Bimodal
	// Pareto: P(X > x) = (xm/x)^Shape for x ≥ xm, xm = MeanBytes·(Shape−1)/Shape.
	Pareto
	// Lognormal: ln X is normal with mean Mu and standard deviation Sigma.
	Lognormal
	// Classes: Classes[i].Bytes with probability Classes[i].Fraction.
	Classes
	// Empirical: the piecewise-linear cumulative distribution through CDF.
	Empirical
)

// SizeDist is a packet size distribution in bytes.
type SizeDist struct {
	Kind          SizeKind
	Bytes         int     // Fixed
	MeanBytes     float64 // Exponential (sizes are rounded up to whole bytes, at least 1)
	SmallBytes    int     // Bimodal
	LargeBytes    int     // Bimodal
	LargeFraction float64 // Bimodal: probability of LargeBytes
	Shape         float64 // Pareto tail index (> 1); MeanBytes is its mean
	Mu, Sigma     float64 // Lognormal: parameters of ln(bytes)
	Classes       []SizeClass
	// CDF: points (Bytes, P) with both strictly increasing, P > 0 and the
	// last P exactly 1. A draw is Bytes of the first point with probability
	// P of the first point, and otherwise linear between consecutive points.
	CDF []CDFPoint
}

// SizeClass is one class of a Classes size distribution.
type SizeClass struct {
	Fraction float64
	Bytes    float64
}

// CDFPoint is one point of an Empirical size distribution: P(X ≤ Bytes) = P.
type CDFPoint struct {
	Bytes float64
	P     float64
}

// Mean returns the mean size in bytes (of the continuous distribution,
// before draws are rounded up to whole bytes).
func (d SizeDist) Mean() float64 {
	switch d.Kind {
	case Fixed:
		return float64(d.Bytes)
	case Exponential, Pareto:
		return d.MeanBytes
	case Lognormal:
		return math.Exp(d.Mu + d.Sigma*d.Sigma/2)
	case Classes:
		var m float64
		for _, c := range d.Classes {
			m += c.Fraction * c.Bytes
		}
		return m
	case Empirical:
		if len(d.CDF) == 0 {
			return 0
		}
		m := d.CDF[0].P * d.CDF[0].Bytes
		for i := 1; i < len(d.CDF); i++ {
			a, b := d.CDF[i-1], d.CDF[i]
			m += (b.P - a.P) * (a.Bytes + b.Bytes) / 2
		}
		return m
	default:
		return float64(d.SmallBytes)*(1-d.LargeFraction) + float64(d.LargeBytes)*d.LargeFraction
	}
}

// SCV returns the squared coefficient of variation of the size,
// Var[X]/E[X]², of the continuous distribution like Mean: 0 for a fixed
// size, 1 for an exponential one, +Inf for a Pareto tail index at most 2
// (infinite variance). With a channel's service time proportional to the
// size, it is the service-time variability of the Pollaczek–Khinchine mean
// (Kleinrock, Queueing Systems Vol. 1, 1975, §5.6).
func (d SizeDist) SCV() float64 {
	m := d.Mean()
	var m2 float64 // E[X²]
	switch d.Kind {
	case Fixed:
		return 0
	case Exponential:
		return 1
	case Pareto:
		if d.Shape <= 2 {
			return math.Inf(1)
		}
		return 1 / (d.Shape * (d.Shape - 2))
	case Lognormal:
		return math.Expm1(d.Sigma * d.Sigma)
	case Classes:
		for _, c := range d.Classes {
			m2 += c.Fraction * c.Bytes * c.Bytes
		}
	case Empirical:
		if len(d.CDF) == 0 {
			return 0
		}
		m2 = d.CDF[0].P * d.CDF[0].Bytes * d.CDF[0].Bytes
		for i := 1; i < len(d.CDF); i++ {
			a, b := d.CDF[i-1], d.CDF[i]
			m2 += (b.P - a.P) * (a.Bytes*a.Bytes + a.Bytes*b.Bytes + b.Bytes*b.Bytes) / 3
		}
	default:
		s, l := float64(d.SmallBytes), float64(d.LargeBytes)
		m2 = s*s*(1-d.LargeFraction) + l*l*d.LargeFraction
	}
	if m == 0 {
		return 0
	}
	return math.Max(0, m2/(m*m)-1)
}

// Failures is a run's failure schedule, resolved to element indices.
type Failures struct {
	// Detection is the time after a link change until its end nodes notice.
	Detection Time
	Events    []FailureEvent // in any order; applied by (At, position)
}

// FailureEvent takes links or a node down or up at a time.
type FailureEvent struct {
	At      Time
	Links   []int  // links that change together (a shared-risk group has several)
	Node    int    // node that changes, or -1
	Up      bool   // true brings the element back
	Element string // how results name it: "c-d", "h", a group's name
}
