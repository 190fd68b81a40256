package agents

import (
	"fmt"
	"math"

	"hoplore/sim"
)

// Q-routing variants.
const (
	variantPlain = iota
	variantPredictive
	variantDual
	variantConfidence
)

// Constants of the Q-routing variants.
const (
	// FeedbackBytes is the size on the wire of one in-band feedback message
	// (feedback: in-band): a small control header carrying a destination
	// and two values (common practice for a minimal control packet).
	FeedbackBytes = 64
	// predictiveBeta and predictiveGamma are the recovery-rate learning and
	// decay factors of predictive Q-routing (Choi & Yeung 1996, β = 0.7,
	// γ = 0.9).
	predictiveBeta  = 0.7
	predictiveGamma = 0.9
	// confidenceDecay is the factor by which an estimate's confidence
	// decays each time another estimate for the same destination at the
	// same node is updated (Kumar & Miikkulainen 1998 decay non-updated
	// confidences; the factor 0.95 is from memory).
	confidenceDecay = 0.95
)

// QRoutingKind is the kind of QRouting in experiment files.
const QRoutingKind = "q-routing"

func init() {
	Register(Kind{
		Name:  QRoutingKind,
		Order: 40,
		Fields: []Field{
			NewField("variant", func(p *Params) *string { return &p.Variant }, "plain", oneOf("variant", "plain", "predictive", "dual", "confidence")),
			NewField("feedback", func(p *Params) *string { return &p.Feedback }, "instant", oneOf("feedback", "instant", "in-band")),
			learningRateField(0.5),
			exploreField(0),
			consensusField(true),
			giveUpField(),
			learningField(),
			startFromField(),
			NewField("install_every", func(p *Params) *sim.Time { return &p.InstallEvery }, 0, nonNegativeTime),
			objectiveField(ObjectiveDelay, true, ObjectiveDelay, ObjectiveLoss, ObjectiveUtilisation),
		},
		Check: checkQRoutingObjective,
		New:   newQRouting,
		Cost: func(p *Params, r RunSize) Cost {
			c := Cost{Events: consensusEvents(p, r)}
			if p.Feedback == "in-band" {
				// one feedback message back over every hop of every packet
				c.Events += r.Packets * r.Seconds * r.MeanHops * eventsPerHop
			}
			// Q plus the variants' extra tables, per channel and destination
			c.Bytes = 2 * float64(r.Channels) * float64(r.Nodes) * 8 * 5
			return c
		},
	})
}

// checkQRoutingObjective rejects what a loss estimate cannot be combined
// with: the parts of q-routing whose values are times.
func checkQRoutingObjective(p *Params) error {
	if p.Objective.Name == ObjectiveDelay {
		return nil
	}
	switch {
	case p.Variant == "dual" || p.Variant == "confidence":
		if p.Objective.Name == ObjectiveMix {
			return perr("variant", "%s has no mix objective (use plain)", p.Variant)
		}
		return perr("variant", "%s has no %s objective (use plain or predictive)", p.Variant, p.Objective.Name)
	case p.Variant == "predictive" && p.Objective.Name == ObjectiveMix:
		return perr("variant", "predictive has no mix objective (use plain)")
	case p.Variant == "predictive" && p.Objective.Name == ObjectiveUtilisation:
		return perr("variant", "predictive has no utilisation objective (use plain): its recovery rate, learned from a noisy utilisation average, lets estimates fall to their best-ever 0")
	case p.GiveUpAfter > 0:
		return perr("give_up_after", "is a delivery time and applies to objective delay only")
	case p.Consensus != nil:
		return perr("consensus", "blends delivery times and applies to objective delay only")
	case p.StartFrom != nil:
		return perr("start_from", "loads delivery-time tables and applies to objective delay only")
	}
	return nil
}

