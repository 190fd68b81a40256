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
		New: newQRouting,
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
//     the channel towards y is lost before delivery, in [0, 1]: the
//     Bellman value p_xy·1 + (1 − p_xy)·V_y(d) = 1 − (1 − p_xy)(1 −
//     V_y(d)) of loss as a terminal cost of 1 (Watkins & Dayan,
//     "Q-learning", Machine Learning 8, 1992), p_xy being the drop
//     frequency of x's channel and V_y(d) = min_z Q_y(d,z) (0 at y = d).
//     x learns the two factors apart: p̂_xy, an EWMA (rate dropRate) over
//     every packet it sends on the channel, whatever its destination, of 1
//     for a drop there (a full output queue or a loss on the link,
//     reported to x alone by sim.Dropper) and 0 otherwise; and the loss
//     beyond y, L_x(d,y), which moves towards each V_y(d) y reports (rate
//     as the variant); Q_x(d,y) = 1 − (1 − p̂_xy)(1 − L_x(d,y)). Sampling
//     Q itself, 1 for a drop and V_y(d) for an arrival, converges to the
//     same value but at learning_rate 0.5 one drop lifts the estimate to
//     0.5: greedy choice on so noisy an estimate leaves a lossy path long
//     before its mean cost says so, and an unused path is never sampled
//     again (measured: see the README, q-routing's objectives). A packet
//     that reaches its hop limit at y (it will be dropped there) is a loss
//     too: y then reports 1, so a forwarding loop shows as loss. Tables
//     start at 0 (1 for an unreachable destination). Beside them each node keeps the
//     delivery-time table of objective delay (same start, same update,
//     the feedback carrying both values) and breaks exact ties of loss
//     estimates, such as between loss-free paths, by it: packets take the
//     fastest of the least lossy routes, and around a failed link the
//     rising delivery time breaks the loops that equal loss values cannot.
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
//     do not enter it (use loss for that). Start and delivery-time table
//     as loss. Decisions compare utilisation in classes of utilBand and
//     take the lower delivery-time estimate within a class.
//   - mix {delay: w_d, loss: w_l, utilisation: w_u}: the node learns the
//     delivery-time table always, the loss table (as objective loss) when
//     w_l > 0 and the utilisation table (as objective utilisation, with
//     its split horizon) when w_u > 0, and decides on the cost
//     w_d·Qdelay/z_xd + w_l·Qloss + w_u·Qutil, z_xd being its zero-load
//     time to d (see Mix), exact ties to the lower delivery time. Feedback
//     from y carries the three values of y's channel of least cost (a
//     hop-limit expiry: loss and utilisation 1), so each table estimates
//     its term along the path the mix takes; drops on x's own channels
//     enter its drop frequencies, as under loss.
//
// Every variant takes every objective; under loss, utilisation and mix:
//   - plain: every table at learning_rate, as above.
//   - predictive: the recovery machinery (B, R, U) acts on the
//     delivery-time table, whose best value B is a true floor (the
//     zero-load time); decisions read its recovered value where they read
//     a delivery time (the tie-break; the mix's delay term). The loss and
//     utilisation tables learn plain: their start value 0 would be B, and
//     a recovery rate learned from the decreases of noisy samples lets an
//     unrefreshed estimate fall to 0 and reopens loops (measured: on a
//     lossy chain, recovery on a loss table sampled per packet held an
//     estimate at 0.13 against the closed form 0.28).
//   - dual: Route writes V_x(src) of every table into p.Aux (loss,
//     delivery time, utilisation: the values of x's best channel for src,
//     with a utilisation table the best other than the one to the next
//     node, split horizon); y moves its backward estimates Q_y(src,x) towards
//     1 − (1 − p̂_yx)(1 − V_x(src)) (loss: its loss beyond x moves towards
//     V_x(src), p̂_yx being y's observed drop frequency on its channel to
//     x), V_x(src) + w + s' + δ (delivery time, as under delay) and
//     max(u_yx, V_x(src)) (utilisation).
//   - confidence: one confidence C per entry, as under delay: y reports
//     the confidence of its best entry by the objective (1 at y = d, and
//     when y has no usable channel ahead or the packet expires at y: those
//     samples are facts, not estimates; without that a confident entry
//     pointing into a dead end after a failure hardly moves, and packets
//     loop), x
//     computes η = max(C_est, 1 − C_old), moves every table (delivery
//     time, loss beyond y, utilisation) at rate η and sets
//     C += η(C_est − C). The values y reports are estimates, not single
//     Bernoulli draws (the drop frequency of x's channel is learned apart,
//     as above), so the published rate applies to each.
//
// give_up_after bounds the delivery-time table under every objective (a
// destination is given up while every usable channel's delivery-time
// estimate, recovered for predictive, exceeds B). Consensus under loss,
// utilisation and mix blends every table the objective learns: each round
// a node sends each neighbour, per destination, the delivery time, loss and
// utilisation values (as its feedback would carry them; with a utilisation
// table or split_horizon leaving out the channel to that neighbour), and
// the neighbour moves its entries towards hop + V (delivery time),
// 1 − (1 − p̂_xy)(1 − V) (loss: V is the loss beyond y) and max(u_xy, V)
// (utilisation) with weight w. start_from loads every table a state stores (see State); a
// state learned under another objective is refused.
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
	lossOn   bool // a loss table is learned (objective loss, or a mix weighing loss)
	utilOn   bool // a utilisation table is learned (objective utilisation, or a mix weighing it)
	predQ    bool // predictive under objective delay: the recovery machinery acts on q
	predD    bool // predictive under objective ≠ delay: recovery on the delivery-time table qd
	bare     bool // objective delay, not predictive: a decision compares the Q-table's entries as they are
	// with install_every: hops after which a packet leaves the snapshot
	// and is decided on the live delivery-time estimates (see hopDetour)
	hopBudget int
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
		if err := checkMix(p.Objective.Mix); err != nil {
			return nil, fmt.Errorf("agents: q-routing: %w", err)
		}
		s.alt, s.mix, s.w = true, true, p.Objective.Mix
		s.lossOn, s.utilOn = s.w.Loss > 0, s.w.Utilisation > 0
	case ObjectiveDelay:
	case ObjectiveLoss, ObjectiveUtilisation:
		s.alt, s.util = true, p.Objective.Name == ObjectiveUtilisation
		s.lossOn, s.utilOn = !s.util, s.util
	default:
		return nil, fmt.Errorf("agents: q-routing: unknown objective %q", p.Objective.Name)
	}
	s.predQ = s.variant == variantPredictive && !s.alt
	s.predD = s.variant == variantPredictive && s.alt
	s.bare = !s.alt && !s.predQ
	if p.InstallEvery > 0 {
		s.hopBudget = 2 * hopDiameter(net)
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
		copy(r.fqu, r.qu)
		copy(r.fb, r.b)
		copy(r.fr, r.r)
		copy(r.fu, r.u)
		r.snapDelay()
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
	copy(r.qu, o.qu)
	copy(r.bd, o.bd)
	copy(r.rd, o.rd)
	for i := range r.ud {
		r.ud[i] = o.ud[i] - shift
	}
	copy(r.c, o.c)
	copy(r.stamp, o.stamp)
	copy(r.rowN, o.rowN)
	copy(r.pdrop, o.pdrop)
}

