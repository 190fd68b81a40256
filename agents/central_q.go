package agents

import (
	"fmt"
	"math"
	"math/rand/v2"

	"hoplore/sim"
)

// CentralQKind is the kind of CentralQ in experiment files.
const CentralQKind = "central-q"

func init() {
	Register(Kind{
		Name:    CentralQKind,
		Order:   30,
		Central: true,
		Fields: []Field{
			everyField(2 * sim.Second),
			controlDelayField(50 * sim.Millisecond),
			NewField("k", func(p *Params) *int { return &p.K }, 3, func(k int) error {
				if k < 1 || k > 16 {
					return fmt.Errorf("must be in 1..16, got %d", k)
				}
				return nil
			}),
			learningRateField(0.3),
			NewField("discount", func(p *Params) *float64 { return &p.Discount }, 0.5, inUnitClosedOpen),
			exploreField(0.05),
			NewField("drop_penalty", func(p *Params) *sim.Time { return &p.DropPenalty }, 1*sim.Second, nonNegativeTime),
			objectiveField(ObjectiveDelay, true, ObjectiveDelay, ObjectiveLoss, ObjectiveUtilisation),
		},
		New: newCentralQ,
		Cost: func(p *Params, r RunSize) Cost {
			b := centralBytes(p, r)
			if p.Pin == PinFlow && p.Objective.Name != ObjectiveUtilisation {
				// the flow size classes' Q-tables, as many rows as the pairs' own,
				// each entry with its ended flows' reward sum, count and index
				N := float64(r.Nodes)
				b += float64(sim.NumFlowClasses) * N * N * float64(max(p.K, 1)) * 8 * (8 + 8 + 4 + 4)
			}
			return Cost{Events: centralEvents(p, r), Bytes: b}
		},
	})
}

// Objectives of central-q: what its reward measures.
const (
	// ObjectiveDelay: r = −(mean delivery time in seconds + DropPenalty ×
	// drop fraction); a drop costs DropPenalty seconds of delivery time.
	ObjectiveDelay = "delay"
	// ObjectiveLoss: r = −(drop fraction), a probability in [0, 1].
	ObjectiveLoss = "loss"
	// ObjectiveUtilisation: r = −(largest utilisation over the chosen
	// path's channels in the interval), a fraction in [0, 1] (more when a
	// channel carried control traffic too).
	ObjectiveUtilisation = "utilisation"
)

// Utilisation bucket edges of central-q's state; a candidate with a channel
// down gets the extra bucket cqBuckets. Chosen so that the buckets separate
// idle, loaded, nearly saturated and saturated paths (common practice for a
// coarse load level).
var cqEdges = [...]float64{0.5, 0.8, 0.95}

const cqBuckets = len(cqEdges) + 2 // levels below each edge, above the last, and down