// QRouting is per-node tabular Q-routing (Boyan & Littman, "Packet routing in
// dynamically changing networks: a reinforcement learning approach", NIPS 6,
// 1994) with the variants predictive (Choi & Yeung, NIPS 8, 1996), dual
// (Kumar & Miikkulainen 1997) and confidence (Kumar & Miikkulainen 1998),
// and optional neighbour consensus.
//
// Node x keeps Q_x(d,y), its estimate in seconds of the delivery time of a
// packet for d sent now into its channel towards neighbour y, including the
// wait in that channel's queue. Tables are dense: one row per destination,
// one column per outgoing channel in Net.Out order. They start at zero-load
// times: the transmission time of an AssumedPacketBytes packet plus
// propagation (plus processing) on the channel, plus the least such cost
// from y to d over the static topology.
//
// Decision: argmin over channels the node believes up (NodeView.Up) of
// Q_x(d,·), lowest Out index on ties; with probability Explore a uniformly
// random usable channel instead. Route changes are counted on the greedy
// decisions (see prefs).
//
// Update: when y receives the packet from x it returns
// t = V_y(d) = min_z Q_y(d,z) over its usable channels, plus y's processing
// delay (0 when y = d), and q+s, the packet's wait in x's queue and its
// transmission time. x adds the channel's propagation delay δ and updates
// Q_x(d,y) += η(q + s + δ + t − Q_x(d,y)). Feedback "instant" delivers this
// out of band (NodeView.Tell); "in-band" sends it as a FeedbackBytes control
// packet that queues with data and is lost on failed links.
//
// Deviations and choices, by variant:
//   - predictive: tables B (best), R (recovery rate, ≤ 0) and U (last update
//     time) as Choi & Yeung; after the update with ΔQ = target − Q_old:
//     B = min(B,Q); if ΔQ < 0, R += β·ΔQ/(now − U); if ΔQ > 0, R = γ·R;
//     U = now; decisions use Q' = max(Q + (now − U)·R, B). The queue term
//     is the wait in x's own output queue, as Boyan & Littman, because here
//     every channel has its own queue (Choi & Yeung's nodes have one queue
//     each, so they use the queue at y). α is learning_rate.
//   - dual: each hop x also writes V_x(src) into p.Aux[0]; the next node y
//     updates its backward estimate Q_y(src,x) += η(V_x(src) + w + s' + δ −
//     Q_y(src,x)), where w is y's own current backlog towards x divided by
//     the bandwidth and s' the packet's transmission time on that channel.
//   - confidence: each entry has a confidence C in [0,1] (1 for the channel
//     to the destination itself, 0 elsewhere at start). y reports
//     C_est, the confidence of its best entry (1 when y = d). x uses the
//     rate η = max(C_est, 1 − C_old) in place of learning_rate, and sets
//     C += η(C_est − C). Every other entry of the same destination row
//     decays by confidenceDecay at each update of that row (lazily).
//
// Objective (objective: delay, the default, is all of the above):
//   - delay: Q is a delivery time in seconds. A drop does not enter it: a
//     packet lost after x chose y brings x no feedback, so the estimate
//     learns only from the packets that reach y (as Boyan & Littman).
//     Heavy loss on a short path therefore does not move traffic away
//     from it; a full queue does only through the wait it causes.
//   - loss: Q_x(d,y) is the probability that a packet for d sent now into
//     the channel towards y is lost before delivery, in [0, 1]. x samples
//     the outcome of each packet it sends: a drop on its own channel (a
//     full output queue or a loss on the link, reported to x alone by
//     sim.Dropper) gives the sample 1; an arrival at y gives y's
//     V_y(d) = min_z Q_y(d,z) (0 at y = d). Q moves towards each sample
//     (rate as the variant), so it converges to the Bellman target
//     p_xy·1 + (1 − p_xy)·V_y(d) = 1 − (1 − p_xy)(1 − V_y(d)), p_xy being
//     the drop frequency x observes on its channel: Q-learning on sampled
//     transitions (Watkins & Dayan, "Q-learning", Machine Learning 8,
//     1992) with loss as a terminal cost of 1. A packet that reaches its
//     hop limit at y (it will be dropped there) is a loss too: y then
//     returns 1, so a forwarding loop shows as loss. Tables start at 0 (1
//     for an unreachable destination). Beside them each node keeps the
//     delivery-time table of objective delay (same start, same update at
//     rate learning_rate, the feedback carrying both values) and breaks
//     exact ties of loss estimates, such as between loss-free paths, by it:
//     packets take the fastest of the least lossy routes, and around a
//     failed link the rising delivery time breaks the loops that equal loss
//     values cannot. The variants plain and predictive (whose recovery
//     machinery acts on the loss table) take this objective; dual and
//     confidence, and give_up_after, consensus and start_from, are
//     delivery-time notions and are refused with it.
//   - utilisation: Q_x(d,y) is the largest utilisation, in [0, 1], of the
//     channels a packet for d sent towards y will cross (minimax, the
//     widest-path value): on each feedback from y x moves it towards
//     max(u_xy, V_y(d)), u_xy being its own channel's utilisation (busy
//     fraction since the last sample, EWMA of time constant utilWindow;
//     sim.NodeView.Busy), and a packet expiring at y counts as 1. y's
//     V_y(d) leaves out its channel back to x (split horizon, common
//     practice in distance-vector routing): a bottleneck value does not
//     grow around a loop as a time does, so without it two neighbours
//     left with only each other after a failure would keep their old,
//     low values and bounce packets until their hop limit. Drops
//     do not enter it (use loss for that). Start, delivery-time table and
//     refusals as loss, and predictive is refused too: its recovery rate,
//     learned from the decreases of a noisy average, lets estimates fall
//     to their best-ever value 0 and reopens loops. Decisions compare
//     utilisation in classes of utilBand and take the lower delivery-time
//     estimate within a class.
//   - mix {delay: w_d, loss: w_l, utilisation: w_u} (variant plain only,
//     refusals as loss): the node learns the delivery-time table always,
//     the loss table (as objective loss) when w_l > 0 and the utilisation
//     table (as objective utilisation, with its split horizon) when
//     w_u > 0, and decides on the cost w_d·Qdelay/z_xd + w_l·Qloss +
//     w_u·Qutil, z_xd being its zero-load time to d (see Mix), exact ties
//     to the lower delivery time. Feedback from y carries the three values
//     of y's channel of least cost (a hop-limit expiry: loss and
//     utilisation 1), so each table estimates its term along the path the
//     mix takes; a drop on x's own channel is a loss sample of 1.
//
// With give_up_after B > 0 a node drops (no_route) the packets for a
// destination whose every estimate exceeds B, forwarding one every B as a
// probe (see giveUp); this is hoplore's addition, off by default.
//
// On detecting a channel down the node stops using it at once (the decision
// skips channels not Up). On detecting it up again, that column is reset to
// its zero-load values (confidence 0), so the link is retried.
type QRouting struct {
	p      Params
	shared *qrShared
	nodes  []*qrNode // for tests and inspection only; nodes do not see this

	// warm, when set (tests only), gives each node the learned state of the
	// same node of an earlier run, with times shifted back by warmShift:
	// a run that continues another under different traffic.
	warm      *QRouting
	warmShift sim.Time
	// start, when set (StartFrom), is the learned state every node starts
	// from.
	start *State
}

