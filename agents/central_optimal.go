package agents

import (
	"fmt"
	"math"

	"hoplore/optimum"
	"hoplore/sim"
)

// CentralOptimalKind is the kind of CentralOptimal in experiment files.
const CentralOptimalKind = "central-optimal"

// Objectives and split modes of central-optimal.
const (
	ObjectiveMinMaxUtil = "min-max-util"
	ObjectiveMinDelay   = "min-delay"
	SplitFlow           = "flow"
	SplitPacket         = "packet"
)

// coObjectiveField is central-optimal's objective: its own names
// min-max-util (the default) and min-delay, the shared vocabulary's
// utilisation and delay for the same two, loss, and a mix. Labels write
// utilisation and delay as min-max-util and min-delay, so the same agent
// gets the same label (and run ids) whichever spelling a file uses.
func coObjectiveField() Field {
	f := objectiveField(ObjectiveMinMaxUtil, true, ObjectiveMinMaxUtil, ObjectiveMinDelay, ObjectiveUtilisation, ObjectiveDelay, ObjectiveLoss)
	def := Objective{Name: ObjectiveMinMaxUtil}
	f.isDefault = func(p *Params) bool { return coObjective(p.Objective) == def }
	f.text = func(p *Params) string { return coObjective(p.Objective).String() }
	return f
}

// coObjective returns o with utilisation and delay written as
// central-optimal's min-max-util and min-delay.
func coObjective(o Objective) Objective {
	switch o.Name {
	case ObjectiveUtilisation:
		o.Name = ObjectiveMinMaxUtil
	case ObjectiveDelay:
		o.Name = ObjectiveMinDelay
	}
	return o
}

// routeChangeShare is the share of a (node, destination)'s traffic an
// install must move for central-optimal to count it as a route change.
const routeChangeShare = 0.05

func init() {
	Register(Kind{
		Name:    CentralOptimalKind,
		Order:   25,
		Central: true,
		Fields: []Field{
			everyField(2 * sim.Second),
			controlDelayField(50 * sim.Millisecond),
			coObjectiveField(),
			NewField("split", func(p *Params) *string { return &p.Split }, SplitFlow, oneOf("split", SplitFlow, SplitPacket)),
			NewField("max_shift", func(p *Params) *float64 { return &p.MaxShift }, 0.5, inUnitOpenClosed),
			NewField("epsilon", func(p *Params) *float64 { return &p.Epsilon }, 0.05, func(v float64) error {
				if !(v > 0 && v <= 0.5) {
					return fmt.Errorf("must be in (0, 0.5], got %g", v)
				}
				return nil
			}),
			// a time constant of every/smoothing = 10 s at the default every:
			// on the two-cluster bottleneck at load 1.3, 0.5 made 400 route
			// changes per minute of re-solving on noise, 0.2 made 16
			NewField("smoothing", func(p *Params) *float64 { return &p.Smoothing }, 0.2, inUnitOpenClosed),
		},
		New: newCentralOptimal,
		Cost: func(p *Params, r RunSize) Cost {
			// per install: the solver's per-destination flows and the split
			// tables, N·C each
			N, C := float64(r.Nodes), float64(r.Channels)
			return Cost{Events: centralEvents(p, r), Bytes: centralBytes(p, r) + 4*N*C*8}
		},
	})
}