// CentralQ is one centralised tabular Q-learner that chooses, for every
// source–destination pair with traffic, one of the pair's K shortest loopless
// paths (Yen 1971, on zero-load channel times; ties ordered by node
// sequence) and installs it as a source route.
//
// Every Every it requests a snapshot. When it arrives (ControlDelay old) the
// controller measures each channel's utilisation over the interval since the
// previous snapshot. For each pair:
//
//   - state: the tuple of the K candidates' bottleneck utilisations (largest
//     over the path's channels), each bucketed at 0.5, 0.8 and 0.95, with a
//     fifth bucket for a candidate with a channel down;
//   - reward of the last interval, by Objective: delay (default) r =
//     −(mean delivery time in seconds + DropPenalty × drop fraction); loss
//     r = −drop fraction; utilisation r = −(bottleneck utilisation of the
//     path chosen for the interval); mix r = −(w_delay·mean delivery time
//     ÷ the pair's zero-load path time + w_loss·drop fraction +
//     w_util·bottleneck utilisation), see Mix (drop_penalty does not
//     enter it); from the pair's delivered, delay-sum
//     and dropped counters and the channels' busy time (differences
//     between snapshots); pairs with no packets in the interval are not
//     updated;
//   - update: Q(s,a) += learning_rate·(r + discount·max_a' Q(s',a') − Q(s,a))
//     for the previous state and action (Watkins 1989), the max over
//     candidates that are up;
//   - choice: ε-greedy (Explore) among candidates that are up, ties to the
//     shorter candidate.
//
// Q rows are created when a state is first seen, at −(zero-load path
// time)/(1 − discount) (mix: −w_delay·(zero-load path time ÷ the
// shortest candidate's)/(1 − discount); loss, utilisation: 0), so the shortest candidate is preferred until
// measurements say otherwise. Choices take effect ControlDelay (its
// parameter) later: a packet is given its pair's path at its source
// (p.Route, shared and never modified) and follows it; where the path's next
// channel is down in the installed snapshot, and for pairs without a choice
// yet, it falls back to zero-load shortest paths over the channels up in the
// installed snapshot. Each pair whose chosen path changes counts one route
// change (the next hop changes at the source); with flow learning (below),
// each pair's and each size class's.
//
// Under pin: flow (Params.Pin PinFlow) a flow of flow traffic keeps the
// path it started on, so the natural reward of that choice is the flow's
// own outcome (sim.FlowWatcher), and per-interval rewards would credit the
// flow's packets to whatever choice is installed while they travel. With
// objective delay, loss or mix the controller then learns flows apart:
//
//   - one more Q-learner per pair and flow size class (mice, medium,
//     elephant: the sender declares a flow's size at its start,
//     sim.ControlView.Flow), over the same states and candidates, its rows
//     created at slowdown 1 on every candidate (Q = 0, as ln 1 = 0; loss
//     0), ties going to the shorter candidate; each interval it chooses a
//     candidate for the flows of its class that start until the next
//     install;
//   - a flow follows the candidate installed for its pair and class when
//     its first packet left (every packet of it is given that path);
//   - a flow's reward, by objective: delay r = −ln(slowdown) (completion
//     time over the idle-network time, sim.FlowEnd.Slowdown, taken as at
//     least 1), a failed flow −ln(DropPenalty ÷ the pair's zero-load path
//     time) (the shortest candidate's: a drop costs DropPenalty of
//     delivery time, in units of that time); loss r = −1 for a failed
//     flow, 0 for a completed one; mix r = −(w_delay·ln(slowdown) +
//     w_loss·[failed] + w_util·bottleneck utilisation of the flow's path
//     in the last interval), the delay term left out for a failed flow;
//   - at each snapshot, every state s and candidate a on which flows that
//     ended since the previous one had started is updated once, with their
//     mean reward r̄, bootstrapped on the pair's new state:
//     Q(s,a) += learning_rate·(r̄ + discount·max_a' Q(s_now,a') − Q(s,a));
//   - the per-interval reward of the pair's first learner counts only the
//     packets outside flows (Snapshot.PairFlow* taken off the pair's
//     counters); pairs without packet traffic leave it untouched.
//
// Both choices bound what a few flows do to a table. Slowdown is
// heavy-tailed: a 3 kB flow queued behind a 1.5 MB one at a 10 Mbit/s
// channel scores a slowdown in the hundreds, and the flows of one interval share one choice
// and one queue, so one elephant delays several mice at once. With the
// slowdown itself as reward and one update per flow, such an interval makes
// a class's table shun a path for the many flows after it, until
// exploration (ε per interval) brings enough good outcomes back; the
// logarithm (the tables then rank paths by the mean log slowdown, the log
// of the geometric mean) keeps the usual slowdowns in order (ln 1 = 0 <
// ln 5.4 ≈ 1.7) while a slowdown of 134 weighs ln 134 ≈ 4.9, and the mean per
// interval makes the table learn at the pace of the per-interval learner.
// In the package's flow-outcome test (two paths, mice and elephants, 12
// seeds), the mice keep the short path, best for them once the elephants
// left it, in 0.968 of their flows (0.459 with −slowdown per flow, 0.926
// with −ln slowdown per flow) at a mean slowdown of 2.02 (3.94; 2.15).
//
// Objective utilisation measures channels, not flows: under pin: flow it
// keeps the per-interval reward over all packets and one learner per
// pair, a flow following the choice installed at its start.
type CentralQ struct {
	p   Params
	v   *sim.ControlView
	net *sim.Net
	n   int
	k   int
	pf  *pathFinder
	zl  []float64

	util      []float64
	prevBusy  []sim.Time
	prevTaken sim.Time

	pairs []*cqPair // [s*n+d], nil until the pair has traffic
	// nl is the number of learners per pair: 1, or 1 + sim.NumFlowClasses
	// when flows learn from their outcomes (flowLearn)
	nl        int
	flowLearn bool
	flows     []cqFlow // by flow slot (sim.Packet.FlowSlot), with flowLearn

	// installed
	choice []int8  // [(s*n+d)*nl + k] candidate index of learner k, -1 = shortest-path fallback
	rows   []int32 // [(s*n+d)*nl + k] the state row each installed choice was made in
	up     []bool  // per channel, from the installed snapshot
	spNext []int32 // fallback next hops [u*n+d]

	pending []cqPending

	// scratch
	usable []bool
	dist   []float64
	col    []int32
}