// qrShared is the static, read-only knowledge every node starts with.
type qrShared struct {
	p        Params
	variant  int
	inBand   bool
	n        int
	zl       []float64   // zero-load cost per channel, seconds
	dist     [][]float64 // zero-load least cost dist[u][d]
	qCap     float64     // ceiling on estimates (unreachable)
	consVals bool
	alt      bool // objective loss, utilisation or mix: loss or utilisation estimates in [0, 1], with a delivery-time table
	util     bool // objective utilisation
	mix      bool // objective mix: decisions on the weighted sum (see Mix)
	w        Mix  // the mix's weights
}

var (
	_ sim.PerNode  = (*QRouting)(nil)
	_ sim.Router   = (*qrNode)(nil)
	_ sim.Arrivals = (*qrNode)(nil)
	_ sim.Receiver = (*qrNode)(nil)
	_ sim.Dropper  = (*qrNode)(nil)
	_ sim.Detector = (*qrNode)(nil)
	_ sim.Timed    = (*qrNode)(nil)
)

func newQRouting(p Params, net *sim.Net) (sim.Agent, error) {
	s := &qrShared{p: p, n: net.NumNodes(), inBand: p.Feedback == "in-band"}
	switch p.Variant {
	case "plain":
		s.variant = variantPlain
	case "predictive":
		s.variant = variantPredictive
	case "dual":
		s.variant = variantDual
	case "confidence":
		s.variant = variantConfidence
	default:
		return nil, fmt.Errorf("agents: q-routing: unknown variant %q", p.Variant)
	}
	s.zl = zeroLoadCosts(net, p.packetBytes())
	s.dist = allPairsDist(net, s.zl)
	s.qCap = qCeiling(s.dist)
	switch p.Objective.Name {
	case ObjectiveMix:
		if s.variant != variantPlain {
			return nil, fmt.Errorf("agents: q-routing: variant %s has no objective mix", p.Variant)
		}
		if err := checkMix(p.Objective.Mix); err != nil {
			return nil, fmt.Errorf("agents: q-routing: %w", err)
		}
		s.alt, s.mix, s.w = true, true, p.Objective.Mix
	case ObjectiveDelay:
	case ObjectiveLoss, ObjectiveUtilisation:
		if s.variant == variantDual {
			return nil, fmt.Errorf("agents: q-routing: variant dual has no objective %s", p.Objective.Name)
		}
		if s.variant == variantConfidence || s.variant == variantPredictive && p.Objective.Name == ObjectiveUtilisation {
			return nil, fmt.Errorf("agents: q-routing: variant %s has no objective %s", p.Variant, p.Objective.Name)
		}
		s.alt, s.util = true, p.Objective.Name == ObjectiveUtilisation
	default:
		return nil, fmt.Errorf("agents: q-routing: unknown objective %q", p.Objective.Name)
	}
	return &QRouting{p: p, shared: s}, nil
}

// qCeiling returns the value estimates are clamped to: far above any
// plausible delivery time, so that an unreachable destination looks
// hopeless without overflowing.
func qCeiling(dist [][]float64) float64 {
	m := 0.0
	for _, row := range dist {
		for _, v := range row {
			if !math.IsInf(v, 1) && v > m {
				m = v
			}
		}
	}
	return math.Max(1000*m, 1)
}

// Name returns the agent's label.
func (a *QRouting) Name() string { return a.p.Canonical() }

// Node builds the router of the node behind v.
func (a *QRouting) Node(v *sim.NodeView) sim.Router {
	r := newQRNode(a.shared, v)
	if a.start != nil {
		if err := r.load(a.start); err != nil {
			panic(err) // StartFrom checked the state against the topology
		}
	}
	if a.warm != nil {
		r.continueFrom(a.warm.nodes[r.id], a.warmShift)
	}
	if r.fq != nil {
		// the first snapshot holds the tables the run starts from
		copy(r.fq, r.q)
		copy(r.fqd, r.qd)
		copy(r.fb, r.b)
		copy(r.fr, r.r)
		copy(r.fu, r.u)
	}
	a.nodes = append(a.nodes, r)
	return r
}

