package agents

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"hoplore/sim"
)

// ObjectiveMix is the objective name of a weighted mix of delay, loss and
// utilisation (see Mix).
const ObjectiveMix = "mix"

// Objective is what a learning agent optimises: a named objective (delay,
// loss, utilisation; central-optimal's min-max-util, min-delay), or, with
// Name ObjectiveMix, the weighted sum Mix. Experiment files write a name,
// or {mix: {delay: W, loss: W, utilisation: W}} (omitted terms weigh 0).
type Objective struct {
	Name string
	Mix  Mix // weights; zero unless Name is ObjectiveMix
}

// Mix weighs the terms of the mix objective; the cost of a choice is
// Delay·(delivery time ÷ the pair's zero-load path time) + Loss·(loss
// probability) + Utilisation·(largest channel utilisation on the path),
// every term dimensionless: the delay term is 1 on an idle shortest path
// and grows with queueing, loss and utilisation are in [0, 1]. A weight of
// 1 on delay against 1 on loss thus trades one zero-load path time of
// extra delivery time for one lost packet in every packet sent.
type Mix struct {
	Delay, Loss, Utilisation float64
}

// mixTerms lists the mix terms in label and documentation order.
var mixTerms = [...]string{"delay", "loss", "utilisation"}

// weights returns the weights in mixTerms order.
func (m Mix) weights() [3]float64 { return [3]float64{m.Delay, m.Loss, m.Utilisation} }

// String writes o as canonical labels do: the name, or for a mix
// "mix/TERM=W/..." with the terms of non-zero weight in the order delay,
// loss, utilisation, e.g. "mix/delay=1/loss=20".
func (o Objective) String() string {
	if o.Name != ObjectiveMix {
		return o.Name
	}
	var b strings.Builder
	b.WriteString(ObjectiveMix)
	for i, w := range o.Mix.weights() {
		if w != 0 {
			b.WriteString("/" + mixTerms[i] + "=" + fmtFloat(w))
		}
	}
	return b.String()
}

// checkMix returns what is wrong with mix weights: a negative or non-finite
// weight (naming objective.mix.TERM), or all weights zero.
func checkMix(m Mix) error {
	sum := 0.0
	for i, w := range m.weights() {
		if w < 0 || math.IsNaN(w) || math.IsInf(w, 0) {
			return perr("objective.mix."+mixTerms[i], "must be a finite weight ≥ 0, got %s", fmtFloat(w))
		}
		sum += w
	}
	if sum == 0 {
		return perr("objective.mix", "needs a weight > 0 on at least one of delay, loss, utilisation")
	}
	return nil
}

// objectiveField returns the objective field of a kind: default def, the
// names it knows, and whether it takes a mix.
func objectiveField(def string, mix bool, names ...string) Field {
	known := slices.Clone(names)
	if mix {
		known = append(known, "{mix: {...}}")
	}
	return NewField("objective", func(p *Params) *Objective { return &p.Objective }, Objective{Name: def}, func(o Objective) error {
		if o.Name == ObjectiveMix {
			if !mix {
				return fmt.Errorf("takes no mix (known: %s)", strings.Join(known, ", "))
			}
			return checkMix(o.Mix)
		}
		if !slices.Contains(names, o.Name) {
			return fmt.Errorf("unknown objective %q (known: %s)", o.Name, strings.Join(known, ", "))
		}
		if o.Mix != (Mix{}) {
			return fmt.Errorf("objective %s takes no mix weights", o.Name)
		}
		return nil
	})
}

// busyMeter estimates the utilisation of a node's outgoing channels as the
// node itself can measure it: each channel's busy fraction since its last
// sample (sim.NodeView.Busy), folded into an EWMA of time constant
// utilWindow (a sample covering dt weighs 1 − exp(−dt/utilWindow)).
type busyMeter struct {
	u    []float64 // per Out index: the estimate
	t, b []sim.Time
}

func newBusyMeter(channels int) busyMeter {
	return busyMeter{u: make([]float64, channels), t: make([]sim.Time, channels), b: make([]sim.Time, channels)}
}

// at samples channel c (Out index k) of the node behind v and returns its
// utilisation estimate. Cost O(1), no allocation.
func (m *busyMeter) at(v *sim.NodeView, k, c int) float64 {
	now := v.Now()
	if dt := now - m.t[k]; dt > 0 {
		busy := v.Busy(c)
		sample := float64(busy-m.b[k]) / float64(dt)
		w := -math.Expm1(-float64(dt) / float64(utilWindow))
		m.u[k] += w * (sample - m.u[k])
		m.t[k], m.b[k] = now, busy
	}
	return m.u[k]
}