type cqPair struct {
	cands  []path
	states map[uint64]int32 // state key -> row
	// ls[0] learns from the packets outside flows (from all packets without
	// flowLearn), ls[1+c] from the flows of size class c
	ls      []cqLearner
	del     int64
	delay   float64
	dropped int64
}

// cqLearner is one Q-table over a pair's states and candidates.
type cqLearner struct {
	q []float64 // rows × len(cands)
	// flow learners: the rewards of the flows ended since the last
	// snapshot, summed and counted per entry of q, and the entries with
	// any (in the order of their first)
	acc    []float64
	cnt    []int32
	ended  []int32
	row    int32 // last state's row, -1 before the first decision
	action int8
}

// cqFlow is the choice a flow in progress started on.
type cqFlow struct {
	pair int32
	k    int8 // learner
	act  int8 // candidate, -1: none (the shortest-path fallback)
	row  int32
}

type cqPending struct {
	choice []int8
	rows   []int32
	up     []bool
	spNext []int32
}

var (
	_ sim.Central     = (*CentralQ)(nil)
	_ sim.Timed       = (*CentralQ)(nil)
	_ sim.FlowWatcher = (*CentralQ)(nil)
)

func newCentralQ(p Params, net *sim.Net) (sim.Agent, error) {
	n := net.NumNodes()
	nc := len(net.Channels)
	a := &CentralQ{p: p, net: net, n: n, k: p.K, pf: newPathFinder(net), zl: zeroLoadCosts(net, p.packetBytes()),
		util: make([]float64, nc), prevBusy: make([]sim.Time, nc), pairs: make([]*cqPair, n*n), nl: 1,
		up: make([]bool, nc), usable: make([]bool, nc), dist: make([]float64, n), col: make([]int32, n)}
	if p.Pin == PinFlow && p.Objective.Name != ObjectiveUtilisation {
		a.flowLearn, a.nl = true, 1+int(sim.NumFlowClasses)
	}
	a.choice, a.rows = make([]int8, n*n*a.nl), make([]int32, n*n*a.nl)
	for i := range a.choice {
		a.choice[i] = -1
	}
	for i := range a.up {
		a.up[i] = true
	}
	a.spNext = a.fallback(a.up)
	return a, nil
}

// Name returns the agent's label.
func (a *CentralQ) Name() string { return a.p.Canonical() }

// Start arranges the first snapshot request.
func (a *CentralQ) Start(v *sim.ControlView) {
	a.v = v
	v.After(a.p.Every, tagTick)
}

// fallback computes zero-load shortest-path next hops over usable channels.
func (a *CentralQ) fallback(usable []bool) []int32 {
	next := make([]int32, a.n*a.n)
	for d := 0; d < a.n; d++ {
		a.pf.distTo(d, a.zl, usable, a.dist)
		nextHopsTo(a.net, d, a.zl, usable, a.dist, a.col)
		for u := 0; u < a.n; u++ {
			next[u*a.n+d] = a.col[u]
		}
	}
	return next
}