// continueFrom copies the learned tables of o, times shifted back by shift.
func (r *qrNode) continueFrom(o *qrNode, shift sim.Time) {
	copy(r.q, o.q)
	copy(r.qd, o.qd)
	copy(r.b, o.b)
	copy(r.r, o.r)
	for i := range r.u {
		r.u[i] = o.u[i] - shift
	}
	copy(r.c, o.c)
	copy(r.stamp, o.stamp)
	copy(r.rowN, o.rowN)
}

// qrNode is one node's Q-routing state. It sees the network only through v.
type qrNode struct {
	s   *qrShared
	v   *sim.NodeView
	id  int
	out []int
	deg int
	net *sim.Net

	q []float64 // [d*deg+k] seconds (objective loss: probabilities)
	// objective loss: delivery-time estimates breaking ties, seconds, and
	// the hop limit beyond which a packet counts as lost
	qd, fqd  []float64
	hopLimit int
	// objective utilisation: per channel, the EWMA utilisation and the
	// time and busy time of its last sample
	util         []float64
	utilT, utilB []sim.Time
	// objective mix: the utilisation table (nil at weight 0) and its
	// snapshot, and per destination the delay weight over this node's
	// zero-load time to it (1/s)
	qu, fqu []float64
	wz      []float64
	// predictive
	b, r []float64
	u    []sim.Time
	// confidence
	c     []float64
	stamp []uint32 // row counter value at the entry's last update
	rowN  []uint32 // updates per destination row

	proc float64 // this node's processing delay, seconds
	cons *consensusState
	pref prefs
	give *giveUp // nil unless give_up_after is set

	// with install_every: the tables forwarding uses, copied from the live
	// ones at every install, and the install's time (the predictive
	// estimate is frozen there)
	fq, fb, fr []float64
	fu         []sim.Time
	installed  sim.Time
}

// tagQInstall is q-routing's install timer.
const tagQInstall = 2

// install copies the live tables into the forwarding snapshot and counts
// the route changes it makes: per destination, the greedy choice on the new
// snapshot against the preference so far. Cost O(N·degree), no allocation.
func (r *qrNode) install() {
	copy(r.fq, r.q)
	copy(r.fqd, r.qd)
	copy(r.fqu, r.qu)
	copy(r.fb, r.b)
	copy(r.fr, r.r)
	copy(r.fu, r.u)
	r.installed = r.v.Now()
	for d := 0; d < r.s.n; d++ {
		if d == r.id {
			continue
		}
		best, bestV := -1, 0.0
		for k, c := range r.out {
			if !r.v.Up(c) {
				continue
			}
			if val := r.estimate(d*r.deg+k, 0); best < 0 || r.less(val, bestV, r.tieDelay(d, k), r.tieDelay(d, best)) {
				best, bestV = k, val
			}
		}
		r.pref.saw(r.v, d, best)
	}
}

func newQRNode(s *qrShared, v *sim.NodeView) *qrNode {
	out := v.Out()
	r := &qrNode{s: s, v: v, id: v.ID(), out: out, deg: len(out), net: v.Net()}
	r.proc = r.net.Graph.Nodes[r.id].Processing.Seconds()
	r.q = make([]float64, s.n*r.deg)
	if s.alt {
		r.qd = make([]float64, len(r.q))
		r.hopLimit = v.HopLimit()
	}
	if s.util || s.mix && s.w.Utilisation > 0 {
		r.util = make([]float64, r.deg)
		r.utilT = make([]sim.Time, r.deg)
		r.utilB = make([]sim.Time, r.deg)
	}
	if s.mix {
		if s.w.Utilisation > 0 {
			r.qu = make([]float64, len(r.q))
		}
		r.wz = make([]float64, s.n)
		for d, z := range s.dist[r.id] {
			if z == 0 || math.IsInf(z, 1) {
				z = 1 // this node, or unreachable: every channel's delay term is the same
			}
			r.wz[d] = s.w.Delay / z
		}
	}
	r.pref = newPrefs(s.n)
	r.give = newGiveUp(s.p.GiveUpAfter, s.n)
	switch s.variant {
	case variantPredictive:
		r.b = make([]float64, len(r.q))
		r.r = make([]float64, len(r.q))
		r.u = make([]sim.Time, len(r.q))
	case variantConfidence:
		r.c = make([]float64, len(r.q))
		r.stamp = make([]uint32, len(r.q))
		r.rowN = make([]uint32, s.n)
	}
	for k := range out {
		r.resetColumn(k)
	}
	if s.p.InstallEvery > 0 {
		r.fq = make([]float64, len(r.q))
		if r.qd != nil {
			r.fqd = make([]float64, len(r.qd))
		}
		copy(r.fqd, r.qd)
		if r.qu != nil {
			r.fqu = make([]float64, len(r.qu))
		}
		copy(r.fqu, r.qu)
		if r.b != nil {
			r.fb = make([]float64, len(r.b))
			r.fr = make([]float64, len(r.r))
			r.fu = make([]sim.Time, len(r.u))
		}
		copy(r.fq, r.q)
		copy(r.fb, r.b)
		copy(r.fr, r.r)
		copy(r.fu, r.u)
		v.After(s.p.InstallEvery, tagQInstall)
	}
	if s.p.Consensus != nil && !s.p.frozen() {
		r.cons = newConsensusState(s.p.Consensus)
		v.After(s.p.Consensus.Every, tagConsensus)
	}
	return r
}

