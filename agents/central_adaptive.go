package agents

import (
	"fmt"
	"math"

	"hoplore/sim"
)

// CentralAdaptiveKind is the kind of CentralAdaptive in experiment files.
const CentralAdaptiveKind = "central-adaptive"

func init() {
	Register(Kind{
		Name:    CentralAdaptiveKind,
		Order:   20,
		Central: true,
		Fields: []Field{
			everyField(2 * sim.Second),
			controlDelayField(50 * sim.Millisecond),
			// measured at overload under the revised metric (2 seeds
			// each): on the two-region topology at load 1.2 a hold-down of
			// 2 s lost 6.2% (shortest path 3.3%: traffic swung between the
			// two bridges), 6 s 4%, 10 s 1.5–2.2%; on the two-cluster
			// bottleneck at 1.3, 0.1% with 2 s and 1.7% with 10 s (shortest
			// path 10%); on the 6×6 Boyan & Littman grid at 1.15, 0.6% and
			// 0.8% (shortest path 5.5%). Under the delay metric 10 s made
			// slow swings of about 20 s on that grid and lost more.
			NewField("hold_down", func(p *Params) *sim.Time { return &p.HoldDown }, 10*sim.Second, nonNegativeTime),
			NewField("smoothing", func(p *Params) *float64 { return &p.Smoothing }, 0.5, inUnitOpenClosed),
			// a 56 kbit/s line's cost ranged from 30 to 90 units (Khanna &
			// Zinky 1989)
			NewField("cost_ceiling", func(p *Params) *float64 { return &p.CostCeiling }, 3, func(v float64) error {
				if v != 0 && !(v >= 1 && v <= 100) {
					return fmt.Errorf("must be 0 (off) or in [1, 100], got %g", v)
				}
				return nil
			}),
			// about half a hop per update (Khanna & Zinky 1989, from memory)
			NewField("cost_step", func(p *Params) *float64 { return &p.CostStep }, 0.5, func(v float64) error {
				if !(v >= 0 && v <= 100) {
					return fmt.Errorf("must be 0 (off) or in (0, 100] hop-equivalents, got %g", v)
				}
				return nil
			}),
		},
		New: newCentralAdaptive,
		Cost: func(p *Params, r RunSize) Cost {
			return Cost{Events: centralEvents(p, r), Bytes: centralBytes(p, r)}
		},
	})
}

// Timer tags of the central agents.
const (
	tagTick    = 1 // request a snapshot
	tagInstall = 2 // a computed table takes effect
)

// maxModelUtil caps the utilisation fed to the M/M/1 delay estimate so that a
// saturated channel gets a large but finite cost.
const maxModelUtil = 0.99