// CentralOptimal is a traffic-engineering controller that installs the
// model optimum's routing as per-destination split weights.
//
// Every Every it requests a telemetry snapshot. When the snapshot arrives
// (ControlDelay old) it estimates the demand matrix from the sources'
// ingress counters: per source–destination pair, the packets generated over
// the last interval divided by its length, smoothed as an EWMA
// d ← (1−a)d + a·d_new with a = Smoothing (the first sample is taken as
// is). It solves, on the model of the network as the snapshot shows it
// (channels down, or at a node down, are left out; each channel a queue
// drained at bandwidth/(8·mean packet size) packets/s plus its propagation
// delay), within relative gap Epsilon (package optimum), the routing that
// minimises Objective:
//
//   - min-max-util (the default; utilisation is the same objective): the
//     largest channel utilisation.
//   - min-delay (delay is the same): the mean delay under M/G/1 queues per
//     channel with the run's packet-size variability (M/M/1 for
//     exponential sizes, M/D/1 for a fixed size) and infinite buffers.
//   - loss: the expected share of packets lost, each channel an M/M/1/K
//     queue holding its buffer plus the packet in transmission (its
//     blocking probability; an overloaded channel loses what does not fit)
//     followed by its link's loss probability (optimum.Solver.MinLoss).
//   - mix {delay: w_d, loss: w_l, utilisation: w_u}: w_d·(mean delay ÷
//     mean zero-load path time) + w_l·(loss share) + w_u·(largest
//     utilisation), the scales of the objective vocabulary (Mix), with
//     the same models (optimum.Solver.MinMix).
//
// When the estimated demand does not fit, so that no finite mean delay
// exists, min-delay and a mix with a delay weight install the min–max
// routing instead; loss alone always has a solution. Every objective
// models each link's bit rate as telemetry reports it now (the rate the
// link conditions set, ControlDelay old), and loss and mix its loss
// probability too, so a trunk slowed by its conditions is routed as the
// slower channel it is. Utilisation and
// delay are labelled min-max-util and min-delay, so a file may use either
// spelling for the same agent.
// optimum). The solution's flow towards each destination, made loop-free,
// gives every node split weights over its outgoing channels: the share of
// its traffic for that destination to send on each. A node that carries no
// flow for a destination gets its zero-load shortest-path next hop (such a
// node receives no flow, so this cannot close a loop).
//
// The new routing replaces the installed one only when it is better by more
// than the solver's own tolerance: when the routing in force (once what is
// queued is installed), evaluated on the same demand estimate and model,
// is within a factor 1+Epsilon of the new routing's value, nothing is
// installed, so that noise in the estimate does not move traffic between
// equally good routings. Otherwise the new weights take effect
// ControlDelay later, damped: per (node, destination) the installed
// weights move towards the new ones by at most MaxShift of the traffic
// (total variation distance ½Σ|w_new − w_old|). Weights on channels down in
// the snapshot are dropped at once (the rest renormalised, or the new
// weights taken whole when nothing is left), and wherever the damped
// mixture of old and new weights would close a forwarding loop, the nodes
// on the loop take their new weights (the new weights alone are loop-free,
// so this ends loop-free). An install counts a route change for each (node,
// destination) whose weights moved by more than 5% of its traffic.
//
// Forwarding picks a channel with probability equal to its weight: by a
// hash of the packet's flow label and the node (Split flow, so a flow's
// packets keep one path and their order) or by a fresh draw from the
// controller's random stream per packet (Split packet). Before the first
// install, routes are zero-load shortest paths.
type CentralOptimal struct {
	p   Params
	v   *sim.ControlView
	net *sim.Net
	n   int

	// Split tables: entry off[u] + d·deg(u) + k holds the share of node
	// u's traffic for destination d sent on Out[u][k].
	off     []int
	w       []float64 // installed
	pending []coPending

	zlNext []int32 // zero-load shortest-path next hop [u*n+d] over usable channels

	// demand estimation
	demand    [][]float64 // packets/s
	sampled   bool
	prevGen   []int64
	prevTaken sim.Time
	usable    []bool
	linkLoss  []float64 // per channel: link loss probability from telemetry
	bandwidth []float64 // per channel: bit/s in force, from telemetry

	sol coSolver

	// scratch
	evLoad, evX []float64
	evIndeg     []int32
	evQueue     []int32
	cost, dist  []float64
	col         []int32
	pf          *pathFinder
	state       []uint8

	// LastUtil is the model's maximum channel utilisation of the latest
	// solution (for tests).
	LastUtil float64
}

type coPending struct {
	w      []float64
	usable []bool
}

var (
	_ sim.Central = (*CentralOptimal)(nil)
	_ sim.Timed   = (*CentralOptimal)(nil)
)