// localIndex returns k with out[k] == c, or -1.
func (r *qrNode) localIndex(c int) int {
	for k, o := range r.out {
		if o == c {
			return k
		}
	}
	return -1
}

// resetColumn sets every estimate via out[k] to its zero-load value.
func (r *qrNode) resetColumn(k int) {
	c := r.out[k]
	y := r.net.Channels[c].To
	for d := 0; d < r.s.n; d++ {
		i := d*r.deg + k
		v := r.s.zl[c] + r.s.dist[y][d]
		if math.IsInf(v, 1) || v > r.s.qCap {
			v = r.s.qCap
		}
		if r.s.alt {
			r.qd[i] = v
			v = 0
			if r.qd[i] == r.s.qCap {
				v = 1
			}
			if r.qu != nil {
				r.qu[i] = v
			}
		}
		r.q[i] = v
		switch r.s.variant {
		case variantPredictive:
			r.b[i], r.r[i], r.u[i] = v, 0, r.v.Now()
		case variantConfidence:
			r.c[i] = 0
			if y == d {
				r.c[i] = 1
			}
			r.stamp[i] = r.rowN[d]
		}
	}
}

// estimate returns the value the decision compares for entry i.
// With install_every it reads the forwarding snapshot, as of the install.
func (r *qrNode) estimate(i int, now sim.Time) float64 {
	q, b, rr, u := r.q, r.b, r.r, r.u
	if r.fq != nil {
		q, b, rr, u, now = r.fq, r.fb, r.fr, r.fu, r.installed
	}
	if r.s.mix {
		if r.fq != nil {
			return r.mixCost(i, r.fq, r.fqd, r.fqu)
		}
		return r.mixCost(i, r.q, r.qd, r.qu)
	}
	if r.s.variant == variantPredictive {
		return math.Max(q[i]+(now-u[i]).Seconds()*rr[i], b[i])
	}
	return q[i]
}

// Route picks the outgoing channel for p. Cost: O(degree), no allocation.
func (r *qrNode) Route(p *sim.Packet) int {
	d := p.Dst
	base := d * r.deg
	best, bestV := -1, 0.0
	now := r.v.Now()
	if r.give != nil {
		least := math.Inf(1)
		for k, c := range r.out {
			if r.v.Up(c) {
				least = math.Min(least, r.estimate(base+k, now))
			}
		}
		if r.give.drop(d, least, now) {
			return sim.NoRoute
		}
	}
	if e := r.s.p.Explore; e > 0 && r.v.Rand().Float64() < e {
		best = r.randomUp()
	} else {
		for k, c := range r.out {
			if !r.v.Up(c) {
				continue
			}
			val := r.estimate(base+k, now)
			if best < 0 || r.less(val, bestV, r.tieDelay(d, k), r.tieDelay(d, best)) {
				best, bestV = k, val
			}
		}
		r.pref.saw(r.v, d, best)
		if r.fq != nil && best >= 0 && r.net.Channels[r.out[best]].To == p.Prev {
			best = r.detour(d, best, p.Prev)
		}
	}
	if best < 0 {
		return sim.NoRoute
	}
	if r.s.variant == variantDual {
		if p.Src == r.id {
			p.Aux[0] = 0
		} else {
			v, _ := r.value(p.Src)
			p.Aux[0] = v
		}
	}
	return r.out[best]
}

// detour returns, with install_every, the channel for a packet whose
// snapshot choice best leads straight back to node prev, where it came
// from: the best of the other usable channels on the snapshot, best itself
// if there is none. A detour is per packet, not a route change. Without it
// a failure makes packets bounce: the node next to the failed link decides
// around it and sends them back to a neighbour whose snapshot still points
// at it, until that neighbour's next install (as QNetwork).
func (r *qrNode) detour(d, best, prev int) int {
	alt, altV, now := -1, 0.0, r.v.Now()
	for k, c := range r.out {
		if !r.v.Up(c) || r.net.Channels[c].To == prev {
			continue
		}
		if val := r.estimate(d*r.deg+k, now); alt < 0 || r.less(val, altV, r.tieDelay(d, k), r.tieDelay(d, alt)) {
			alt, altV = k, val
		}
	}
	if alt < 0 {
		return best
	}
	return alt
}

// utilBand is the width of the utilisation classes that objective
// utilisation compares: within one class the delivery-time estimate
// decides (a shortest-widest path choice; Wang & Crowcroft, "Quality-of-
// service routing for supporting multimedia applications", IEEE JSAC 14,
// 1996), which keeps loops out where utilisation alone cannot tell them
// apart. 0.05 is a choice: twenty classes.
const utilBand = 0.05

// less reports whether estimate a (delivery-time tie-break ta) is better
// than b (tb): the lower value under delay; under loss the lower value,
// exact ties by time; under utilisation the lower utilBand class, then the
// lower time.
func (r *qrNode) less(a, b, ta, tb float64) bool {
	switch {
	case !r.s.alt:
		return a < b
	case r.s.util:
		if ca, cb := math.Floor(a/utilBand), math.Floor(b/utilBand); ca != cb {
			return ca < cb
		}
		return ta < tb
	}
	return a < b || a == b && ta < tb
}