// CentralAdaptive is a controller that recomputes every route from measured
// utilisation, in the manner of the ARPANET's SPF (McQuillan, Richer &
// Rosen 1980), with the bounded link metric that replaced its delay metric
// (Khanna & Zinky, "The revised ARPANET routing metric", SIGCOMM 1989) and
// a per-pair hold-down.
//
// Every Every it requests a telemetry snapshot. When the snapshot arrives
// (ControlDelay old), it updates each channel's utilisation as an EWMA,
// u ← (1−a)u + a·u_new with a = Smoothing, where u_new is the channel's
// transmitting time between the last two snapshots over their interval.
// Each channel's cost then moves towards a target:
//
//   - the revised metric (CostCeiling > 0): hop-normalised, target =
//     h·(1 + (R−1)·clamp((u − 0.5)/0.5, 0, 1)), where h is the channel's
//     idle cost in hop-equivalents (its zero-load traversal time over the
//     network's least one, so the fastest channels cost one hop) and R =
//     CostCeiling: flat at the idle cost up to 50% utilisation, rising
//     linearly to R times it at saturation. A busy channel thus costs at
//     most R times an idle one of its type, and traffic leaves it only for
//     routes at most (R−1)·h longer;
//   - the delay metric (CostCeiling = 0): target = the M/M/1 sojourn
//     estimate plus propagation (and the sending node's processing),
//     (L/C)/(1 − min(u, 0.99)) + delay (Kleinrock, Queueing Systems Vol. 1,
//     1975), L the mean packet size measured from the snapshots
//     (transmitting time × bandwidth / packets sent), AssumedPacketBytes
//     until traffic has been seen. A saturated channel costs up to 100
//     times an idle one.
//
// With CostStep > 0 a channel's cost moves at most CostStep hop-equivalents
// (under the delay metric: CostStep times the network's least zero-load
// channel time) per update, up or down. Channels down in the snapshot are
// excluded. It then computes next hops to every destination by
// deterministic Dijkstra (lowest neighbour index among equal costs) and
// installs them ControlDelay (its parameter) later.
//
// The paper's values and where this deviates: utilisation averaged as
// u ← 0.5u + 0.5u_new (Smoothing 0.5, as the paper); a 56 kbit/s line's cost
// ranges from 30 to 90 units, so a busy line costs at most 3 times an idle
// one (CostCeiling 3); the cost is flat below 50% utilisation; a line's
// reported cost moves at most about half a hop per update (CostStep 0.5,
// from memory). The paper derives utilisation from measured delay through
// M/M/1 and updates about every 10 s; here utilisation is measured directly
// and Every defaults to 2 s. The paper also suppresses changes too small to
// be worth flooding; here every update is used. The rise from 50% to
// saturation is linear here (the paper's per-line-type tables are not
// reproduced).
//
// Hold-down: at install, the next hop of a (node, destination) pair changes
// only if its last change is at least HoldDown old; otherwise the old next
// hop stays, unless its channel is down in the snapshot, which always
// forces the change, or keeping it would close a forwarding loop with the
// other pairs' next hops, in which case the loop's nodes take the new ones.
// Each next-hop change installed is counted with
// ControlView.CountRouteChanges. Before the first table computed from
// telemetry, routes are zero-load shortest paths (u = 0).
type CentralAdaptive struct {
	p   Params
	v   *sim.ControlView
	net *sim.Net
	n   int
	pf  *pathFinder

	util      []float64
	prevBusy  []sim.Time
	prevSent  []int64
	prevTaken sim.Time
	meanBytes float64

	idle    []float64 // revised metric: idle cost per channel, hop-equivalents
	hopTime float64   // the network's least zero-load channel time, seconds
	costSet bool      // cost holds a cost computed from telemetry

	table      []int32 // installed next hops [u*n+d]
	lastChange []sim.Time
	pending    []caPending

	// scratch
	cost, dist []float64
	usable     []bool
	col        []int32
}

type caPending struct {
	next []int32
	up   []bool
}

var (
	_ sim.Central = (*CentralAdaptive)(nil)
	_ sim.Timed   = (*CentralAdaptive)(nil)
)

func newCentralAdaptive(p Params, net *sim.Net) (sim.Agent, error) {
	n := net.NumNodes()
	nc := len(net.Channels)
	a := &CentralAdaptive{p: p, net: net, n: n, pf: newPathFinder(net),
		util: make([]float64, nc), prevBusy: make([]sim.Time, nc), prevSent: make([]int64, nc),
		meanBytes: p.packetBytes(),
		table:     make([]int32, n*n), lastChange: make([]sim.Time, n*n),
		cost: make([]float64, nc), dist: make([]float64, n), usable: make([]bool, nc), col: make([]int32, n)}
	for i := range a.usable {
		a.usable[i] = true
	}
	zl := zeroLoadCosts(net, p.packetBytes())
	a.hopTime = math.Inf(1)
	for _, t := range zl {
		a.hopTime = math.Min(a.hopTime, t)
	}
	if p.CostCeiling > 0 {
		a.idle = make([]float64, nc)
		for c, t := range zl {
			a.idle[c] = t / a.hopTime
		}
	}
	a.updateCosts()
	a.computeInto(a.table)
	for i := range a.lastChange {
		a.lastChange[i] = math.MinInt64 / 2
	}
	return a, nil
}

// Name returns the agent's label.
func (a *CentralAdaptive) Name() string { return a.p.Canonical() }

// Start arranges the first snapshot request.
func (a *CentralAdaptive) Start(v *sim.ControlView) {
	a.v = v
	v.After(a.p.Every, tagTick)
}

// Route returns the installed next hop of node towards p.Dst. Cost: O(1).
func (a *CentralAdaptive) Route(node int, p *sim.Packet) int {
	return int(a.table[node*a.n+p.Dst])
}

// Timer requests snapshots and installs tables.
func (a *CentralAdaptive) Timer(tag int) {
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
		a.install(pd)
	}
}

