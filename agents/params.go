package agents

import (
	"errors"
	"fmt"
	"slices"
	"strings"

	"hoplore/sim"
)

// Consensus configures periodic agreement between neighbouring per-node agents.
type Consensus struct {
	Every  sim.Time // interval between rounds, > 0
	Weight float64  // blend weight in (0, 1]; networks use Metropolis weights scaled by it
	// SplitHorizon (tabular only): a node tells each neighbour y its best
	// value over the other neighbours, min_{z≠y} Q(d,z), so that a neighbour
	// is never offered a route that runs back through itself (the
	// distance-vector loop; split horizon is common practice in routing
	// protocols). Off by default, which is V_y(d) = min_z Q_y(d,z).
	SplitHorizon bool
}

// Params are an agent's settings as written in an experiment file, with
// defaults filled in by Defaults. Which fields apply depends on Kind: the
// kind's registered Fields say, and only they are read, checked and
// labelled. A new parameter that no existing field fits gets its Go field
// here.
type Params struct {
	Kind  string
	Label string // the agent column's value when set

	// shortest-path
	Metric   string   // hops | delay | inverse-capacity
	ECMP     bool     // split over equal-cost next hops by flow hash
	SPFDelay sim.Time // link-state: delay between hearing of a change and using new routes

	// q-routing, q-network
	Variant      string  // q-routing: plain | predictive | dual | confidence
	Feedback     string  // q-routing: instant | in-band
	LearningRate float64 // step size of value updates (q-network: SGD step)
	Explore      float64 // probability of a uniformly random usable neighbour
	Consensus    *Consensus
	Hidden       []int // q-network hidden layer sizes
	Replay       int   // q-network replay buffer size (samples)
	TargetSync   int   // q-network: updates between target copies
	// GiveUpAfter (q-routing, q-network): a node drops, as no_route, the
	// packets for a destination all of whose estimates exceed it, probing
	// once per GiveUpAfter; 0 (the default) forwards every packet, the
	// published behaviour.
	GiveUpAfter sim.Time
	// Learning (q-routing, q-network): "on" (the default) or "frozen": the
	// tables or parameters never change during the run (no feedback, no
	// consensus, no reset of a returning channel's column); see StartFrom.
	Learning string
	// StartFrom (q-routing, q-network): the training run whose final state
	// the learner starts from; nil starts from the usual initial state.
	StartFrom *Origin

	// central-adaptive, central-q, central-optimal
	Every        sim.Time // interval between recomputations
	ControlDelay sim.Time // telemetry age and install delay
	HoldDown     sim.Time // central-adaptive: minimum time between route changes of one pair
	Smoothing    float64  // central-adaptive: EWMA weight of the newest utilisation sample
	CostCeiling  float64  // central-adaptive: busiest/idle cost ratio of the revised metric; 0 = M/M/1 delay cost
	CostStep     float64  // central-adaptive: largest change of a channel's cost per update, hop-equivalents; 0 = unbounded
	K            int      // central-q: candidate paths per pair (Yen)
	Discount     float64  // central-q
	DropPenalty  sim.Time // central-q: cost charged per dropped packet

	// central-optimal (also Every, ControlDelay, Smoothing)
	// delay | loss | utilisation | mix; central-optimal also min-max-util
	// and min-delay (utilisation and delay are the same two there)
	Objective Objective
	Split     string // flow (by flow hash) | packet
	// every kind: PinPacket (default) or PinFlow (see PinFlow)
	Pin string
	// q-routing, q-network: forwarding uses a snapshot of the tables
	// (q-network: channels installed from a parameter snapshot) taken every
	// InstallEvery (0: the live tables)
	InstallEvery sim.Time
	MaxShift     float64 // largest share of a (node, destination)'s traffic moved per install
	Epsilon      float64 // relative gap at which the solver stops

	// MeanPacketBytes is the mean packet size of the run's traffic, used for
	// zero-load time estimates; set by whoever builds the run, not read from
	// files. Zero means AssumedPacketBytes.
	MeanPacketBytes float64
	// PacketSizeSCV is the squared coefficient of variation of the run's
	// packet sizes (sim.SizeDist.SCV: 0 for a fixed size, 1 for exponential
	// sizes), the service-time variability of central-optimal's min-delay
	// model; set with MeanPacketBytes by whoever builds the run and read
	// only when MeanPacketBytes is set (otherwise 1).
	PacketSizeSCV float64
}

// packetBytes returns the packet size zero-load estimates assume.
func (p *Params) packetBytes() float64 {
	if p.MeanPacketBytes > 0 {
		return p.MeanPacketBytes
	}
	return AssumedPacketBytes
}

// packetSCV returns the packet-size variability the min-delay model
// assumes.
func (p *Params) packetSCV() float64 {
	if p.MeanPacketBytes > 0 {
		return p.PacketSizeSCV
	}
	return 1
}

// Fields returns the experiment-file fields kind accepts besides kind and
// label, or nil for an unknown kind.
func Fields(kind string) []string {
	k, ok := Lookup(kind)
	if !ok {
		return nil
	}
	names := make([]string, len(k.Fields))
	for i, f := range k.Fields {
		names[i] = f.Name
	}
	return names
}

// Defaults returns the parameters of kind with every default filled in
// (only Kind for an unknown kind).
func Defaults(kind string) Params {
	p := Params{Kind: kind}
	if k, ok := Lookup(kind); ok {
		for i := range k.Fields {
			k.Fields[i].setDefault(&p)
		}
	}
	return p
}