func newCentralOptimal(p Params, net *sim.Net) (sim.Agent, error) {
	n := net.NumNodes()
	nc := len(net.Channels)
	a := &CentralOptimal{p: p, net: net, n: n,
		off: make([]int, n+1), zlNext: make([]int32, n*n),
		demand: make([][]float64, n), prevGen: make([]int64, n*n), usable: make([]bool, nc), linkLoss: make([]float64, nc), bandwidth: make([]float64, nc),
		cost: zeroLoadCosts(net, p.packetBytes()), dist: make([]float64, n), col: make([]int32, n),
		pf: newPathFinder(net), state: make([]uint8, n),
		evLoad: make([]float64, nc), evX: make([]float64, n), evIndeg: make([]int32, n), evQueue: make([]int32, 0, n)}
	for u := 0; u < n; u++ {
		a.off[u+1] = a.off[u] + n*len(net.Out[u])
	}
	for s := range a.demand {
		a.demand[s] = make([]float64, n)
	}
	for c := range a.usable {
		a.usable[c] = true
		a.bandwidth[c] = net.Channels[c].Bandwidth
	}
	a.w = make([]float64, a.off[n])
	a.zeroLoadInto(a.w)
	if err := a.sol.init(a); err != nil {
		return nil, err
	}
	return a, nil
}

// Name returns the agent's label.
func (a *CentralOptimal) Name() string { return a.p.Canonical() }

// Start arranges the first snapshot request.
func (a *CentralOptimal) Start(v *sim.ControlView) {
	a.v = v
	v.After(a.p.Every, tagTick)
}

// zeroLoadInto recomputes the zero-load shortest-path next hops over the
// usable channels and writes them into w as whole weights.
func (a *CentralOptimal) zeroLoadInto(w []float64) {
	n := a.n
	for d := 0; d < n; d++ {
		a.pf.distTo(d, a.cost, a.usable, a.dist)
		nextHopsTo(a.net, d, a.cost, a.usable, a.dist, a.col)
		for u := 0; u < n; u++ {
			a.zlNext[u*n+d] = a.col[u]
		}
	}
	clear(w)
	for u := 0; u < n; u++ {
		for d := 0; d < n; d++ {
			if c := a.zlNext[u*n+d]; c != sim.NoRoute {
				w[a.entry(u, d)+a.localIndex(u, int(c))] = 1
			}
		}
	}
}

// entry returns the index of (u, d)'s first weight.
func (a *CentralOptimal) entry(u, d int) int { return a.off[u] + d*len(a.net.Out[u]) }

// localIndex returns k with Out[u][k] == c.
func (a *CentralOptimal) localIndex(u, c int) int {
	for k, o := range a.net.Out[u] {
		if o == c {
			return k
		}
	}
	panic(fmt.Sprintf("agents: channel %d does not leave node %d", c, u))
}

// Route picks node's channel towards p.Dst with probability equal to its
// installed weight. Cost: O(degree), no allocation.
func (a *CentralOptimal) Route(node int, p *sim.Packet) int {
	out := a.net.Out[node]
	i := a.entry(node, p.Dst)
	ws := a.w[i : i+len(out)]
	var x float64
	if a.p.Split == SplitPacket {
		x = a.v.Rand().Float64()
	} else {
		x = float64(sim.Mix(uint64(p.Flow), uint64(node))>>11) * 0x1p-53
	}
	last := -1
	for k, wk := range ws {
		if wk <= 0 {
			continue
		}
		last = k
		if x < wk {
			return out[k]
		}
		x -= wk
	}
	if last < 0 {
		return sim.NoRoute
	}
	return out[last] // rounding: the sum of weights fell short of x
}

// Timer requests snapshots and installs tables.
func (a *CentralOptimal) Timer(tag int) {
	switch tag {
	case tagTick:
		a.v.Request()
		a.v.After(a.p.Every, tagTick)
	case tagInstall:
		if len(a.pending) == 0 {
			return
		}
		pd := a.pending[0]
		a.pending = a.pending[1:]
		a.v.CountRouteChanges(a.install(pd))
	}
}