// tieDelay returns the delivery-time estimate to d via out[k] that breaks
// ties of the loss objective (from the forwarding snapshot with
// install_every).
func (r *qrNode) tieDelay(d, k int) float64 {
	if !r.s.alt {
		return 0
	}
	if r.fqd != nil {
		return r.fqd[d*r.deg+k]
	}
	return r.qd[d*r.deg+k]
}

// mixCost returns the mix objective's cost of entry i from the loss,
// delivery-time and utilisation tables q, qd, qu (qu nil at weight 0):
// w_delay·qd/(zero-load time to the destination) + w_loss·q + w_util·qu.
func (r *qrNode) mixCost(i int, q, qd, qu []float64) float64 {
	c := r.wz[i/r.deg]*qd[i] + r.s.w.Loss*q[i]
	if qu != nil {
		c += r.s.w.Utilisation * qu[i]
	}
	return c
}

// mixValue returns, under objective mix, the loss, delivery-time (plus
// processing) and utilisation values of the channel to d of least mix
// cost among the usable ones other than out[skip] (skip -1: all): 0, 0, 0
// for d = x; 1, the ceiling, 1 when none is usable.
func (r *qrNode) mixValue(d, skip int) (loss, delay, util float64) {
	if d == r.id {
		return 0, 0, 0
	}
	base := d * r.deg
	best, bestC := -1, 0.0
	for k, c := range r.out {
		if !r.v.Up(c) || k == skip {
			continue
		}
		i := base + k
		if cost := r.mixCost(i, r.q, r.qd, r.qu); best < 0 || cost < bestC || cost == bestC && r.qd[i] < r.qd[base+best] {
			best, bestC = k, cost
		}
	}
	if best < 0 {
		return 1, r.s.qCap, 1
	}
	i := base + best
	if r.qu != nil {
		util = r.qu[i]
	}
	return r.q[i], math.Min(r.proc+r.qd[i], r.s.qCap), util
}

// randomUp returns a uniformly chosen usable column, or -1.
func (r *qrNode) randomUp() int {
	n := 0
	for _, c := range r.out {
		if r.v.Up(c) {
			n++
		}
	}
	if n == 0 {
		return -1
	}
	j := r.v.Rand().IntN(n)
	for k, c := range r.out {
		if r.v.Up(c) {
			if j == 0 {
				return k
			}
			j--
		}
	}
	return -1
}

// value returns V_x(d) = processing + min over usable channels of Q_x(d,·)
// (0 for d = x; qCap when no channel is usable) and the best column (-1 if
// none).
func (r *qrNode) value(d int) (float64, int) {
	if d == r.id {
		return 0, -1
	}
	base := d * r.deg
	best, bestV := -1, r.s.qCap
	for k, c := range r.out {
		if !r.v.Up(c) {
			continue
		}
		if best < 0 || r.q[base+k] < bestV {
			best, bestV = k, r.q[base+k]
		}
	}
	if best < 0 {
		return r.s.qCap, -1
	}
	return math.Min(r.proc+bestV, r.s.qCap), best
}

// altValue returns, under objective loss or utilisation, V_x(d) = the best
// over usable channels other than out[skip] (skip -1: all) of Q_x(d,·) as
// decisions compare them (0 for d = x; 1 when no channel is usable), and
// the delivery-time value of that channel plus processing (0 for d = x;
// the ceiling when none is usable).
func (r *qrNode) altValue(d, skip int) (value, delay float64) {
	if d == r.id {
		return 0, 0
	}
	base := d * r.deg
	best := -1
	for k, c := range r.out {
		if !r.v.Up(c) || k == skip {
			continue
		}
		i := base + k
		if best < 0 || r.less(r.q[i], r.q[base+best], r.qd[i], r.qd[base+best]) {
			best = k
		}
	}
	if best < 0 {
		return 1, r.s.qCap
	}
	return r.q[base+best], math.Min(r.proc+r.qd[base+best], r.s.qCap)
}

// confidenceOf returns entry i's confidence after lazy decay.
func (r *qrNode) confidenceOf(d, i int) float64 {
	age := r.rowN[d] - r.stamp[i]
	if age == 0 {
		return r.c[i]
	}
	return r.c[i] * math.Pow(confidenceDecay, float64(age))
}

// Message types of the per-node agents.
const (
	msgFeedback     uint8 = iota + 1 // Value = t, Aux = q+s
	msgFeedbackConf                  // Value = q+s+t, Aux = confidence of t
	msgValues                        // consensus: Vec = V_y(d) for all d
	msgParams                        // consensus: Vec = network parameters
	msgNetFeedback                   // q-network: Value = q+s+t, Aux = decision's queue feature
	msgFeedbackLoss                  // objective loss: Value = loss value of y, Aux = q+s+t
	msgFeedbackMix                   // objective mix: Value = loss value of y, Aux = q+s+t, Aux2 = utilisation value of y
)

