package agents

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
	"time"

	"hoplore/sim"
)

// Kinds of agent, as written in experiment files.
const (
	ShortestPathKind    = "shortest-path"
	CentralAdaptiveKind = "central-adaptive"
	CentralQKind        = "central-q"
	QRoutingKind        = "q-routing"
	QNetworkKind        = "q-network"
)

// Kinds lists every agent kind in documentation order.
var Kinds = []string{ShortestPathKind, CentralAdaptiveKind, CentralQKind, QRoutingKind, QNetworkKind}

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
// defaults filled in by Defaults. Which fields apply depends on Kind; see
// Fields.
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

	// central-adaptive, central-q
	Every        sim.Time // interval between recomputations
	ControlDelay sim.Time // telemetry age and install delay
	HoldDown     sim.Time // central-adaptive: minimum time between route changes of one pair
	Smoothing    float64  // central-adaptive: EWMA weight of the newest utilisation sample
	K            int      // central-q: candidate paths per pair (Yen)
	Discount     float64  // central-q
	DropPenalty  sim.Time // central-q: cost charged per dropped packet

	// MeanPacketBytes is the mean packet size of the run's traffic, used for
	// zero-load time estimates; set by whoever builds the run, not read from
	// files. Zero means AssumedPacketBytes.
	MeanPacketBytes float64
}

// packetBytes returns the packet size zero-load estimates assume.
func (p *Params) packetBytes() float64 {
	if p.MeanPacketBytes > 0 {
		return p.MeanPacketBytes
	}
	return AssumedPacketBytes
}

// fieldsByKind lists the experiment-file fields each kind accepts, besides
// kind and label.
var fieldsByKind = map[string][]string{
	ShortestPathKind:    {"metric", "ecmp", "spf_delay"},
	QRoutingKind:        {"variant", "feedback", "learning_rate", "explore", "consensus"},
	QNetworkKind:        {"hidden", "learning_rate", "explore", "replay", "target_sync", "consensus"},
	CentralAdaptiveKind: {"every", "control_delay", "hold_down", "smoothing"},
	CentralQKind:        {"every", "control_delay", "k", "learning_rate", "discount", "explore", "drop_penalty"},
}

// Fields returns the experiment-file fields kind accepts besides kind and
// label, or nil for an unknown kind.
func Fields(kind string) []string { return slices.Clone(fieldsByKind[kind]) }