// Telemetry updates the demand estimate, solves and queues the new weights
// for install ControlDelay later.
func (a *CentralOptimal) Telemetry(s *sim.Snapshot) {
	n := a.n
	dt := (s.Taken - a.prevTaken).Seconds()
	if dt > 0 {
		sm := a.p.Smoothing
		if !a.sampled {
			sm = 1
		}
		for src := 0; src < n; src++ {
			row := a.demand[src]
			for d := 0; d < n; d++ {
				k := src*n + d
				rate := float64(s.PairGenerated[k]-a.prevGen[k]) / dt
				row[d] = (1-sm)*row[d] + sm*rate
			}
		}
		a.sampled = true
	}
	copy(a.prevGen, s.PairGenerated)
	a.prevTaken = s.Taken
	for c := range a.usable {
		ch := &a.net.Channels[c]
		a.usable[c] = s.Up[c] && s.NodeUp[ch.From] && s.NodeUp[ch.To]
	}
	if s.Loss != nil {
		copy(a.linkLoss, s.Loss)
	}
	if s.Bandwidth != nil {
		copy(a.bandwidth, s.Bandwidth)
	}
	latest := a.w // the table in force once everything queued is installed
	if len(a.pending) > 0 {
		latest = a.pending[len(a.pending)-1].w
	}
	next := make([]float64, len(a.w))
	a.zeroLoadInto(next)
	if b, err := a.sol.solveInto(a, next); err != nil {
		// the model could not be solved (no demand yet): keep zero-load
		// shortest paths over the usable channels
		a.zeroLoadInto(next)
	} else if v, ok := a.evaluate(latest, b.kind); ok && v <= (1+a.p.Epsilon)*b.value {
		return // what is installed does within epsilon as well as the new solution
	}
	a.pending = append(a.pending, coPending{w: next, usable: append([]bool(nil), a.usable...)})
	a.v.After(a.p.ControlDelay, tagInstall)
}

// evaluate returns the objective of weights w under the demand estimate on
// the usable channels, in the measure m: the maximum channel utilisation,
// the mean delay of the optimum package's model (optimum.ChannelDelay:
// M/G/1 channels of the run's packet-size variability, capacity
// bandwidth/(8·mean packet size) packets/s at the bit rate telemetry last
// reported, plus propagation), or the
// last loss or mix solve's objective (optimum.Solver.MixValue: the same
// model, buffers and link losses, weights and zero-load reference).
// ok is false when w does not carry every demand to its destination over
// usable channels without a loop (then only a new table will do). Each
// destination's traffic is pushed through its split graph in topological
// order (Kahn's algorithm). Cost: O(N·(N + C)).
func (a *CentralOptimal) evaluate(w []float64, m coMeasure) (v float64, ok bool) {
	n := a.n
	load := a.evLoad
	clear(load)
	total := 0.0
	for d := 0; d < n; d++ {
		indeg, x, queue := a.evIndeg, a.evX, a.evQueue[:0]
		clear(indeg)
		for u := 0; u < n; u++ {
			x[u] = a.demand[u][d]
			if u == d {
				x[u] = 0
			}
			total += x[u]
			if u == d {
				continue
			}
			i := a.entry(u, d)
			for k, c := range a.net.Out[u] {
				if w[i+k] > 0 {
					indeg[a.net.Channels[c].To]++
				}
			}
		}
		for u := 0; u < n; u++ {
			if indeg[u] == 0 {
				queue = append(queue, int32(u))
			}
		}
		for h := 0; h < len(queue); h++ {
			u := int(queue[h])
			if u == d {
				continue
			}
			i := a.entry(u, d)
			sent := 0.0
			for k, c := range a.net.Out[u] {
				wk := w[i+k]
				if wk <= 0 {
					continue
				}
				if !a.usable[c] {
					return 0, false
				}
				f := x[u] * wk
				sent += wk
				load[c] += f
				to := a.net.Channels[c].To
				x[to] += f
				if indeg[to]--; indeg[to] == 0 {
					queue = append(queue, int32(to))
				}
			}
			if x[u] > 0 && sent < 0.999 {
				return 0, false // traffic with no next hop
			}
		}
		if len(queue) < n {
			return 0, false // a loop
		}
	}
	if m == coMix {
		return a.sol.s.MixValue(load), true
	}
	delay := m == coDelay
	for c := range load {
		if load[c] == 0 {
			continue
		}
		capacity := a.bandwidth[c] / (8 * a.p.packetBytes())
		if !delay {
			v = math.Max(v, load[c]/capacity)
			continue
		}
		if load[c] >= capacity {
			return math.Inf(1), true
		}
		v += optimum.ChannelDelay(load[c], capacity, a.net.Channels[c].Delay.Seconds(), a.p.packetSCV())
	}
	if delay && total > 0 {
		v /= total
	}
	return v, true
}