// Telemetry turns a snapshot into a new table, to be installed ControlDelay
// later.
func (a *CentralAdaptive) Telemetry(s *sim.Snapshot) {
	dt := float64(s.Taken - a.prevTaken)
	var bits, pkts float64
	for c := range a.util {
		ch := &a.net.Channels[c]
		db := s.Busy[c] - a.prevBusy[c]
		if dt > 0 {
			u := float64(db) / dt
			a.util[c] = (1-a.p.Smoothing)*a.util[c] + a.p.Smoothing*u
		}
		bits += float64(db) * 1e-9 * ch.Bandwidth
		pkts += float64(s.Sent[c] - a.prevSent[c])
		a.prevBusy[c], a.prevSent[c] = s.Busy[c], s.Sent[c]
		a.usable[c] = s.Up[c] && s.NodeUp[ch.From] && s.NodeUp[ch.To]
	}
	a.prevTaken = s.Taken
	if pkts > 0 {
		a.meanBytes = bits / 8 / pkts
	}
	a.updateCosts()
	next := make([]int32, a.n*a.n)
	a.computeInto(next)
	a.pending = append(a.pending, caPending{next: next, up: append([]bool(nil), a.usable...)})
	a.v.After(a.p.ControlDelay, tagInstall)
}

// revisedKnee is the utilisation below which the revised metric stays at
// the idle cost (Khanna & Zinky 1989).
const revisedKnee = 0.5

// updateCosts moves every channel's cost towards its target for the current
// utilisation, by at most the step limit once costs have been set.
func (a *CentralAdaptive) updateCosts() {
	step := a.p.CostStep
	if a.p.CostCeiling == 0 {
		step *= a.hopTime
	}
	for c := range a.cost {
		var target float64
		if a.p.CostCeiling > 0 {
			x := math.Min(math.Max((a.util[c]-revisedKnee)/(1-revisedKnee), 0), 1)
			target = a.idle[c] * (1 + (a.p.CostCeiling-1)*x)
		} else {
			ch := &a.net.Channels[c]
			tx := a.meanBytes * 8 / ch.Bandwidth
			target = a.net.Graph.Nodes[ch.From].Processing.Seconds() + tx/(1-math.Min(a.util[c], maxModelUtil)) + ch.Delay.Seconds()
		}
		if step > 0 && a.costSet {
			target = math.Min(math.Max(target, a.cost[c]-step), a.cost[c]+step)
		}
		a.cost[c] = target
	}
	a.costSet = true
}

// computeInto fills next with next hops for the current costs and usable
// channels.
func (a *CentralAdaptive) computeInto(next []int32) {
	for d := 0; d < a.n; d++ {
		a.pf.distTo(d, a.cost, a.usable, a.dist)
		nextHopsTo(a.net, d, a.cost, a.usable, a.dist, a.col)
		for u := 0; u < a.n; u++ {
			next[u*a.n+d] = a.col[u]
		}
	}
}

// install applies a computed table under the hold-down rule. Keeping some
// old next hops beside new ones can close a forwarding loop; wherever the
// mixed table loops, the nodes on the loop take their new next hops (the new
// table alone is a shortest-path forest, so this ends loop-free).
func (a *CentralAdaptive) install(pd caPending) {
	now := a.v.Now()
	changes := 0
	n := a.n
	mixed := a.col
	state := make([]uint8, n) // 0 unvisited, 1 on the current walk, 2 settled
	for d := 0; d < n; d++ {
		for u := 0; u < n; u++ {
			i := u*n + d
			old, nw := a.table[i], pd.next[i]
			mixed[u] = nw
			if nw != old && old != sim.NoRoute && pd.up[old] && now-a.lastChange[i] < a.p.HoldDown {
				mixed[u] = old
			}
		}
		for {
			clear(state)
			looped := false
			for s := 0; s < n; s++ {
				u := s
				for u != d && state[u] == 0 && mixed[u] != sim.NoRoute {
					state[u] = 1
					u = a.net.Channels[mixed[u]].To
				}
				if u != d && state[u] == 1 { // closed a loop: release it
					for v := u; ; {
						next := a.net.Channels[mixed[v]].To
						mixed[v] = pd.next[v*n+d]
						looped = true
						if v = next; v == u {
							break
						}
					}
					break // walks marked before the release are stale: start over
				}
				for v := s; v != u && state[v] == 1; v = a.net.Channels[mixed[v]].To {
					state[v] = 2
					if mixed[v] == sim.NoRoute {
						break
					}
				}
				if state[u] == 1 {
					state[u] = 2
				}
			}
			if !looped {
				break
			}
		}
		for u := 0; u < n; u++ {
			i := u*n + d
			if mixed[u] != a.table[i] {
				a.table[i] = mixed[u]
				a.lastChange[i] = now
				changes++
			}
		}
	}
	if changes > 0 {
		a.v.CountRouteChanges(changes)
	}
}