// Arrived runs at y when a data packet comes in from x: it returns the
// feedback to x and, for dual, applies the backward update.
func (r *qrNode) Arrived(p *sim.Packet, in int) {
	if r.s.p.frozen() {
		return // no feedback: nothing learns
	}
	back := in ^ 1 // this node → previous node
	d := p.Dst
	qs := (p.LastWait + p.LastTx).Seconds()
	if r.s.mix {
		skip := -1
		if r.qu != nil {
			skip = r.localIndex(back) // split horizon, as objective utilisation
		}
		l, t, u := r.mixValue(d, skip)
		if d != r.id && p.Hops >= r.hopLimit {
			l, u = 1, 1 // the packet expires here: lost
		}
		m := sim.Message{Type: msgFeedbackMix, Dst: d, Value: l, Aux: qs + t, Aux2: u}
		if r.s.inBand {
			m.Bytes = FeedbackBytes
			r.v.Send(back, m)
		} else {
			r.v.Tell(back, m)
		}
		return
	}
	if r.s.alt {
		skip := -1
		if r.s.util {
			skip = r.localIndex(back) // split horizon: not back through x
		}
		l, t := r.altValue(d, skip)
		if d != r.id && p.Hops >= r.hopLimit {
			l = 1 // the packet expires here: lost
		}
		m := sim.Message{Type: msgFeedbackLoss, Dst: d, Value: l, Aux: qs + t}
		if r.s.inBand {
			m.Bytes = FeedbackBytes
			r.v.Send(back, m)
		} else {
			r.v.Tell(back, m)
		}
		return
	}
	t, bk := r.value(d)
	m := sim.Message{Type: msgFeedback, Dst: d, Value: t, Aux: qs}
	if r.s.variant == variantConfidence {
		conf := 1.0
		if d != r.id {
			conf = 0
			if bk >= 0 {
				conf = r.confidenceOf(d, d*r.deg+bk)
			}
		}
		m = sim.Message{Type: msgFeedbackConf, Dst: d, Value: qs + t, Aux: conf}
	}
	if r.s.inBand {
		m.Bytes = FeedbackBytes
		r.v.Send(back, m)
	} else {
		r.v.Tell(back, m)
	}
	if r.s.variant == variantDual && p.Src != r.id {
		k := r.localIndex(back)
		if k >= 0 {
			ch := &r.net.Channels[back]
			target := p.Aux[0] + r.v.Backlog(back)/ch.Bandwidth + float64(p.Size)*8/ch.Bandwidth + ch.Delay.Seconds()
			r.update(p.Src, k, target, 1)
		}
	}
}

// Receive handles feedback and consensus messages from a neighbour.
func (r *qrNode) Receive(m *sim.Message, in int) {
	if r.s.p.frozen() {
		return
	}
	k := r.localIndex(in ^ 1)
	if k < 0 {
		return
	}
	delay := r.net.Channels[r.out[k]].Delay.Seconds()
	switch m.Type {
	case msgFeedbackMix:
		d := m.Dst
		if d == r.id || d < 0 || d >= r.s.n {
			return
		}
		i := d*r.deg + k
		a := r.s.p.LearningRate
		if r.s.w.Loss > 0 {
			r.q[i] += a * (m.Value - r.q[i])
		}
		r.qd[i] += a * (math.Min(m.Aux+delay, r.s.qCap) - r.qd[i])
		if r.qu != nil {
			r.qu[i] += a * (math.Max(r.channelUtil(k), m.Aux2) - r.qu[i])
		}
	case msgFeedbackLoss:
		target := m.Value
		if r.s.util {
			target = math.Max(r.channelUtil(k), target)
		}
		r.update(m.Dst, k, target, 1)
		if d := m.Dst; d != r.id && d >= 0 && d < r.s.n {
			i := d*r.deg + k
			r.qd[i] += r.s.p.LearningRate * (math.Min(m.Aux+delay, r.s.qCap) - r.qd[i])
		}
	case msgFeedback:
		r.update(m.Dst, k, m.Value+m.Aux+delay, 1)
	case msgFeedbackConf:
		r.update(m.Dst, k, m.Value+delay, m.Aux)
	case msgValues:
		r.blend(k, m.Vec)
	}
}

// update moves Q_x(d, out[k]) towards target (seconds); conf is the
// confidence of the target (confidence variant only).
func (r *qrNode) update(d, k int, target, conf float64) {
	if d == r.id || d < 0 || d >= r.s.n {
		return
	}
	target = math.Min(target, r.s.qCap)
	i := d*r.deg + k
	old := r.q[i]
	switch r.s.variant {
	case variantPredictive:
		now := r.v.Now()
		dq := target - old
		r.q[i] = old + r.s.p.LearningRate*dq
		r.b[i] = math.Min(r.b[i], r.q[i])
		if dq < 0 {
			if dt := (now - r.u[i]).Seconds(); dt > 0 {
				r.r[i] += predictiveBeta * dq / dt
			}
		} else if dq > 0 {
			r.r[i] *= predictiveGamma
		}
		r.r[i] = math.Min(r.r[i], 0)
		r.u[i] = now
	case variantConfidence:
		cOld := r.confidenceOf(d, i)
		eta := math.Max(conf, 1-cOld)
		r.q[i] = old + eta*(target-old)
		r.rowN[d]++
		r.c[i] = cOld + eta*(conf-cOld)
		r.stamp[i] = r.rowN[d]
	default:
		r.q[i] = old + r.s.p.LearningRate*(target-old)
	}
}