// install applies new weights under the damping, down-channel and loop
// rules and returns the route changes made.
func (a *CentralOptimal) install(pd coPending) int {
	n := a.n
	changes := 0
	old := make([]float64, 0, 64)
	for d := 0; d < n; d++ {
		mix := func(u int) {
			i := a.entry(u, d)
			deg := len(a.net.Out[u])
			cur, nw := a.w[i:i+deg], pd.w[i:i+deg]
			// drop weights on channels down in the snapshot
			sum := 0.0
			for k, c := range a.net.Out[u] {
				if !pd.usable[c] {
					cur[k] = 0
				}
				sum += cur[k]
			}
			if sum <= 0 {
				copy(cur, nw)
				return
			}
			tv := 0.0
			for k := range cur {
				cur[k] /= sum
				tv += math.Abs(nw[k] - cur[k])
			}
			tv /= 2
			if tv <= a.p.MaxShift {
				copy(cur, nw)
				return
			}
			f := a.p.MaxShift / tv
			for k := range cur {
				cur[k] += f * (nw[k] - cur[k])
			}
		}
		// keep a copy of the installed weights to count changes
		old = old[:0]
		for u := 0; u < n; u++ {
			i := a.entry(u, d)
			old = append(old, a.w[i:i+len(a.net.Out[u])]...)
		}
		for u := 0; u < n; u++ {
			mix(u)
		}
		a.releaseLoops(d, pd.w)
		j := 0
		for u := 0; u < n; u++ {
			i := a.entry(u, d)
			deg := len(a.net.Out[u])
			tv := 0.0
			for k := 0; k < deg; k++ {
				tv += math.Abs(a.w[i+k] - old[j+k])
			}
			j += deg
			if tv/2 > routeChangeShare {
				changes++
			}
		}
	}
	return changes
}

// releaseLoops gives the new weights nw to every node on a forwarding loop
// of the installed weights towards d (a cycle of channels with positive
// weight), until none is left. A loop always holds a node still on mixed
// weights, because the new weights alone are loop-free, so each round moves
// at least one more node to its new weights and the rounds end.
func (a *CentralOptimal) releaseLoops(d int, nw []float64) {
	for a.findLoop(d) >= 0 {
		for v := 0; v < a.n; v++ {
			if a.state[v] == 1 {
				i := a.entry(v, d)
				copy(a.w[i:i+len(a.net.Out[v])], nw[i:i+len(a.net.Out[v])])
			}
		}
	}
}

// findLoop looks for a cycle among the channels with positive installed
// weight towards d by depth-first search and returns a node on it, with
// state 1 marking exactly the nodes of the cycle's search path, or −1.
func (a *CentralOptimal) findLoop(d int) int {
	n := a.n
	clear(a.state) // 0 unvisited, 1 on the search path, 2 done
	type frame struct{ u, k int }
	stack := make([]frame, 0, n)
	for s := 0; s < n; s++ {
		if a.state[s] != 0 || s == d {
			continue
		}
		stack = append(stack[:0], frame{s, 0})
		a.state[s] = 1
		for len(stack) > 0 {
			top := &stack[len(stack)-1]
			u := top.u
			out := a.net.Out[u]
			if top.k == len(out) {
				a.state[u] = 2
				stack = stack[:len(stack)-1]
				continue
			}
			k := top.k
			top.k++
			if a.w[a.entry(u, d)+k] <= 0 {
				continue
			}
			v := a.net.Channels[out[k]].To
			if v == d {
				continue
			}
			switch a.state[v] {
			case 1:
				// the cycle is v … u → v: keep state 1 only on it
				on := false
				for _, f := range stack {
					if f.u == v {
						on = true
					}
					if !on {
						a.state[f.u] = 2
					}
				}
				return v
			case 0:
				a.state[v] = 1
				stack = append(stack, frame{v, 0})
			}
		}
	}
	return -1
}
