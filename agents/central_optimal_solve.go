package agents

import (
	"errors"
	"slices"

	"hoplore/optimum"
)

// errNoDemand says there was nothing to route.
var errNoDemand = errors.New("agents: central-optimal: no demand to route")

// coSolver holds central-optimal's solver for the current set of usable
// channels, rebuilt when that set changes.
type coSolver struct {
	s      *optimum.Solver
	usable []bool    // the usable channels s was built for
	loss   []float64 // and the link loss probabilities
	bw     []float64 // and the bit rates
	splits optimum.Splits
}

func (cs *coSolver) init(a *CentralOptimal) error { return cs.build(a) }

func (cs *coSolver) build(a *CentralOptimal) error {
	m := optimum.FromNet(a.net, a.p.packetBytes(), func(c int) bool { return !a.usable[c] })
	for c := range m.Channels {
		m.Channels[c].Loss = a.linkLoss[c]
		if m.Channels[c].Capacity > 0 {
			m.Channels[c].Capacity = a.bandwidth[c] / (8 * a.p.packetBytes())
		}
	}
	s, err := optimum.NewSolver(m)
	if err == nil {
		err = s.SetServiceSCV(a.p.packetSCV())
	}
	if err != nil {
		return err
	}
	cs.s = s
	cs.usable = append(cs.usable[:0], a.usable...)
	cs.loss = append(cs.loss[:0], a.linkLoss...)
	cs.bw = append(cs.bw[:0], a.bandwidth...)
	return nil
}

// coLossModel reports whether objective o models the links' loss
// probabilities (loss and mix do; every objective models their bit rates
// as telemetry reports them now).
func coLossModel(o Objective) bool {
	o = coObjective(o)
	return o.Name == ObjectiveLoss || o.Name == ObjectiveMix
}

// coBound is what a solve found: the new routing's objective value, and
// its measure.
type coBound struct {
	value float64
	kind  coMeasure
}

// coMeasure is the measure of an objective value.
type coMeasure int

const (
	coUtil  coMeasure = iota // maximum channel utilisation
	coDelay                  // mean delay, seconds
	coMix                    // the optimum package's MinMix objective (loss, mix)
)

// solveInto solves for a's demand estimate on its usable channels, writes
// the split weights of every (node, destination) into w (entries with no
// next hop are left as they are) and returns the new routing's value.
func (cs *coSolver) solveInto(a *CentralOptimal, w []float64) (coBound, error) {
	var b coBound
	o := coObjective(a.p.Objective)
	if !slices.Equal(cs.usable, a.usable) || !slices.Equal(cs.bw, a.bandwidth) || coLossModel(o) && !slices.Equal(cs.loss, a.linkLoss) {
		if err := cs.build(a); err != nil {
			return b, err
		}
	}
	if err := cs.s.SetDemand(a.demand); err != nil {
		return b, err
	}
	if routable, _ := cs.s.Demand(); routable == 0 {
		return b, errNoDemand
	}
	switch o.Name {
	case ObjectiveMinDelay:
		r, err := cs.s.MinDelay(a.p.Epsilon)
		if err != nil {
			return b, err
		}
		a.LastUtil = r.Start.Util
		b = coBound{value: r.Mean, kind: coDelay}
		if !r.Feasible { // the min–max routing stays in the solver
			b = coBound{value: r.Start.Util}
		}
	case ObjectiveLoss, ObjectiveMix:
		w := optimum.Weights{Loss: 1}
		if o.Name == ObjectiveMix {
			w = optimum.Weights{Delay: o.Mix.Delay, Loss: o.Mix.Loss, Utilisation: o.Mix.Utilisation}
		}
		r, err := cs.s.MinMix(w, a.p.Epsilon)
		if err != nil {
			return b, err
		}
		a.LastUtil = r.MaxUtil
		b = coBound{value: r.Value, kind: coMix}
		if !r.Feasible { // a delay term and no stable routing: the min–max routing stays
			a.LastUtil = r.Start.Util
			b = coBound{value: r.Start.Util}
		}
	default:
		r, err := cs.s.MinMaxUtil(a.p.Epsilon)
		if err != nil {
			return b, err
		}
		a.LastUtil = r.Util
		b = coBound{value: r.Util}
	}
	cs.s.Splits(&cs.splits)
	for d := 0; d < a.n; d++ {
		for u := 0; u < a.n; u++ {
			sp := cs.splits.At(u, d)
			if len(sp) == 0 {
				continue
			}
			i := a.entry(u, d)
			clear(w[i : i+len(a.net.Out[u])])
			for _, x := range sp {
				w[i+a.localIndex(u, x.Channel)] = x.Weight
			}
		}
	}
	return b, nil
}
