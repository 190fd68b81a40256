package agents

import (
	"errors"
	"math"
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
	flow   []float64
	state  []uint8
	pred   []int32
}

func (cs *coSolver) init(a *CentralOptimal) error {
	cs.flow = make([]float64, len(a.net.Channels))
	cs.state = make([]uint8, a.n)
	cs.pred = make([]int32, a.n)
	return cs.build(a)
}

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
// writes the split weights of every (node, destination) that carries flow
// into w, leaving the other entries as they are.
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
	r, err := cs.s.MinMaxUtil(a.p.Epsilon)
	if err != nil {
		return err
	}
	a.LastUtil = r.Util
	for d := 0; d < a.n; d++ {
		copy(cs.flow, cs.s.FlowTo(d))
		cs.cancelCycles(a, d)
		for u := 0; u < a.n; u++ {
			if u == d {
				continue
			}
			out := a.net.Out[u]
			sum := 0.0
			for _, c := range out {
				sum += cs.flow[c]
			}
			if sum <= 0 {
				continue
			}
			i := a.entry(u, d)
			for k, c := range out {
				w[i+k] = cs.flow[c] / sum
			}
		}
	}
	return nil
}

// cancelCycles removes flow around every directed cycle of cs.flow (a flow
// towards d), which changes no node's net flow and lowers no channel's
// load above what it was, until the flow's support is acyclic. Each
// cancellation empties at least one channel, so there are at most as many
// as channels.
func (cs *coSolver) cancelCycles(a *CentralOptimal, d int) {
	for {
		v := cs.findCycle(a, d)
		if v < 0 {
			return
		}
		// the cycle: v → … → u → v along pred links (pred[x] is the channel
		// into x on the search path)
		least := math.Inf(1)
		for x := v; ; {
			c := cs.pred[x]
			least = math.Min(least, cs.flow[c])
			if x = a.net.Channels[c].From; x == v {
				break
			}
		}
		for x := v; ; {
			c := cs.pred[x]
			cs.flow[c] -= least
			if cs.flow[c] <= 0 {
				cs.flow[c] = 0
			}
			if x = a.net.Channels[c].From; x == v {
				break
			}
		}
		// the channel(s) at the minimum are now empty
		for x := v; ; {
			c := cs.pred[x]
			if cs.flow[c] <= least*1e-12 {
				cs.flow[c] = 0
			}
			if x = a.net.Channels[c].From; x == v {
				break
			}
		}
	}
}

// findCycle searches the support of cs.flow for a directed cycle by depth-
// first search; it returns a node v on one, with pred set around it
// (following pred back from v returns to v), or −1.
func (cs *coSolver) findCycle(a *CentralOptimal, d int) int {
	n := a.n
	clear(cs.state)
	type frame struct{ u, k int }
	stack := make([]frame, 0, n)
	for s := 0; s < n; s++ {
		if cs.state[s] != 0 {
			continue
		}
		stack = append(stack[:0], frame{s, 0})
		cs.state[s] = 1
		for len(stack) > 0 {
			top := &stack[len(stack)-1]
			u := top.u
			out := a.net.Out[u]
			if top.k == len(out) {
				cs.state[u] = 2
				stack = stack[:len(stack)-1]
				continue
			}
			c := out[top.k]
			top.k++
			if cs.flow[c] <= 0 {
				continue
			}
			v := a.net.Channels[c].To
			switch cs.state[v] {
			case 1:
				cs.pred[v] = int32(c)
				return v
			case 0:
				cs.pred[v] = int32(c)
				cs.state[v] = 1
				stack = append(stack, frame{v, 0})
			}
		}
	}
	return -1
}