// Route follows the packet's source route, set at its source from the
// installed choice (a flow's packets, with flowLearn: from the choice its
// first packet found). Cost: O(1), no allocation but when the flows in
// progress reach a new peak.
func (a *CentralQ) Route(node int, p *sim.Packet) int {
	if node == p.Src && p.Hops == 0 {
		i := node*a.n + p.Dst
		if slot := p.FlowSlot(); a.flowLearn && slot >= 0 {
			a.flowRoute(i, slot, p)
		} else if ch := a.choice[i*a.nl]; ch >= 0 {
			p.Route = a.pairs[i].cands[ch].chans
			p.RouteStep = 0
		}
	}
	if p.Route != nil {
		if p.RouteStep < len(p.Route) {
			c := p.Route[p.RouteStep]
			if a.net.Channels[c].From == node && a.up[c] {
				p.RouteStep++
				return c
			}
		}
		p.Route = nil // off the path or blocked: shortest path from here on
	}
	return int(a.spNext[node*a.n+p.Dst])
}

// flowRoute gives packet p of the flow in slot, of pair i, its path at the
// source: the first packet records the choice installed for the pair and
// the flow's size class, the others follow it.
func (a *CentralQ) flowRoute(i, slot int, p *sim.Packet) {
	if p.Seq == 0 {
		for slot >= len(a.flows) {
			a.flows = append(a.flows, cqFlow{act: -1})
		}
		_, class, _ := a.v.Flow(p)
		k := 1 + int(class)
		a.flows[slot] = cqFlow{pair: int32(i), k: int8(k), act: a.choice[i*a.nl+k], row: a.rows[i*a.nl+k]}
	}
	if f := &a.flows[slot]; f.act >= 0 {
		p.Route = a.pairs[i].cands[f.act].chans
		p.RouteStep = 0
	}
}

// FlowEnded adds a flow's reward to the outcomes of the state and
// candidate it started on, learnt from at the next snapshot (see CentralQ);
// without flowLearn it does nothing.
func (a *CentralQ) FlowEnded(f *sim.FlowEnd) {
	if !a.flowLearn || f.Slot >= len(a.flows) {
		return
	}
	fl := &a.flows[f.Slot]
	if fl.act < 0 {
		return
	}
	pr := a.pairs[fl.pair]
	l := &pr.ls[fl.k]
	qi := int(fl.row)*len(pr.cands) + int(fl.act)
	if l.cnt[qi] == 0 {
		l.ended = append(l.ended, int32(qi))
	}
	l.acc[qi] += a.flowReward(pr, fl.act, f)
	l.cnt[qi]++
	fl.act = -1
}

// flowReward returns the reward of flow f, started on candidate act of
// pair pr, by objective (see CentralQ).
func (a *CentralQ) flowReward(pr *cqPair, act int8, f *sim.FlowEnd) float64 {
	failed := f.Outcome != sim.FlowCompleted
	slowdown := func() float64 {
		sd := f.Slowdown()
		if math.IsNaN(sd) {
			sd = f.FCT() / pr.cands[0].cost // no idle-network time: the zero-load path time instead
		}
		return logSlowdown(sd)
	}
	switch a.p.Objective.Name {
	case ObjectiveLoss:
		if failed {
			return -1
		}
		return 0
	case ObjectiveMix:
		w := a.p.Objective.Mix
		r := 0.0
		switch {
		case failed:
			r -= w.Loss
		case w.Delay > 0:
			r -= w.Delay * slowdown()
		}
		if w.Utilisation > 0 {
			r -= w.Utilisation * a.bottleneck(pr.cands[act])
		}
		return r
	}
	if failed {
		return -logSlowdown(a.p.DropPenalty.Seconds() / pr.cands[0].cost)
	}
	return -slowdown()
}

// logSlowdown returns ln(sd), sd taken as at least 1 (a flow on one path
// seldom beats its idle-network time; the reward stays ≤ 0): the flow
// learners' delay measure (see CentralQ).
func logSlowdown(sd float64) float64 {
	return math.Log(math.Max(sd, 1))
}

// bottleneck returns the largest utilisation of p's channels in the last
// interval.
func (a *CentralQ) bottleneck(p path) float64 {
	u := 0.0
	for _, c := range p.chans {
		u = math.Max(u, a.util[c])
	}
	return u
}

// Timer requests snapshots and installs choices.
func (a *CentralQ) Timer(tag int) {
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
		changes := 0
		for i, c := range pd.choice {
			if c != a.choice[i] {
				changes++
			}
		}
		a.choice, a.rows, a.up, a.spNext = pd.choice, pd.rows, pd.up, pd.spNext
		if changes > 0 {
			a.v.CountRouteChanges(changes)
		}
	}
}