// qrNode is one node's Q-routing state. It sees the network only through v.
type qrNode struct {
	s   *qrShared
	v   *sim.NodeView
	id  int
	out []int
	deg int
	net *sim.Net

	// [d*deg+k]: delay: seconds; loss and mix: the loss probability beyond
	// the next node; utilisation: the utilisation ahead
	q []float64
	// objective loss: delivery-time estimates breaking ties, seconds, and
	// the hop limit beyond which a packet counts as lost
	qd, fqd  []float64
	hopLimit int
	// objective utilisation: per channel, the EWMA utilisation
	meter busyMeter
	// objective mix: the utilisation table (nil at weight 0) and its
	// snapshot, and per destination the delay weight over this node's
	// zero-load time to it (1/s)
	qu, fqu []float64
	wz      []float64
	// predictive: best, recovery rate and last update of q (objective
	// delay) or of qd (objective ≠ delay)
	b, r   []float64
	u      []sim.Time
	bd, rd []float64
	ud     []sim.Time
	// loss term with dual or consensus: per channel, the frequency of
	// drops among the packets sent on it (EWMA, rate dropRate)
	pdrop []float64
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
	fbd, frd   []float64
	fud        []sim.Time
	fpdrop     []float64
	installed  sim.Time
}

// snapDelay copies the delivery-time table's recovery state into the
// forwarding snapshot (predictive under objective ≠ delay).
func (r *qrNode) snapDelay() {
	copy(r.fbd, r.bd)
	copy(r.frd, r.rd)
	copy(r.fud, r.ud)
	copy(r.fpdrop, r.pdrop)
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
	r.snapDelay()
	r.installed = r.v.Now()
	for d := 0; d < r.s.n; d++ {
		if d == r.id {
			continue
		}
		best, bestV, bestT := -1, 0.0, 0.0
		for k, c := range r.out {
			if !r.v.Up(c) {
				continue
			}
			if val, t := r.view(d*r.deg+k, 0); best < 0 || r.less(val, bestV, t, bestT) {
				best, bestV, bestT = k, val, t
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
	if s.utilOn {
		r.meter = newBusyMeter(r.deg)
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
	if s.lossOn { // each channel's drop frequency
		r.pdrop = make([]float64, r.deg)
	}
	switch s.variant {
	case variantPredictive:
		if s.predQ {
			r.b = make([]float64, len(r.q))
			r.r = make([]float64, len(r.q))
			r.u = make([]sim.Time, len(r.q))
		}
		if s.predD {
			r.bd = make([]float64, len(r.q))
			r.rd = make([]float64, len(r.q))
			r.ud = make([]sim.Time, len(r.q))
		}
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
		if r.pdrop != nil {
			r.fpdrop = make([]float64, len(r.pdrop))
		}
		if r.bd != nil {
			r.fbd = make([]float64, len(r.bd))
			r.frd = make([]float64, len(r.rd))
			r.fud = make([]sim.Time, len(r.ud))
		}
		r.snapDelay()
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
			if r.b != nil {
				r.b[i], r.r[i], r.u[i] = v, 0, r.v.Now()
			}
			if r.bd != nil {
				r.bd[i], r.rd[i], r.ud[i] = r.qd[i], 0, r.v.Now()
			}
		case variantConfidence:
			r.c[i] = 0
			if y == d {
				r.c[i] = 1
			}
			r.stamp[i] = r.rowN[d]
		}
	}
}

// view returns the values the decision compares for entry i: the
// objective's value (delay: the delivery-time estimate; loss, utilisation:
// that table; mix: the weighted cost) and, under objective ≠ delay, the
// delivery-time estimate that breaks its ties (0 under delay). Predictive
// tables give their recovered values. With install_every it reads the
// forwarding snapshot, as of the install. Cost O(1), no allocation.
func (r *qrNode) view(i int, now sim.Time) (val, t float64) {
	// objective delay: two short cases (the general one loads every
	// table first: half of a plain decision's time)
	switch {
	case r.s.bare:
		if r.fq != nil {
			return r.fq[i], 0
		}
		return r.q[i], 0
	case r.s.predQ:
		if r.fq != nil {
			return predEst(r.fq, r.fb, r.fr, r.fu, i, r.installed), 0
		}
		return predEst(r.q, r.b, r.r, r.u, i, now), 0
	}
	q, qd, qu, b, rr, u, bd, rd, ud, pd := r.q, r.qd, r.qu, r.b, r.r, r.u, r.bd, r.rd, r.ud, r.pdrop
	if r.fq != nil {
		q, qd, qu, b, rr, u, bd, rd, ud, pd, now = r.fq, r.fqd, r.fqu, r.fb, r.fr, r.fu, r.fbd, r.frd, r.fud, r.fpdrop, r.installed
	}
	val = q[i]
	if r.s.lossOn {
		val = composeLoss(pd[i%r.deg], val)
	}
	if r.s.predQ {
		val = predEst(q, b, rr, u, i, now)
	}
	if !r.s.alt {
		return val, 0
	}
	t = qd[i]
	if r.s.predD {
		t = predEst(qd, bd, rd, ud, i, now)
	}
	if r.s.mix {
		c := r.wz[i/r.deg]*t + r.s.w.Loss*val
		if qu != nil {
			c += r.s.w.Utilisation * qu[i]
		}
		return c, t
	}
	return val, t
}

// predEst returns the predictive estimate of entry i of table q with
// best, recovery-rate and update-time tables b, rr, u:
// max(Q + (now − U)·R, B) (Choi & Yeung 1996).
func predEst(q, b, rr []float64, u []sim.Time, i int, now sim.Time) float64 {
	return math.Max(q[i]+(now-u[i]).Seconds()*rr[i], b[i])
}

// predLearn moves entry i of table q towards target at rate alpha and
// updates its best value, recovery rate and update time as Choi & Yeung
// 1996 (see QRouting, predictive).
func predLearn(q, b, rr []float64, u []sim.Time, i int, target, alpha float64, now sim.Time) {
	old := q[i]
	dq := target - old
	q[i] = old + alpha*dq
	b[i] = math.Min(b[i], q[i])
	if dq < 0 {
		if dt := (now - u[i]).Seconds(); dt > 0 {
			rr[i] += predictiveBeta * dq / dt
		}
	} else if dq > 0 {
		rr[i] *= predictiveGamma
	}
	rr[i] = math.Min(rr[i], 0)
	u[i] = now
}

// Route picks the outgoing channel for p. Cost: O(degree), no allocation.
func (r *qrNode) Route(p *sim.Packet) int {
	d := p.Dst
	base := d * r.deg
	best, bestV, bestT := -1, 0.0, 0.0
	now := r.v.Now()
	if r.give != nil {
		// under objective ≠ delay the bound applies to the delivery-time
		// table, which every objective keeps
		least := math.Inf(1)
		for k, c := range r.out {
			if r.v.Up(c) {
				val, t := r.view(base+k, now)
				if r.s.alt {
					val = t
				}
				least = math.Min(least, val)
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
			val, t := r.view(base+k, now)
			if best < 0 || r.less(val, bestV, t, bestT) {
				best, bestV, bestT = k, val, t
			}
		}
		r.pref.saw(r.v, d, best)
		switch {
		case r.fq == nil || best < 0:
		case p.Hops > r.s.hopBudget:
			best = r.hopDetour(d, best, p.Prev)
		case r.net.Channels[r.out[best]].To == p.Prev:
			best = r.detour(d, best, p.Prev)
		}
	}
	if best < 0 {
		return sim.NoRoute
	}
	if r.pdrop != nil && !r.s.p.frozen() {
		r.pdrop[best] -= dropRate * r.pdrop[best] // a send: a sample 0, until Dropped says otherwise
	}
	if r.s.variant == variantDual {
		switch {
		case r.s.alt && p.Src == r.id:
			p.Aux = [3]float64{}
		case r.s.alt:
			// V_x(src) of every table, split horizon (not through the
			// next node) when a utilisation table is learned
			skip := -1
			if r.s.utilOn {
				skip = best
			}
			l, t, u, _ := r.altVals(p.Src, skip)
			p.Aux = [3]float64{l, t, u}
		case p.Src == r.id:
			p.Aux[0] = 0
		default:
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
	alt, altV, altT, now := -1, 0.0, 0.0, r.v.Now()
	for k, c := range r.out {
		if !r.v.Up(c) || r.net.Channels[c].To == prev {
			continue
		}
		if val, t := r.view(d*r.deg+k, now); alt < 0 || r.less(val, altV, t, altT) {
			alt, altV, altT = k, val, t
		}
	}
	if alt < 0 {
		return best
	}
	return alt
}

// hopDetour returns, with install_every, the channel for a packet that has
// made more hops than the budget (twice the topology's hop diameter, past
// any reasonable detour): the usable channel of least live delivery-time
// estimate, not straight back to prev unless it is the only one, best if
// none is usable. Loops of more than two nodes can hold in the snapshots
// until the next install, above all under objective utilisation, whose
// classes a loop does not raise; the live delivery times do rise around
// a loop (as QNetwork). A detour is per packet, not a route change.
func (r *qrNode) hopDetour(d, best, prev int) int {
	alt, altT, back := -1, 0.0, -1
	now := r.v.Now()
	for k, c := range r.out {
		if !r.v.Up(c) {
			continue
		}
		if r.net.Channels[c].To == prev {
			back = k
			continue
		}
		if t := r.liveTime(d*r.deg+k, now); alt < 0 || t < altT {
			alt, altT = k, t
		}
	}
	switch {
	case alt >= 0:
		return alt
	case back >= 0:
		return back
	}
	return best
}

// liveTime returns the live (not snapshot) delivery-time estimate of entry
// i: the delay table under objective delay (its predictive value for that
// variant), the delivery-time table beside the others otherwise.
func (r *qrNode) liveTime(i int, now sim.Time) float64 {
	switch {
	case r.s.predQ:
		return predEst(r.q, r.b, r.r, r.u, i, now)
	case !r.s.alt:
		return r.q[i]
	case r.s.predD:
		return predEst(r.qd, r.bd, r.rd, r.ud, i, now)
	}
	return r.qd[i]
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

// mixCost returns the mix objective's cost of entry i from the loss,
// delivery-time and utilisation tables q, qd, qu (qu nil at weight 0):
// w_delay·qd/(zero-load time to the destination) + w_loss·q + w_util·qu.
func (r *qrNode) mixCost(i int, q, qd, qu []float64) float64 {
	c := r.wz[i/r.deg]*qd[i] + r.s.w.Loss*r.lossAt(i)
	if qu != nil {
		c += r.s.w.Utilisation * qu[i]
	}
	return c
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

// altBest returns, under objective ≠ delay, the usable channel other than
// out[skip] (skip -1: all) whose raw estimates for d decide best (loss,
// utilisation: as less; mix: the least cost, exact ties to the lower
// delivery time), -1 when there is none.
func (r *qrNode) altBest(d, skip int) int {
	base := d * r.deg
	best, bestC := -1, 0.0
	for k, c := range r.out {
		if !r.v.Up(c) || k == skip {
			continue
		}
		i := base + k
		if r.s.mix {
			if cost := r.mixCost(i, r.q, r.qd, r.qu); best < 0 || cost < bestC || cost == bestC && r.qd[i] < r.qd[base+best] {
				best, bestC = k, cost
			}
			continue
		}
		if best < 0 || r.less(r.altAt(i), r.altAt(base+best), r.qd[i], r.qd[base+best]) {
			best = k
		}
	}
	return best
}

// altVals returns, under objective ≠ delay, V_x(d) of every table: the
// loss, delivery-time (plus processing) and utilisation estimates of the
// channel altBest(d, skip) picks, and that channel (0, 0, 0, -1 for d = x;
// 1, the ceiling, 1, -1 when no channel is usable). A table the objective
// does not learn gives 0.
func (r *qrNode) altVals(d, skip int) (loss, delay, util float64, k int) {
	if d == r.id {
		return 0, 0, 0, -1
	}
	k = r.altBest(d, skip)
	if k < 0 {
		return 1, r.s.qCap, 1, -1
	}
	i := d*r.deg + k
	delay = math.Min(r.proc+r.qd[i], r.s.qCap)
	switch {
	case r.s.mix:
		loss = r.lossAt(i)
		if r.qu != nil {
			util = r.qu[i]
		}
	case r.s.util:
		util = r.q[i]
	default:
		loss = r.lossAt(i)
	}
	return loss, delay, util, k
}

// composeLoss returns the loss probability of a hop of drop frequency p
// followed by a path of loss probability v: 1 − (1 − p)(1 − v).
func composeLoss(p, v float64) float64 { return 1 - (1-p)*(1-v) }

// lossAt returns the live loss estimate of entry i: the drop frequency of
// its channel composed with the learned loss beyond the next node (0 when
// no loss table is learned).
func (r *qrNode) lossAt(i int) float64 {
	if !r.s.lossOn {
		return 0
	}
	return composeLoss(r.pdrop[i%r.deg], r.q[i])
}

// altAt returns the live value of entry i that objective loss or
// utilisation compares.
func (r *qrNode) altAt(i int) float64 {
	if r.s.util {
		return r.q[i]
	}
	return r.lossAt(i)
}

// utilTable returns the utilisation table (nil when none is learned).
func (r *qrNode) utilTable() []float64 {
	if r.s.mix {
		return r.qu
	}
	if r.s.util {
		return r.q
	}
	return nil
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
	msgFeedbackAlt                   // objective ≠ delay: Value = loss value of y, Aux = q+s+t, Aux2 = utilisation value of y, Aux3 = confidence
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
	if r.s.alt {
		skip := -1
		if r.s.utilOn {
			skip = r.localIndex(back) // split horizon: not back through x
		}
		l, t, u, bk := r.altVals(d, skip)
		if d != r.id && p.Hops >= r.hopLimit {
			l, u = 1, 1 // the packet expires here: lost
		}
		m := sim.Message{Type: msgFeedbackAlt, Dst: d, Value: l, Aux: qs + t, Aux2: u}
		if r.s.variant == variantConfidence {
			// certain: at the destination, with no usable channel ahead
			// (values 1, the ceiling, 1), or at the hop limit
			m.Aux3 = 1
			if d != r.id && bk >= 0 && p.Hops < r.hopLimit {
				m.Aux3 = r.confidenceOf(d, d*r.deg+bk)
			}
		}
		if r.s.inBand {
			m.Bytes = FeedbackBytes
			r.v.Send(back, m)
		} else {
			r.v.Tell(back, m)
		}
		if r.s.variant == variantDual && p.Src != r.id {
			r.dualAlt(p, back)
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
	case msgFeedbackAlt:
		d := m.Dst
		if d == r.id || d < 0 || d >= r.s.n {
			return
		}
		util := 0.0
		if r.s.utilOn {
			util = math.Max(r.channelUtil(k), m.Aux2)
		}
		r.learnAlt(d, k, m.Value, math.Min(m.Aux+delay, r.s.qCap), util, m.Aux3)
	case msgFeedback:
		r.update(m.Dst, k, m.Value+m.Aux+delay, 1)
	case msgFeedbackConf:
		r.update(m.Dst, k, m.Value+delay, m.Aux)
	case msgValues:
		if r.s.alt {
			r.blendAlt(k, m.Vec)
		} else {
			r.blend(k, m.Vec)
		}
	}
}

// dropRate is the rate of the EWMA of drop samples (1 for a packet lost on
// the channel, 0 for one that was not) by which a node estimates each of
// its channels' drop frequency p_xy under objectives that learn loss: it
// averages over about the last 1/dropRate packets sent on the channel, for
// any destination. A choice: an estimate of p = 0.2 then has standard
// deviation √(dropRate/(2 − dropRate)·p(1 − p)) ≈ 0.009 (Roberts 1959), and
// a change of loss is followed within about a thousand packets.
const dropRate = 0.001

// learnAlt applies one sample to entry (d, out[k]) under objective ≠ delay:
// targets loss (loss table), delay (delivery-time table, seconds) and util
// (utilisation table), each used only where the objective learns that
// table (loss: the loss beyond the next node); conf is the target's
// confidence (variant confidence). Rates: learning_rate (predictive: with
// recovery on the delivery-time table); confidence: η = max(conf, 1 − C)
// on every table, as Kumar & Miikkulainen 1998. Cost O(1), no allocation.
func (r *qrNode) learnAlt(d, k int, loss, delay, util, conf float64) {
	i := d*r.deg + k
	a := r.s.p.LearningRate
	if r.s.variant == variantConfidence {
		cOld := r.confidenceOf(d, i)
		a = math.Max(conf, 1-cOld)
		r.rowN[d]++
		r.c[i] = cOld + a*(conf-cOld)
		r.stamp[i] = r.rowN[d]
	}
	if r.s.lossOn {
		r.q[i] += a * (loss - r.q[i])
	}
	if r.s.predD {
		predLearn(r.qd, r.bd, r.rd, r.ud, i, delay, a, r.v.Now())
	} else {
		r.qd[i] += a * (delay - r.qd[i])
	}
	if ut := r.utilTable(); ut != nil {
		ut[i] += a * (util - ut[i])
	}
}

// dualAlt is dual's backward update at y under objective ≠ delay, for data
// packet p that came from x over back's reverse (back: y → x): Q_y(src, x)
// moves towards x's values for src carried in p.Aux (loss, delivery time,
// utilisation) composed with y's own channel to x: the loss beyond x
// towards V_x(src) (the loss estimate composing it with y's drop frequency
// on that channel); delivery time V_x(src) + w + s' + δ as under delay;
// utilisation max(u_yx, V_x(src)).
func (r *qrNode) dualAlt(p *sim.Packet, back int) {
	k := r.localIndex(back)
	if k < 0 {
		return
	}
	ch := &r.net.Channels[back]
	delay := p.Aux[1] + r.v.Backlog(back)/ch.Bandwidth + float64(p.Size)*8/ch.Bandwidth + ch.Delay.Seconds()
	loss, util := p.Aux[0], 0.0
	if r.s.utilOn {
		util = math.Max(r.channelUtil(k), p.Aux[2])
	}
	r.learnAlt(p.Src, k, loss, math.Min(delay, r.s.qCap), util, 1)
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
		predLearn(r.q, r.b, r.r, r.u, i, target, r.s.p.LearningRate, r.v.Now())
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

// channelUtil returns the utilisation of channel out[k] as x measures it
// (busyMeter). Cost O(1), no allocation.
func (r *qrNode) channelUtil(k int) float64 { return r.meter.at(r.v, k, r.out[k]) }

// Dropped samples a drop when a loss table is learned: the packet sent into
// this node's channel out was lost there (full queue or link loss), so the
// channel's drop frequency, which counted the send as a 0 in Route, takes a
// 1 instead. Under delay a drop teaches nothing.
func (r *qrNode) Dropped(p *sim.Packet, out int, _ sim.DropReason) {
	if !r.s.lossOn || r.s.p.frozen() {
		return
	}
	k := r.localIndex(out)
	d := p.Dst
	if k < 0 || d == r.id || d < 0 || d >= r.s.n {
		return
	}
	r.pdrop[k] += dropRate // the send counted 0: a sample 1
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
	if r.s.alt {
		r.sendAltValues()
	} else if r.s.p.Consensus.SplitHorizon {
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

// sendAltValues is a consensus round under objective ≠ delay: each usable
// neighbour gets V_x(d) of every table the objective learns (as altVals),
// laid out as the delivery times of every destination, then the loss
// values when a loss table is learned, then the utilisation values when a
// utilisation table is. With a utilisation table or split_horizon each
// neighbour y gets the values of the best channel other than the one to y
// (one vector per neighbour); otherwise one vector is shared.
func (r *qrNode) sendAltValues() {
	n := r.s.n
	blocks := 1
	if r.s.lossOn {
		blocks++
	}
	if r.s.utilOn {
		blocks++
	}
	split := r.s.utilOn || r.s.p.Consensus.SplitHorizon
	var shared []float64
	for k, c := range r.out {
		if !r.v.Up(c) {
			continue
		}
		vec := shared
		if vec == nil || split {
			skip := -1
			if split {
				skip = k
			}
			vec = make([]float64, blocks*n) // owned by the receiver, or shared by this round's receivers, who only read it
			for d := 0; d < n; d++ {
				l, t, u, _ := r.altVals(d, skip)
				vec[d] = t
				j := n
				if r.s.lossOn {
					vec[j+d] = l
					j += n
				}
				if r.s.utilOn {
					vec[j+d] = u
				}
			}
			if !split {
				shared = vec
			}
		}
		r.v.Send(c, sim.Message{Type: msgValues, Vec: vec, Bytes: ValuesMessageBytes(blocks * n)})
	}
}

// blendAlt moves every table entry via out[k] towards the neighbour's
// advertised values composed with this node's channel to it, under
// objective ≠ delay: Q ← (1−w)Q + w·target with targets, per destination,
// hop + V_y(d) for the delivery time (hop as blend), V_y(d) for the loss
// beyond y (the loss estimate composing it with the channel's drop
// frequency), and max(u_xy, V_y(d)) for the utilisation.
func (r *qrNode) blendAlt(k int, vals []float64) {
	n := r.s.n
	blocks := 1
	if r.s.lossOn {
		blocks++
	}
	ut := r.utilTable()
	if ut != nil {
		blocks++
	}
	if len(vals) != blocks*n {
		return
	}
	c := r.out[k]
	ch := &r.net.Channels[c]
	hop := (r.v.Backlog(c)+AssumedPacketBytes*8)/ch.Bandwidth + ch.Delay.Seconds()
	uxy := 0.0
	if ut != nil {
		uxy = r.channelUtil(k)
	}
	w := r.cons.weight
	for d := 0; d < n; d++ {
		if d == r.id {
			continue
		}
		i := d*r.deg + k
		r.qd[i] = math.Min((1-w)*r.qd[i]+w*(hop+vals[d]), r.s.qCap)
		if r.bd != nil {
			r.bd[i] = math.Min(r.bd[i], r.qd[i])
		}
		j := n
		if r.s.lossOn {
			r.q[i] = (1-w)*r.q[i] + w*vals[j+d]
			j += n
		}
		if ut != nil {
			ut[i] = (1-w)*ut[i] + w*math.Max(uxy, vals[j+d])
		}
	}
}