// ParamError is a problem with one field of an agent's parameters.
type ParamError struct {
	Field string // experiment-file field name, e.g. "learning_rate" or "consensus.every"
	Msg   string
}

func (e *ParamError) Error() string { return fmt.Sprintf("agents: %s: %s", e.Field, e.Msg) }

func perr(field, format string, args ...any) error {
	return &ParamError{Field: field, Msg: fmt.Sprintf(format, args...)}
}

// Validate checks p's values for its kind, field by field in the kind's
// order and then across fields, and returns a *ParamError naming the first
// bad field.
func (p *Params) Validate() error {
	k, ok := Lookup(p.Kind)
	if !ok {
		return perr("kind", "unknown agent kind %q (known: %s)", p.Kind, strings.Join(Kinds(), ", "))
	}
	for i := range k.Fields {
		if err := k.Fields[i].Check(p); err != nil {
			return err
		}
	}
	if k.Check != nil {
		return k.Check(p)
	}
	return nil
}

// Canonical returns the agent column's value: Label when set, else the kind
// followed by the parameters that differ from the kind's defaults, in field
// order, e.g. "q-routing(learning_rate=0.7,consensus=1s/0.5)".
func (p *Params) Canonical() string {
	if p.Label != "" {
		return p.Label
	}
	k, ok := Lookup(p.Kind)
	if !ok {
		return p.Kind
	}
	var parts []string
	for i := range k.Fields {
		f := &k.Fields[i]
		if !f.IsDefault(p) {
			parts = append(parts, f.Name+"="+f.Text(p))
		}
	}
	if len(parts) == 0 {
		return p.Kind
	}
	return p.Kind + "(" + strings.Join(parts, ",") + ")"
}

// Checks shared by the kinds' fields.

func inUnitOpenClosed(v float64) error {
	if !(v > 0 && v <= 1) {
		return fmt.Errorf("must be in (0, 1], got %g", v)
	}
	return nil
}

func inUnitClosedOpen(v float64) error {
	if v < 0 || v >= 1 {
		return fmt.Errorf("must be in [0, 1), got %g", v)
	}
	return nil
}

func positiveTime(t sim.Time) error {
	if t <= 0 {
		return errors.New("must be positive")
	}
	return nil
}

func nonNegativeTime(t sim.Time) error {
	if t < 0 {
		return errors.New("must not be negative")
	}
	return nil
}

func atLeastOne(n int) error {
	if n < 1 {
		return fmt.Errorf("must be at least 1, got %d", n)
	}
	return nil
}

// oneOf returns a check that accepts only values; what names the field in
// the message ("unknown metric ...").
func oneOf(what string, values ...string) func(string) error {
	return func(s string) error {
		if !slices.Contains(values, s) {
			return fmt.Errorf("unknown %s %q (known: %s)", what, s, strings.Join(values, ", "))
		}
		return nil
	}
}

// Fields shared by several kinds (each kind gives its own default).

func learningRateField(def float64) Field {
	return NewField("learning_rate", func(p *Params) *float64 { return &p.LearningRate }, def, inUnitOpenClosed)
}

func exploreField(def float64) Field {
	return NewField("explore", func(p *Params) *float64 { return &p.Explore }, def, inUnitClosedOpen)
}

// consensusField is the per-node learners' consensus, none by default;
// splitHorizon says whether the kind can tell each neighbour a different
// value.
func consensusField(splitHorizon bool) Field {
	return NewField("consensus", func(p *Params) **Consensus { return &p.Consensus }, nil, func(c *Consensus) error {
		if c == nil {
			return nil
		}
		if c.Every <= 0 {
			return perr("consensus.every", "must be positive")
		}
		if !(c.Weight > 0 && c.Weight <= 1) {
			return perr("consensus.weight", "must be in (0, 1], got %g", c.Weight)
		}
		if c.SplitHorizon && !splitHorizon {
			return perr("consensus.split_horizon", "applies to q-routing only (q-network consensus averages parameters)")
		}
		return nil
	})
}

// The central kinds' timing fields.

func everyField(def sim.Time) Field {
	return NewField("every", func(p *Params) *sim.Time { return &p.Every }, def, positiveTime)
}

func controlDelayField(def sim.Time) Field {
	return NewField("control_delay", func(p *Params) *sim.Time { return &p.ControlDelay }, def, nonNegativeTime)
}

// consensusEvents estimates the events of consensus rounds: one message per
// channel per round, each a hop.
func consensusEvents(p *Params, r RunSize) float64 {
	if p.Consensus == nil || p.Consensus.Every <= 0 {
		return 0
	}
	return r.Seconds / p.Consensus.Every.Seconds() * float64(r.Channels) * eventsPerHop
}

// centralEvents estimates a controller's rounds: each touches every node
// and channel.
func centralEvents(p *Params, r RunSize) float64 {
	if p.Every <= 0 {
		return 0
	}
	return r.Seconds / p.Every.Seconds() * float64(r.Nodes+r.Channels)
}

// centralBytes estimates a controller's per-pair state: pair counters, two
// snapshots in flight and k candidate paths per pair.
func centralBytes(p *Params, r RunSize) float64 {
	N := float64(r.Nodes)
	return N*N*24*3 + N*N*float64(max(p.K, 1))*8*8
}