// mixReward returns the mix objective's reward of a pair's last interval:
// −(w_delay·mean delivery time ÷ the pair's zero-load path time (its
// shortest candidate's) + w_loss·drop fraction + w_util·bottleneck
// utilisation of the chosen path); the delay term is left out when nothing
// was delivered (the loss term then carries the interval).
func (a *CentralQ) mixReward(pr *cqPair, action int8, del, drop int64, delay float64) float64 {
	w := a.p.Objective.Mix
	r := -w.Loss * float64(drop) / float64(del+drop)
	if del > 0 && w.Delay > 0 {
		r -= w.Delay * delay / float64(del) / pr.cands[0].cost
	}
	if w.Utilisation > 0 {
		r -= w.Utilisation * a.bottleneck(pr.cands[action])
	}
	return r
}

// bucket returns the utilisation level of u.
func bucket(u float64) int {
	for i, e := range cqEdges {
		if u < e {
			return i
		}
	}
	return len(cqEdges)
}

// state returns the state key of pair pr and which candidates are usable.
func (a *CentralQ) state(pr *cqPair, ok []bool) uint64 {
	var key uint64
	for i := len(pr.cands) - 1; i >= 0; i-- {
		b := 0
		bott := 0.0
		ok[i] = true
		for _, c := range pr.cands[i].chans {
			if !a.usable[c] {
				ok[i] = false
				break
			}
			bott = math.Max(bott, a.util[c])
		}
		if ok[i] {
			b = bucket(bott)
		} else {
			b = cqBuckets - 1
		}
		key = key*uint64(cqBuckets) + uint64(b)
	}
	return key
}

// rowOf returns the Q row of state key, creating it at the zero-load prior
// in every learner of the pair.
func (a *CentralQ) rowOf(pr *cqPair, key uint64) int32 {
	if r, ok := pr.states[key]; ok {
		return r
	}
	r := int32(len(pr.states))
	pr.states[key] = r
	for k := range pr.ls {
		l := &pr.ls[k]
		for _, c := range pr.cands {
			if k > 0 {
				// flows: slowdown 1 on every candidate (ln 1 = 0; loss:
				// none), ties to the shorter
				l.q = append(l.q, 0)
				l.acc = append(l.acc, 0)
				l.cnt = append(l.cnt, 0)
				continue
			}
			if a.p.Objective.Name == ObjectiveMix {
				// the delay term's zero-load prior; none on loss or utilisation
				l.q = append(l.q, -a.p.Objective.Mix.Delay*c.cost/pr.cands[0].cost/(1-a.p.Discount))
				continue
			}
			if a.p.Objective.Name == ObjectiveLoss || a.p.Objective.Name == ObjectiveUtilisation {
				// no prior on loss or utilisation: ties go to the shorter candidate
				l.q = append(l.q, 0)
				continue
			}
			l.q = append(l.q, -c.cost/(1-a.p.Discount))
		}
	}
	return r
}

