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
	usable []bool // the usable channels s was built for
	splits optimum.Splits
}

func (cs *coSolver) init(a *CentralOptimal) error { return cs.build(a) }

func (cs *coSolver) build(a *CentralOptimal) error {
	m := optimum.FromNet(a.net, a.p.packetBytes(), func(c int) bool { return !a.usable[c] })
	s, err := optimum.NewSolver(m)
	if err != nil {
		return err
	}
	cs.s = s
	cs.usable = append(cs.usable[:0], a.usable...)
	return nil
}

// solveInto solves for a's demand estimate on its usable channels and
// writes the split weights of every (node, destination) into w (entries
// with no next hop are left as they are).
func (cs *coSolver) solveInto(a *CentralOptimal, w []float64) error {
	if !slices.Equal(cs.usable, a.usable) {
		if err := cs.build(a); err != nil {
			return err
		}
	}
	if err := cs.s.SetDemand(a.demand); err != nil {
		return err
	}
	if routable, _ := cs.s.Demand(); routable == 0 {
		return errNoDemand
	}
	if a.p.Objective == ObjectiveMinDelay {
		r, err := cs.s.MinDelay(a.p.Epsilon)
		if err != nil {
			return err
		}
		a.LastUtil = r.Start.Util // infeasible: the min–max routing stays
	} else {
		r, err := cs.s.MinMaxUtil(a.p.Epsilon)
		if err != nil {
			return err
		}
		a.LastUtil = r.Util
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
	return nil
}