// Defaults returns the parameters of kind with every default filled in.
func Defaults(kind string) Params {
	p := Params{Kind: kind}
	switch kind {
	case ShortestPathKind:
		p.Metric = "hops"
		p.SPFDelay = 100 * sim.Millisecond
	case QRoutingKind:
		p.Variant = "plain"
		p.Feedback = "instant"
		p.LearningRate = 0.5
	case QNetworkKind:
		p.Hidden = []int{32}
		p.LearningRate = 0.01
		p.Replay = 256
		p.TargetSync = 200
	case CentralAdaptiveKind:
		p.Every = 2 * sim.Second
		p.ControlDelay = 50 * sim.Millisecond
		// one interval at the default every: measured on the 6×6 bottleneck grid,
		// 10 s turned fast flapping into slow swings of about 20 s and lost more
		p.HoldDown = 2 * sim.Second
		p.Smoothing = 0.5
	case CentralQKind:
		p.Every = 2 * sim.Second
		p.ControlDelay = 50 * sim.Millisecond
		p.K = 3
		p.LearningRate = 0.3
		p.Discount = 0.5
		p.Explore = 0.05
		p.DropPenalty = 1 * sim.Second
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

// Validate checks p's values for its kind and returns a *ParamError naming
// the first bad field.
func (p *Params) Validate() error {
	if _, ok := fieldsByKind[p.Kind]; !ok {
		return perr("kind", "unknown agent kind %q (known: %s)", p.Kind, strings.Join(Kinds, ", "))
	}
	switch p.Kind {
	case ShortestPathKind:
		switch p.Metric {
		case "hops", "delay", "inverse-capacity":
		default:
			return perr("metric", "unknown metric %q (known: hops, delay, inverse-capacity)", p.Metric)
		}
		if p.SPFDelay < 0 {
			return perr("spf_delay", "must not be negative")
		}
	case QRoutingKind, QNetworkKind:
		if p.Kind == QRoutingKind {
			switch p.Variant {
			case "plain", "predictive", "dual", "confidence":
			default:
				return perr("variant", "unknown variant %q (known: plain, predictive, dual, confidence)", p.Variant)
			}
			switch p.Feedback {
			case "instant", "in-band":
			default:
				return perr("feedback", "unknown feedback %q (known: instant, in-band)", p.Feedback)
			}
		}
		if !(p.LearningRate > 0 && p.LearningRate <= 1) {
			return perr("learning_rate", "must be in (0, 1], got %g", p.LearningRate)
		}
		if p.Explore < 0 || p.Explore >= 1 {
			return perr("explore", "must be in [0, 1), got %g", p.Explore)
		}
		if p.Consensus != nil {
			if p.Consensus.Every <= 0 {
				return perr("consensus.every", "must be positive")
			}
			if !(p.Consensus.Weight > 0 && p.Consensus.Weight <= 1) {
				return perr("consensus.weight", "must be in (0, 1], got %g", p.Consensus.Weight)
			}
		}
		if p.Kind == QNetworkKind {
			if len(p.Hidden) == 0 {
				return perr("hidden", "needs at least one layer size")
			}
			for _, h := range p.Hidden {
				if h < 1 || h > 1024 {
					return perr("hidden", "layer sizes must be in 1..1024, got %d", h)
				}
			}
			if p.Replay < 1 {
				return perr("replay", "must be at least 1, got %d", p.Replay)
			}
			if p.TargetSync < 1 {
				return perr("target_sync", "must be at least 1, got %d", p.TargetSync)
			}
		}
	case CentralAdaptiveKind, CentralQKind:
		if p.Every <= 0 {
			return perr("every", "must be positive")
		}
		if p.ControlDelay < 0 {
			return perr("control_delay", "must not be negative")
		}
		if p.Kind == CentralAdaptiveKind {
			if p.HoldDown < 0 {
				return perr("hold_down", "must not be negative")
			}
			if !(p.Smoothing > 0 && p.Smoothing <= 1) {
				return perr("smoothing", "must be in (0, 1], got %g", p.Smoothing)
			}
		} else {
			if p.K < 1 || p.K > 16 {
				return perr("k", "must be in 1..16, got %d", p.K)
			}
			if !(p.LearningRate > 0 && p.LearningRate <= 1) {
				return perr("learning_rate", "must be in (0, 1], got %g", p.LearningRate)
			}
			if p.Discount < 0 || p.Discount >= 1 {
				return perr("discount", "must be in [0, 1), got %g", p.Discount)
			}
			if p.Explore < 0 || p.Explore >= 1 {
				return perr("explore", "must be in [0, 1), got %g", p.Explore)
			}
			if p.DropPenalty < 0 {
				return perr("drop_penalty", "must not be negative")
			}
		}
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
	d := Defaults(p.Kind)
	var parts []string
	add := func(k, v string) { parts = append(parts, k+"="+v) }
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	dur := func(t sim.Time) string { return fmtDuration(t) }
	for _, field := range fieldsByKind[p.Kind] {
		switch field {
		case "metric":
			if p.Metric != d.Metric {
				add(field, p.Metric)
			}
		case "ecmp":
			if p.ECMP != d.ECMP {
				add(field, strconv.FormatBool(p.ECMP))
			}
		case "spf_delay":
			if p.SPFDelay != d.SPFDelay {
				add(field, dur(p.SPFDelay))
			}
		case "variant":
			if p.Variant != d.Variant {
				add(field, p.Variant)
			}
		case "feedback":
			if p.Feedback != d.Feedback {
				add(field, p.Feedback)
			}
		case "learning_rate":
			if p.LearningRate != d.LearningRate {
				add(field, f(p.LearningRate))
			}
		case "explore":
			if p.Explore != d.Explore {
				add(field, f(p.Explore))
			}
		case "consensus":
			if p.Consensus != nil {
				v := dur(p.Consensus.Every) + "/" + f(p.Consensus.Weight)
				if p.Consensus.SplitHorizon {
					v += "/split-horizon"
				}
				add(field, v)
			}
		case "hidden":
			if !slices.Equal(p.Hidden, d.Hidden) {
				s := make([]string, len(p.Hidden))
				for i, h := range p.Hidden {
					s[i] = strconv.Itoa(h)
				}
				add(field, strings.Join(s, "x"))
			}
		case "replay":
			if p.Replay != d.Replay {
				add(field, strconv.Itoa(p.Replay))
			}
		case "target_sync":
			if p.TargetSync != d.TargetSync {
				add(field, strconv.Itoa(p.TargetSync))
			}
		case "every":
			if p.Every != d.Every {
				add(field, dur(p.Every))
			}
		case "control_delay":
			if p.ControlDelay != d.ControlDelay {
				add(field, dur(p.ControlDelay))
			}
		case "hold_down":
			if p.HoldDown != d.HoldDown {
				add(field, dur(p.HoldDown))
			}
		case "smoothing":
			if p.Smoothing != d.Smoothing {
				add(field, f(p.Smoothing))
			}
		case "k":
			if p.K != d.K {
				add(field, strconv.Itoa(p.K))
			}
		case "discount":
			if p.Discount != d.Discount {
				add(field, f(p.Discount))
			}
		case "drop_penalty":
			if p.DropPenalty != d.DropPenalty {
				add(field, dur(p.DropPenalty))
			}
		}
	}
	if len(parts) == 0 {
		return p.Kind
	}
	return p.Kind + "(" + strings.Join(parts, ",") + ")"
}

func fmtDuration(t sim.Time) string { return time.Duration(t).String() }