// Telemetry learns from the last interval and decides the next choices.
func (a *CentralQ) Telemetry(s *sim.Snapshot) {
	dt := float64(s.Taken - a.prevTaken)
	for c := range a.util {
		ch := &a.net.Channels[c]
		if dt > 0 {
			a.util[c] = float64(s.Busy[c]-a.prevBusy[c]) / dt
		}
		a.prevBusy[c] = s.Busy[c]
		a.usable[c] = s.Up[c] && s.NodeUp[ch.From] && s.NodeUp[ch.To]
	}
	a.prevTaken = s.Taken
	choice := append([]int8(nil), a.choice...)
	rows := append([]int32(nil), a.rows...)
	ok := make([]bool, a.k)
	rng := a.v.Rand()
	for i := range a.pairs {
		src, dst := i/a.n, i%a.n
		if src == dst {
			continue
		}
		del, delay, drop := s.PairDelivered[i], s.PairDelay[i], s.PairDropped[i]
		pr := a.pairs[i]
		if pr == nil {
			if del == 0 && drop == 0 {
				continue
			}
			cands := a.pf.kShortest(src, dst, a.k, a.zl)
			if len(cands) == 0 {
				continue
			}
			pr = &cqPair{cands: cands, states: map[uint64]int32{}, ls: make([]cqLearner, a.nl)}
			for k := range pr.ls {
				pr.ls[k].row = -1
			}
			a.pairs[i] = pr
		}
		if a.flowLearn && s.PairFlowDelivered != nil {
			// flows learn from their outcomes: the interval's are the other packets'
			del, delay, drop = del-s.PairFlowDelivered[i], delay-s.PairFlowDelay[i], drop-s.PairFlowDropped[i]
		}
		dDel, dDelay, dDrop := del-pr.del, delay-pr.delay, drop-pr.dropped
		pr.del, pr.delay, pr.dropped = del, delay, drop
		key := a.state(pr, ok[:len(pr.cands)])
		row := a.rowOf(pr, key)
		nc := len(pr.cands)
		for k := range pr.ls {
			l := &pr.ls[k]
			if k > 0 && len(l.ended) > 0 {
				// the flows that ended: one update per state and candidate they
				// started on, with their mean reward
				best := bestUp(l.q[int(row)*nc:int(row+1)*nc], ok)
				for _, qi := range l.ended {
					r := l.acc[qi] / float64(l.cnt[qi])
					l.q[qi] += a.p.LearningRate * (r + a.p.Discount*best - l.q[qi])
					l.acc[qi], l.cnt[qi] = 0, 0
				}
				l.ended = l.ended[:0]
			}
			if k == 0 && l.row >= 0 && dDel+dDrop > 0 {
				r := 0.0
				switch a.p.Objective.Name {
				case ObjectiveMix:
					r = a.mixReward(pr, l.action, dDel, dDrop, dDelay)
				case ObjectiveLoss:
					r = -float64(dDrop) / float64(dDel+dDrop)
				case ObjectiveUtilisation:
					r = -a.bottleneck(pr.cands[l.action])
				default:
					if dDel > 0 {
						r -= dDelay / float64(dDel)
					}
					r -= a.p.DropPenalty.Seconds() * float64(dDrop) / float64(dDel+dDrop)
				}
				best := bestUp(l.q[int(row)*nc:int(row+1)*nc], ok)
				qi := int(l.row)*nc + int(l.action)
				l.q[qi] += a.p.LearningRate * (r + a.p.Discount*best - l.q[qi])
			}
			act := a.choose(l, row, ok[:nc], rng)
			ci := i*a.nl + k
			if act < 0 {
				choice[ci] = -1
				l.row = -1
				continue
			}
			choice[ci], rows[ci] = int8(act), row
			l.row, l.action = row, int8(act)
		}
	}
	up := append([]bool(nil), a.usable...)
	a.pending = append(a.pending, cqPending{choice: choice, rows: rows, up: up, spNext: a.fallback(up)})
	a.v.After(a.p.ControlDelay, tagInstall)
}

// choose returns learner l's candidate in state row: ε-greedy (Explore)
// among the usable ones (ok), ties to the shorter candidate; −1 when none
// is usable.
func (a *CentralQ) choose(l *cqLearner, row int32, ok []bool, rng *rand.Rand) int {
	nc := len(ok)
	act := -1
	if a.p.Explore > 0 && rng.Float64() < a.p.Explore {
		n := 0
		for j := 0; j < nc; j++ {
			if ok[j] {
				n++
			}
		}
		if n > 0 {
			x := rng.IntN(n)
			for j := 0; j < nc; j++ {
				if ok[j] {
					if x == 0 {
						act = j
						break
					}
					x--
				}
			}
		}
		return act
	}
	for j := 0; j < nc; j++ {
		if ok[j] && (act < 0 || l.q[int(row)*nc+j] > l.q[int(row)*nc+act]) {
			act = j
		}
	}
	return act
}

// bestUp returns the largest of the Q values q of a state's candidates
// that are up (ok), 0 when none is: the max_a' Q(s',a') of the update.
func bestUp(q []float64, ok []bool) float64 {
	best := math.Inf(-1)
	for j, v := range q {
		if ok[j] && v > best {
			best = v
		}
	}
	if math.IsInf(best, -1) {
		return 0
	}
	return best
}