// utilWindow is the time constant of the utilisation EWMA: a sample
// covering dt weighs 1 − exp(−dt/utilWindow). A choice: long against a
// packet time, short against the load changes routing should follow.
const utilWindow = sim.Second

// channelUtil returns the utilisation of channel out[k] as x measures it:
// the channel's busy fraction since the last sample, folded into an EWMA
// of time constant utilWindow. Cost O(1), no allocation.
func (r *qrNode) channelUtil(k int) float64 {
	now := r.v.Now()
	if dt := now - r.utilT[k]; dt > 0 {
		busy := r.v.Busy(r.out[k])
		sample := float64(busy-r.utilB[k]) / float64(dt)
		w := -math.Expm1(-float64(dt) / float64(utilWindow))
		r.util[k] += w * (sample - r.util[k])
		r.utilT[k], r.utilB[k] = now, busy
	}
	return r.util[k]
}

// Dropped samples a loss under objective loss: the packet for p.Dst sent
// into this node's channel out was lost there (full queue or link loss), so
// Q_x(d, out) moves towards 1. Under delay a drop teaches nothing.
func (r *qrNode) Dropped(p *sim.Packet, out int, _ sim.DropReason) {
	if !r.s.alt || r.s.util || r.s.mix && r.s.w.Loss == 0 || r.s.p.frozen() {
		return
	}
	if k := r.localIndex(out); k >= 0 {
		r.update(p.Dst, k, 1, 1)
	}
}

// Detected resets a channel's column when its link comes back; a channel
// going down is skipped by decisions from now on (NodeView.Up).
func (r *qrNode) Detected(out int, up bool) {
	if !up || r.s.p.frozen() {
		return
	}
	if k := r.localIndex(out); k >= 0 {
		r.resetColumn(k)
	}
}

// Timer runs a consensus round.
func (r *qrNode) Timer(tag int) {
	if tag == tagQInstall {
		r.install()
		r.v.After(r.s.p.InstallEvery, tagQInstall)
		return
	}
	if tag != tagConsensus || r.cons == nil {
		return
	}
	if r.s.p.Consensus.SplitHorizon {
		r.sendSplitHorizon()
	} else {
		vec := make([]float64, r.s.n) // shared by this round's messages; receivers only read it
		for d := range vec {
			vec[d], _ = r.value(d)
		}
		for _, c := range r.out {
			if r.v.Up(c) {
				r.v.Send(c, sim.Message{Type: msgValues, Vec: vec, Bytes: ValuesMessageBytes(r.s.n)})
			}
		}
	}
	r.v.After(r.cons.every, tagConsensus)
}

// blend moves Q_x(d, out[k]) towards x's own estimate of the hop to y plus
// y's advertised V_y(d): Q ← (1−w)Q + w(h + V_y(d)). The hop estimate is the
// channel's current backlog over its bandwidth plus the transmission time of
// an AssumedPacketBytes packet plus propagation.
func (r *qrNode) blend(k int, vals []float64) {
	if len(vals) != r.s.n {
		return
	}
	c := r.out[k]
	ch := &r.net.Channels[c]
	hop := (r.v.Backlog(c)+AssumedPacketBytes*8)/ch.Bandwidth + ch.Delay.Seconds()
	w := r.cons.weight
	for d, vd := range vals {
		if d == r.id {
			continue
		}
		i := d*r.deg + k
		r.q[i] = math.Min((1-w)*r.q[i]+w*(hop+vd), r.s.qCap)
		if r.s.variant == variantPredictive {
			r.b[i] = math.Min(r.b[i], r.q[i])
		}
	}
}

// sendSplitHorizon sends each neighbour y the values min_{z≠y} Q_x(d,z)
// (the node's processing time added, 0 for d = x, qCap when y is the only
// usable neighbour): one vector per neighbour, from the best and second-best
// entries of every row.
func (r *qrNode) sendSplitHorizon() {
	n := r.s.n
	best := make([]float64, n)
	second := make([]float64, n)
	arg := make([]int, n)
	for d := 0; d < n; d++ {
		best[d], second[d], arg[d] = r.s.qCap, r.s.qCap, -1
		if d == r.id {
			best[d], second[d] = 0, 0
			continue
		}
		for k, c := range r.out {
			if !r.v.Up(c) {
				continue
			}
			q := r.q[d*r.deg+k]
			if q < best[d] {
				second[d] = best[d]
				best[d], arg[d] = q, k
			} else if q < second[d] {
				second[d] = q
			}
		}
	}
	for k, c := range r.out {
		if !r.v.Up(c) {
			continue
		}
		vec := make([]float64, n) // owned by the receiver
		for d := 0; d < n; d++ {
			v := best[d]
			if arg[d] == k {
				v = second[d]
			}
			if d != r.id {
				v = math.Min(r.proc+v, r.s.qCap)
			}
			vec[d] = v
		}
		r.v.Send(c, sim.Message{Type: msgValues, Vec: vec, Bytes: ValuesMessageBytes(n)})
	}
}
