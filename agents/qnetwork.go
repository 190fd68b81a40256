package agents

import (
	"errors"
	"fmt"
	"math"

	"hoplore/sim"
)

// QNetworkKind is the kind of QNetwork in experiment files.
const QNetworkKind = "q-network"

func init() {
	Register(Kind{
		Name:  QNetworkKind,
		Order: 50,
		Fields: []Field{
			NewField("hidden", func(p *Params) *[]int { return &p.Hidden }, []int{32}, func(hs []int) error {
				if len(hs) == 0 {
					return errors.New("needs at least one layer size")
				}
				for _, h := range hs {
					if h < 1 || h > 1024 {
						return fmt.Errorf("layer sizes must be in 1..1024, got %d", h)
					}
				}
				return nil
			}),
			learningRateField(0.01),
			exploreField(0),
			NewField("replay", func(p *Params) *int { return &p.Replay }, 256, atLeastOne),
			NewField("target_sync", func(p *Params) *int { return &p.TargetSync }, 200, atLeastOne),
			consensusField(false),
			giveUpField(),
			learningField(),
			startFromField(),
			NewField("install_every", func(p *Params) *sim.Time { return &p.InstallEvery }, 0, nonNegativeTime),
			objectiveField(ObjectiveDelay, true, ObjectiveDelay, ObjectiveLoss, ObjectiveUtilisation),
		},
		New: newQNetwork,
		Cost: func(p *Params, r RunSize) Cost {
			N := float64(r.Nodes)
			in := 3*N + 2
			params := 0.0
			prev := in
			for _, h := range p.Hidden {
				params += (prev + 1) * float64(h)
				prev = float64(h)
			}
			params += (prev + 1) * float64(qnHeads(p.Objective))
			// weights, target copy, gradient and consensus scratch per node,
			// replay samples of the inputs
			return Cost{
				Events: consensusEvents(p, r),
				Bytes:  N * (params*8*4 + float64(p.Replay)*(in+4)*8),
			}
		},
	})
}

// Settings of q-network's training (common practice for small online
// regressions; DQN-style replay and target copies as Mnih et al., Nature
// 2015).
const (
	// qnLossBand is the width of the loss classes objective loss compares:
	// within one class the delivery-time estimate decides. The network's
	// estimate of a loss-free path scatters around 0 (it generalises
	// across destinations and neighbours) where a table's stays exactly 0,
	// so exact comparison would follow that scatter; 0.02 is a choice.
	qnLossBand = 0.02
	// qnDropWeight is the weight of one packet's outcome in a channel's
	// drop frequency (an EWMA over the packets sent into it: about the
	// last 100; standard deviation at most √(0.01/1.99·0.25) = 0.035,
	// Roberts, Technometrics 1, 1959). A choice.
	qnDropWeight = 0.01
	// qnReplayDraws is how many samples drawn uniformly from the replay
	// buffer are trained on after each new sample.
	qnReplayDraws = 3
	// qnMaxQueueFeature caps the normalised queue feature.
	qnMaxQueueFeature = 10
)

// QNetwork is per-node Q-routing with a small neural network in place of
// the table. Every node has a multilayer perceptron of one shared shape
// (inputs, Hidden tanh layers, a linear output: one value, more under the
// objectives other than delay, see Objective) that scores a candidate
// neighbour:
//
//	inputs: one-hot of this node (N), one-hot of the destination (N),
//	        one-hot of the candidate neighbour (N), that channel's queue
//	        feature w/T (the channel's backlog over its bandwidth, in units
//	        of T, capped at 10) and its up flag;
//	Q_x(d,y) = zl(x,y,d) + T·net(inputs),
//
// where zl(x,y,d) is the zero-load time via y (as the tabular agent's initial
// value) and T is the largest zero-load time between two nodes, which makes
// the network learn the normalised excess over zero-load delivery. The
// output layer starts at zero, so the initial policy is zero-load shortest
// paths. Because the node is an input, parameters of different nodes can be
// averaged meaningfully (consensus).
//
// Decision: argmin over usable channels of Q_x(d,·), ties to the lowest Out
// index, ε-exploration with Explore; route changes are counted on the greedy
// decisions (see prefs). The first layer is evaluated sparsely
// (five non-zero inputs), so a decision costs O(degree·Σ layer products) and
// allocates nothing.
//
// Training: the Q-routing target as in QRouting with instant feedback: y
// answers t = min_z Q_y(d,z) computed with y's target network (a copy of its
// parameters refreshed every TargetSync updates), plus q + s; x adds the
// propagation delay and trains on (d, y, queue feature at the decision,
// target), the queue feature being carried by the packet in p.Aux[1]. Each
// sample is stored in a ring buffer of Replay samples; each update takes one
// SGD step (rate learning_rate) on the new sample and on qnReplayDraws
// samples drawn from the buffer, with squared loss on the normalised target
// and its error clipped to [−1, 1].
//
// Objective (objective: delay, the default, is all of the above, unchanged
// to the bit). Under the other objectives the output layer has one head
// more per term the objective weighs, beside the delivery-time head, which
// is always trained (ties, loops, give_up_after). The heads share the
// hidden layers and are trained together on each feedback, each by its own
// squared error; the loss and utilisation heads start at 0 and are read
// clamped to [0, 1] (trained unclamped, so that an estimate of a loss-free
// path can settle at 0, where a sigmoid would keep it at scattered small
// values). Each head estimates the value of the rest of the path, V_y(d),
// and the node's own channel enters measured, not learned: learned, the
// estimate of a channel the node has not used would be generalised from
// the one it uses (the neighbour one-hot is all that tells them apart), so
// a lossy first hop would make every first hop look lossy.
//   - loss: the estimate via y is 1 − (1 − p_xy)(1 − L_y), p_xy the drop
//     frequency of the node's own channel, an EWMA (weight qnDropWeight)
//     over the packets sent into it, a drop there (full queue or link
//     loss, reported by sim.Dropper) counting 1 and an arrival at y 0, and
//     L_y the loss head, trained on y's reported value: y's estimate for
//     its best channel (0 at y = d, 1 when y has none usable or the packet
//     reaches its hop limit at y). Its fixed point is the Bellman target
//     of a terminal loss cost, p_xy + (1 − p_xy)·V_y(d) (Watkins & Dayan,
//     "Q-learning", Machine Learning 8, 1992), as q-routing's sampled
//     target. Decisions compare loss in classes of qnLossBand and take the
//     lower delivery time within a class.
//   - utilisation: the estimate via y is max(u_xy, U_y), u_xy the busy
//     fraction of the node's own channel now (busyMeter: an EWMA of time
//     constant 1 s sampled at each decision) and U_y the utilisation head,
//     trained on y's reported value, which leaves out y's channels back to
//     the asking node (split horizon, as q-routing's). Drops do not enter
//     it. Decisions compare utilisation in classes of utilBand, delivery
//     time within a class. The estimates follow the current utilisation
//     (an unused path's falls back), so traffic keeps moving between paths
//     whose bottlenecks are close.
//   - mix {delay: w_d, loss: w_l, utilisation: w_u}: heads for the terms of
//     weight > 0; decisions on w_d·Q/z_xd + w_l·loss + w_u·util, z_xd this
//     node's zero-load time to d (see Mix), exact ties to the lower
//     delivery time; the feedback carries the three values of y's channel
//     of least cost (with split horizon when w_u > 0).
//
// Consensus averages all parameters, heads included, and works under every
// objective; give_up_after compares the delivery-time head. A learned state
// records the objective and holds every head; start_from loads only a
// state of the same objective (and shape). The measured parts, drop
// frequencies and utilisation, are not learned values: they start afresh
// in every run and are measured under learning: frozen too (the next node
// then reports each arrival with a feedback message carrying no values).
// With install_every the installed channel is the objective's choice on the
// snapshot (see the hop budget below for the loops that can hold).
//
// Consensus: every Every each node sends its parameters to every neighbour
// in-band (ParamsMessageBytes); a node keeps the parameters it sent in that
// round, θ_x⁰, and on receiving θ_y adds w·W_xy·(θ_y − θ_x⁰), W_xy the
// Metropolis weight 1/(1+max(deg_x,deg_y)) and w the consensus weight. When
// all of a round's messages arrive and no training intervenes, this is
// exactly one step θ ← (I − w(I − W))θ of Metropolis averaging.
//
// Install checkpoints (InstallEvery > 0): training goes on with every
// feedback, but forwarding follows a table installed at multiples of the
// interval: at each install the node copies its parameters into a snapshot
// and fixes, per destination, the greedy channel on that snapshot with the
// queue features of that instant. Between installs a packet takes its
// destination's installed channel; only when that channel is down does the
// node decide on its live parameters with the current queue features (a
// detected failure still moves traffic at once at the detecting node). The
// first packet for a destination before any install fixes its entry the
// same way. Route changes therefore happen at the installs only, failures
// aside.
//
// No packet goes straight back: when the channel chosen so (installed, or
// live because the installed one is down) leads to the node the packet
// just came from, and another usable channel exists, the packet takes the
// best of the others on the live parameters, a detour of that packet only
// (the installed entry stays, and no route change is counted). The reason
// is a failure: the node x that detects its installed channel towards d
// down decides live and may send packets back to its neighbour y, whose
// installed channel for d is still x; without the rule they would bounce
// between x and y until y's next install, and y's network, trained only
// by x's answers along the bounce, need not have learned the way round by
// then (on a ring of six at load 0.4 with one link down for 15 s and
// install_every 500ms, 11.5% of the packets were lost at full queues,
// against 0.04% without install_every; with the rule 0.04%). Sending a
// packet back to where it came from is never part of a loop-free path, so
// the detour costs nothing when the snapshots agree. An install at the
// detecting node would not help: the stale entry is the neighbour's, which
// learns of the failure only through its packets.
//
// The rule breaks two-node loops only. Longer ones can hold in the
// snapshots until the next install, above all under objective utilisation,
// whose classes a loop does not raise (on the contract suite's 3×3 grid at
// 10% load, 6 of 2700 packets reached the hop limit with install_every
// 500ms and 136 with 2s). So a packet that has made more hops than twice
// the topology's hop diameter (the hop budget) is past any reasonable
// detour: it leaves the installed channels and takes, per hop, the least
// live delivery-time estimate (not back where it came from while another
// channel exists), which the zero-load prior and the feedback of looping
// packets keep pointing towards the destination; with it none of those
// packets is lost. It too is a detour of that packet, not a route change.
type QNetwork struct {
	p      Params
	shared *qnShared
	nodes  []*qnNode // for tests and inspection only
	start  *State    // set by StartFrom: the parameters every node starts from
}

type qnShared struct {
	p      Params
	n      int
	sizes  []int // layer widths: in, hidden..., heads
	woff   []int // offset of layer l's weights
	boff   []int // offset of layer l's biases
	nParam int
	scale  float64 // T, seconds
	zl     []float64
	dist   [][]float64
	qCap   float64
	prior  bool // add zl to the output; false learns from scratch (tests)

	obj          int  // qnObjDelay, ...
	hLoss, hUtil int  // output head of the loss and utilisation estimates, −1 if none
	split        bool // values sent back leave out the channel to the asking node
	hopBudget    int  // with install_every: hops after which a packet is decided live
	w            Mix  // objective mix: the weights
}

var (
	_ sim.PerNode  = (*QNetwork)(nil)
	_ sim.Router   = (*qnNode)(nil)
	_ sim.Arrivals = (*qnNode)(nil)
	_ sim.Receiver = (*qnNode)(nil)
	_ sim.Dropper  = (*qnNode)(nil)
	_ sim.Detector = (*qnNode)(nil)
	_ sim.Timed    = (*qnNode)(nil)
)

// Objectives of q-network (qnShared.obj).
const (
	qnObjDelay = iota
	qnObjLoss
	qnObjUtil
	qnObjMix
)

// qnHeads returns the number of output heads objective o needs: delivery
// time always, loss and utilisation when o weighs them.
func qnHeads(o Objective) int {
	switch o.Name {
	case ObjectiveLoss, ObjectiveUtilisation:
		return 2
	case ObjectiveMix:
		h := 1
		if o.Mix.Loss > 0 {
			h++
		}
		if o.Mix.Utilisation > 0 {
			h++
		}
		return h
	}
	return 1
}

func newQNetwork(p Params, net *sim.Net) (sim.Agent, error) {
	switch p.Objective.Name {
	case ObjectiveDelay, ObjectiveLoss, ObjectiveUtilisation:
	case ObjectiveMix:
		if err := checkMix(p.Objective.Mix); err != nil {
			return nil, fmt.Errorf("agents: q-network: %w", err)
		}
	default:
		return nil, fmt.Errorf("agents: q-network: unknown objective %q", p.Objective.Name)
	}
	return newQNetworkOpt(p, net, true), nil
}

func newQNetworkOpt(p Params, net *sim.Net, prior bool) *QNetwork {
	n := net.NumNodes()
	s := &qnShared{p: p, n: n, prior: prior, hLoss: -1, hUtil: -1}
	switch p.Objective.Name {
	case ObjectiveLoss:
		s.obj, s.hLoss = qnObjLoss, 1
	case ObjectiveUtilisation:
		s.obj, s.hUtil, s.split = qnObjUtil, 1, true
	case ObjectiveMix:
		s.obj, s.w = qnObjMix, p.Objective.Mix
		h := 1
		if s.w.Loss > 0 {
			s.hLoss, h = h, h+1
		}
		if s.w.Utilisation > 0 {
			s.hUtil, s.split = h, true
		}
	}
	s.sizes = append([]int{3*n + 2}, p.Hidden...)
	s.sizes = append(s.sizes, qnHeads(p.Objective))
	off := 0
	for l := 0; l+1 < len(s.sizes); l++ {
		s.woff = append(s.woff, off)
		off += s.sizes[l] * s.sizes[l+1]
		s.boff = append(s.boff, off)
		off += s.sizes[l+1]
	}
	s.nParam = off
	if p.InstallEvery > 0 {
		s.hopBudget = 2 * hopDiameter(net)
	}
	s.zl = zeroLoadCosts(net, p.packetBytes())
	s.dist = allPairsDist(net, s.zl)
	s.qCap = qCeiling(s.dist)
	for _, row := range s.dist {
		for _, v := range row {
			if !math.IsInf(v, 1) && v > s.scale {
				s.scale = v
			}
		}
	}
	if s.scale == 0 {
		s.scale = 1
	}
	return &QNetwork{p: p, shared: s}
}

// Name returns the agent's label.
func (a *QNetwork) Name() string { return a.p.Canonical() }

// Node builds the router of the node behind v.
func (a *QNetwork) Node(v *sim.NodeView) sim.Router {
	r := newQNNode(a.shared, v)
	if a.start != nil {
		copy(r.theta, a.start.Params[r.id])
		copy(r.target, a.start.Target[r.id])
	}
	if r.snap != nil {
		copy(r.snap, r.theta) // the run's first forwarding parameters
	}
	a.nodes = append(a.nodes, r)
	return r
}

// qnNode is one node's network, target copy, replay buffer and scratch.
type qnNode struct {
	s    *qnShared
	v    *sim.NodeView
	net  *sim.Net
	id   int
	out  []int
	nbr  []int // neighbour node per Out index
	proc float64
	deg  int // distinct neighbours (Metropolis)

	theta, target, sent []float64

	acts   [][]float64 // per layer ≥ 1: activations (scratch)
	deltas [][]float64
	common []float64 // first-layer partial sums shared by a decision's candidates

	// replay ring; rl and ru (loss and utilisation targets) only with
	// those heads
	rd      []int32
	rk      []int16
	rq, rt  []float64
	rl, ru  []float64
	rn, rat int
	updates int

	// objectives other than delay: the hop limit (a packet reaching it is
	// lost), per channel the drop frequency and the utilisation, the mix's
	// delay weight over the zero-load time to each destination (1/s), and
	// the estimates of the last choice's channel
	hopLimit            int
	drops               []float64
	meter               busyMeter
	wz                  []float64
	pickD, pickL, pickU float64

	cons *consensusState
	pref prefs
	give *giveUp // nil unless give_up_after is set

	// with install_every: the parameters forwarding uses, copied from theta
	// at every install, and the installed channel (Out index) per
	// destination, −1 until fixed
	snap []float64
	fwd  []int32
}

// tagQNInstall is q-network's install timer.
const tagQNInstall = 2

// install copies the parameters into the forwarding snapshot and fixes every
// destination's channel: the greedy choice on the snapshot with the queue
// features of now, counted as a route change where it differs from the
// preference so far. Cost O(N·degree·network size), no allocation.
func (r *qnNode) install() {
	copy(r.snap, r.theta)
	for d := 0; d < r.s.n; d++ {
		if d == r.id {
			continue
		}
		best := r.greedy(r.snap, d)
		r.fwd[d] = int32(best)
		r.pref.saw(r.v, d, best)
	}
}

// hopDiameter returns the largest hop count of a shortest path between two
// nodes of the intact topology (breadth-first search from every node).
func hopDiameter(net *sim.Net) int {
	n := net.NumNodes()
	dist := make([]int, n)
	queue := make([]int, 0, n)
	diam := 0
	for src := 0; src < n; src++ {
		for i := range dist {
			dist[i] = -1
		}
		dist[src] = 0
		queue = append(queue[:0], src)
		for len(queue) > 0 {
			u := queue[0]
			queue = queue[1:]
			diam = max(diam, dist[u])
			for _, c := range net.Out[u] {
				if v := net.Channels[c].To; dist[v] < 0 {
					dist[v] = dist[u] + 1
					queue = append(queue, v)
				}
			}
		}
	}
	return diam
}

// greedy returns the Out index of the best usable channel for d under
// parameters theta and the current queue features, −1 if none.
func (r *qnNode) greedy(theta []float64, d int) int { return r.choose(theta, d, -1, false) }

// choose returns the Out index of the best usable channel for d, leaving out
// those towards node avoid (−1: none), under parameters theta and the
// current queue features, −1 if none; the order is the objective's (see
// QNetwork): the least delivery time under delay (or with byDelay), else
// the least primary value (loss class, utilisation class or mix cost) with
// exact ties to the lower delivery time, and the lowest Out index on ties.
// It leaves the chosen channel's delivery time, loss and utilisation
// estimates in pickD, pickL, pickU (0 for a head the objective lacks or
// with byDelay). Cost O(degree·network size), no allocation.
func (r *qnNode) choose(theta []float64, d, avoid int, byDelay bool) int {
	r.s.firstLayerCommon(theta, r.id, d, r.common)
	best, bestP, bestD := -1, 0.0, 0.0
	for k, c := range r.out {
		if r.nbr[k] == avoid || !r.v.Up(c) {
			continue
		}
		dl := r.qvalue(theta, d, k, r.queueFeature(c))
		if r.s.obj == qnObjDelay || byDelay {
			if best < 0 || dl < bestD {
				best, bestD = k, dl
			}
			continue
		}
		l, u := r.estimates(k, c)
		pr := r.primary(d, dl, l, u)
		if best < 0 || pr < bestP || pr == bestP && dl < bestD {
			best, bestP, bestD = k, pr, dl
			r.pickL, r.pickU = l, u
		}
	}
	r.pickD = bestD
	return best
}

// estimates returns the loss and utilisation estimates via channel c (Out
// index k) from the last forward pass for it: 1 − (1 − drop frequency of
// c)·(1 − loss head) and max(utilisation of c now, utilisation head), the
// heads clamped to [0, 1]; 0 for a term the objective lacks.
func (r *qnNode) estimates(k, c int) (loss, util float64) {
	out := r.acts[len(r.acts)-1]
	if h := r.s.hLoss; h >= 0 {
		loss = 1 - (1-r.drops[k])*(1-math.Min(math.Max(out[h], 0), 1))
	}
	if h := r.s.hUtil; h >= 0 {
		util = math.Max(r.meter.at(r.v, k, c), math.Min(math.Max(out[h], 0), 1))
	}
	return loss, util
}

// primary returns the value decisions compare first under an objective
// other than delay, from a channel's delivery time dl (seconds), loss l and
// utilisation u: the loss class floor(l/qnLossBand), the utilisation class
// floor(u/utilBand), or the mix cost w_d·dl/z + w_l·l + w_u·u.
func (r *qnNode) primary(d int, dl, l, u float64) float64 {
	switch r.s.obj {
	case qnObjLoss:
		return math.Floor(l / qnLossBand)
	case qnObjUtil:
		return math.Floor(u / utilBand)
	}
	return r.wz[d]*dl + r.s.w.Loss*l + r.s.w.Utilisation*u
}

func newQNNode(s *qnShared, v *sim.NodeView) *qnNode {
	r := &qnNode{s: s, v: v, net: v.Net(), id: v.ID(), out: v.Out()}
	r.proc = r.net.Graph.Nodes[r.id].Processing.Seconds()
	r.nbr = make([]int, len(r.out))
	for k, c := range r.out {
		r.nbr[k] = r.net.Channels[c].To
	}
	r.deg = neighbourCount(r.net, r.id)
	r.theta = make([]float64, s.nParam)
	r.initParams(v.Rand())
	r.target = append([]float64(nil), r.theta...)
	for l := 1; l < len(s.sizes); l++ {
		r.acts = append(r.acts, make([]float64, s.sizes[l]))
		r.deltas = append(r.deltas, make([]float64, s.sizes[l]))
	}
	r.common = make([]float64, s.sizes[1])
	r.give = newGiveUp(s.p.GiveUpAfter, r.net.NumNodes())
	r.pref = newPrefs(s.n)
	if s.p.InstallEvery > 0 {
		r.snap = append([]float64(nil), r.theta...)
		r.fwd = make([]int32, s.n)
		for d := range r.fwd {
			r.fwd[d] = -1
		}
		v.After(s.p.InstallEvery, tagQNInstall)
	}
	R := s.p.Replay
	r.rd, r.rk, r.rq, r.rt = make([]int32, R), make([]int16, R), make([]float64, R), make([]float64, R)
	if s.obj != qnObjDelay {
		r.hopLimit = v.HopLimit()
	}
	if s.hLoss >= 0 {
		r.rl = make([]float64, R)
		r.drops = make([]float64, len(r.out))
	}
	if s.hUtil >= 0 {
		r.ru = make([]float64, R)
		r.meter = newBusyMeter(len(r.out))
	}
	if s.obj == qnObjMix {
		r.wz = make([]float64, s.n)
		for d, z := range s.dist[r.id] {
			if z == 0 || math.IsInf(z, 1) {
				z = 1 // this node, or unreachable: every channel's delay term is the same
			}
			r.wz[d] = s.w.Delay / z
		}
	}
	if s.p.Consensus != nil && !s.p.frozen() {
		r.cons = newConsensusState(s.p.Consensus)
		r.sent = make([]float64, s.nParam)
		v.After(s.p.Consensus.Every, tagConsensus)
	}
	return r
}

// initParams draws weights uniformly in ±sqrt(6/(fan_in+fan_out)) (Glorot &
// Bengio 2010; the first layer's fan-in counts its five non-zero inputs),
// biases 0, and, with the zero-load prior, an all-zero output layer.
func (r *qnNode) initParams(rng interface{ Float64() float64 }) {
	s := r.s
	L := len(s.sizes) - 1
	for l := 0; l < L; l++ {
		in, out := s.sizes[l], s.sizes[l+1]
		if l == 0 {
			in = 5
		}
		lim := math.Sqrt(6 / float64(in+out))
		if l == L-1 && s.prior {
			lim = 0
		}
		w := r.theta[s.woff[l]:s.boff[l]]
		for i := range w {
			w[i] = lim * (2*rng.Float64() - 1)
		}
	}
}

// firstLayerCommon fills dst with the first layer's bias plus the rows of
// this node's and the destination's one-hot inputs. Layer 0 weights are
// stored input-major: w[i*h + j].
func (s *qnShared) firstLayerCommon(theta []float64, x, d int, dst []float64) {
	h := s.sizes[1]
	w := theta[s.woff[0]:s.boff[0]]
	b := theta[s.boff[0] : s.boff[0]+h]
	wx := w[x*h : x*h+h]
	wd := w[(s.n+d)*h : (s.n+d)*h+h]
	for j := range dst {
		dst[j] = b[j] + wx[j] + wd[j]
	}
}

// forward evaluates the network for candidate neighbour y with queue
// feature qf, from first-layer partial sums common, leaving activations in
// acts. It returns the normalised output.
func (s *qnShared) forward(theta, common []float64, y int, qf, up float64, acts [][]float64) float64 {
	h := s.sizes[1]
	w := theta[s.woff[0]:s.boff[0]]
	wy := w[(2*s.n+y)*h : (2*s.n+y)*h+h]
	wq := w[(3*s.n)*h : (3*s.n)*h+h]
	wu := w[(3*s.n+1)*h : (3*s.n+1)*h+h]
	a := acts[0]
	for j := range a {
		a[j] = fastTanh(common[j] + wy[j] + wq[j]*qf + wu[j]*up)
	}
	L := len(s.sizes) - 1
	for l := 1; l < L; l++ {
		in, out := s.sizes[l], s.sizes[l+1]
		wl := theta[s.woff[l]:s.boff[l]]
		bl := theta[s.boff[l] : s.boff[l]+out]
		prev, cur := acts[l-1], acts[l]
		for j := 0; j < out; j++ {
			z := bl[j]
			row := wl[j*in : j*in+in]
			for i, v := range prev {
				z += row[i] * v
			}
			if l < L-1 {
				z = fastTanh(z)
			}
			cur[j] = z
		}
	}
	return acts[L-1][0]
}

// queueFeature returns channel c's normalised queue feature.
func (r *qnNode) queueFeature(c int) float64 {
	w := r.v.Backlog(c) / r.net.Channels[c].Bandwidth
	return math.Min(w/r.s.scale, qnMaxQueueFeature)
}

// qvalue returns Q(d, out[k]) in seconds with parameters theta; common must
// hold firstLayerCommon(theta, id, d).
func (r *qnNode) qvalue(theta []float64, d, k int, qf float64) float64 {
	y := r.nbr[k]
	v := r.s.scale * r.s.forward(theta, r.common, y, qf, 1, r.acts)
	if r.s.prior {
		v += r.s.zl[r.out[k]] + r.s.dist[y][d]
	}
	return v
}

// Route picks the outgoing channel for p and records the decision's queue
// feature in p.Aux[1]. With install_every the greedy choice is the
// destination's installed channel (see QNetwork). Cost: O(degree·network
// size), no allocation.
func (r *qnNode) Route(p *sim.Packet) int {
	d := p.Dst
	theta := r.theta
	if r.snap != nil {
		theta = r.snap
	}
	best, bestQF := -1, 0.0
	if r.give != nil {
		r.s.firstLayerCommon(theta, r.id, d, r.common)
		least := math.Inf(1)
		for k, c := range r.out {
			if r.v.Up(c) {
				least = math.Min(least, r.qvalue(theta, d, k, r.queueFeature(c)))
			}
		}
		if r.give.drop(d, least, r.v.Now()) {
			return sim.NoRoute
		}
	}
	if e := r.s.p.Explore; e > 0 && r.v.Rand().Float64() < e {
		n := 0
		for _, c := range r.out {
			if r.v.Up(c) {
				n++
			}
		}
		if n > 0 {
			j := r.v.Rand().IntN(n)
			for k, c := range r.out {
				if r.v.Up(c) {
					if j == 0 {
						best = k
						break
					}
					j--
				}
			}
		}
	} else {
		switch {
		case r.fwd == nil:
			best = r.greedy(theta, d)
		case r.fwd[d] < 0:
			best = r.greedy(theta, d)
			r.fwd[d] = int32(best)
		case r.v.Up(r.out[r.fwd[d]]):
			best = int(r.fwd[d])
		default:
			best = r.greedy(r.theta, d) // the installed channel is down: the live parameters
		}
		r.pref.saw(r.v, d, best)
		if r.fwd != nil && best >= 0 && (r.nbr[best] == p.Prev || p.Hops > r.s.hopBudget) {
			// never straight back while following installed channels, and
			// the live delivery time past the hop budget (see QNetwork); a
			// detour is per packet, not a route change
			if k := r.choose(r.theta, d, p.Prev, p.Hops > r.s.hopBudget); k >= 0 {
				best = k
			}
		}
	}
	if best < 0 {
		return sim.NoRoute
	}
	bestQF = r.queueFeature(r.out[best])
	p.Aux[1] = bestQF
	return r.out[best]
}

// value returns min over usable channels of Q(d,·) under the target network,
// plus processing; 0 at the destination, qCap when nothing is usable.
func (r *qnNode) value(d int) float64 {
	if d == r.id {
		return 0
	}
	r.s.firstLayerCommon(r.target, r.id, d, r.common)
	best := math.Inf(1)
	for k, c := range r.out {
		if !r.v.Up(c) {
			continue
		}
		best = math.Min(best, r.qvalue(r.target, d, k, r.queueFeature(c)))
	}
	if math.IsInf(best, 1) {
		return r.s.qCap
	}
	return math.Min(math.Max(best, 0)+r.proc, r.s.qCap)
}

// Arrived returns the Q-routing feedback for the hop just made.
func (r *qnNode) Arrived(p *sim.Packet, in int) {
	if r.s.p.frozen() {
		if r.s.hLoss >= 0 {
			// nothing learns, but the sender still measures its drop
			// frequency: tell it the packet arrived
			r.v.Tell(in^1, sim.Message{Type: msgNetFeedback, Dst: p.Dst})
		}
		return
	}
	qs := (p.LastWait + p.LastTx).Seconds()
	if r.s.obj != qnObjDelay {
		avoid := -1
		if r.s.split {
			avoid = p.Prev // split horizon: not back through the asking node
		}
		t, l, u := r.objValue(p.Dst, avoid)
		if p.Dst != r.id && p.Hops >= r.hopLimit {
			l, u = 1, 1 // the packet expires here: lost
		}
		r.v.Tell(in^1, sim.Message{Type: msgNetFeedback, Dst: p.Dst, Value: qs + t, Aux: p.Aux[1], Aux2: l, Aux3: u})
		return
	}
	t := r.value(p.Dst)
	r.v.Tell(in^1, sim.Message{Type: msgNetFeedback, Dst: p.Dst, Value: qs + t, Aux: p.Aux[1]})
}

// objValue returns, under an objective other than delay, the delivery
// time (plus processing), loss and utilisation estimates of the best usable
// channel to d on the target network, leaving out channels towards node
// avoid: 0, 0, 0 at d itself; the ceiling, 1, 1 when none is usable.
func (r *qnNode) objValue(d, avoid int) (delay, loss, util float64) {
	if d == r.id {
		return 0, 0, 0
	}
	if r.choose(r.target, d, avoid, false) < 0 || math.IsInf(r.pickD, 1) {
		return r.s.qCap, 1, 1
	}
	return math.Min(math.Max(r.pickD, 0)+r.proc, r.s.qCap), r.pickL, r.pickU
}

// Receive trains on feedback and mixes in neighbours' parameters.
func (r *qnNode) Receive(m *sim.Message, in int) {
	k := -1
	for i, c := range r.out {
		if c == in^1 {
			k = i
			break
		}
	}
	if k < 0 {
		return
	}
	if r.s.p.frozen() {
		if m.Type == msgNetFeedback && r.drops != nil {
			r.drops[k] -= qnDropWeight * r.drops[k]
		}
		return
	}
	switch m.Type {
	case msgNetFeedback:
		if m.Dst == r.id || m.Dst < 0 || m.Dst >= r.s.n {
			return
		}
		target := math.Min(m.Value+r.net.Channels[r.out[k]].Delay.Seconds(), r.s.qCap)
		if r.drops != nil {
			r.drops[k] -= qnDropWeight * r.drops[k] // the packet crossed the channel
		}
		r.learn(m.Dst, k, m.Aux, target, m.Aux2, m.Aux3)
	case msgParams:
		r.mix(r.nbr[k], m.Vec)
	}
}

// learn stores a sample (targets: delivery time in seconds, the next
// node's loss and utilisation values, used by the heads the objective has)
// and takes SGD steps on it and on replayed samples.
func (r *qnNode) learn(d, k int, qf, target, loss, util float64) {
	R := len(r.rd)
	r.rd[r.rat], r.rk[r.rat], r.rq[r.rat], r.rt[r.rat] = int32(d), int16(k), qf, target
	if r.rl != nil {
		r.rl[r.rat] = loss
	}
	if r.ru != nil {
		r.ru[r.rat] = util
	}
	r.rat = (r.rat + 1) % R
	if r.rn < R {
		r.rn++
	}
	r.sgd(d, k, qf, target, loss, util)
	if r.rn > 1 {
		rng := r.v.Rand()
		for i := 0; i < qnReplayDraws; i++ {
			j := rng.IntN(r.rn)
			if r.rl != nil {
				loss = r.rl[j]
			}
			if r.ru != nil {
				util = r.ru[j]
			}
			r.sgd(int(r.rd[j]), int(r.rk[j]), r.rq[j], r.rt[j], loss, util)
		}
	}
	r.updates++
	if r.updates%r.s.p.TargetSync == 0 {
		copy(r.target, r.theta)
	}
}

// sgd takes one step on the squared errors of the outputs for sample
// (d, out[k], qf): the normalised delivery-time output against target
// seconds, and the loss and utilisation heads (unclamped) against loss and
// util where the objective has them.
func (r *qnNode) sgd(d, k int, qf, target, loss, util float64) {
	s := r.s
	y := r.nbr[k]
	goal := target
	if s.prior {
		goal -= s.zl[r.out[k]] + s.dist[y][d]
	}
	goal /= s.scale
	s.firstLayerCommon(r.theta, r.id, d, r.common)
	outv := s.forward(r.theta, r.common, y, qf, 1, r.acts)
	lr := s.p.LearningRate
	L := len(s.sizes) - 1
	top := r.deltas[L-1]
	top[0] = math.Max(-1, math.Min(1, outv-goal)) // d(½e²)/d out, clipped
	if h := s.hLoss; h >= 0 {
		top[h] = math.Max(-1, math.Min(1, r.acts[L-1][h]-loss))
	}
	if h := s.hUtil; h >= 0 {
		top[h] = math.Max(-1, math.Min(1, r.acts[L-1][h]-util))
	}
	for l := L - 1; l >= 1; l-- {
		in, out := s.sizes[l], s.sizes[l+1]
		wl := r.theta[s.woff[l]:s.boff[l]]
		bl := r.theta[s.boff[l] : s.boff[l]+out]
		prev := r.acts[l-1]
		dprev := r.deltas[l-1]
		cur := r.deltas[l]
		for i := range dprev {
			dprev[i] = 0
		}
		for j := 0; j < out; j++ {
			row := wl[j*in : j*in+in]
			dj := cur[j]
			for i := range row {
				dprev[i] += row[i] * dj
				row[i] -= lr * dj * prev[i]
			}
			bl[j] -= lr * dj
		}
		for i, a := range prev {
			dprev[i] *= 1 - a*a
		}
	}
	// first layer: sparse inputs
	h := s.sizes[1]
	w := r.theta[s.woff[0]:s.boff[0]]
	b := r.theta[s.boff[0] : s.boff[0]+h]
	dl := r.deltas[0]
	xs := [...]int{r.id, s.n + d, 2*s.n + y}
	for _, i := range xs {
		row := w[i*h : i*h+h]
		for j, dj := range dl {
			row[j] -= lr * dj
		}
	}
	wq := w[(3*s.n)*h : (3*s.n)*h+h]
	wu := w[(3*s.n+1)*h : (3*s.n+1)*h+h]
	for j, dj := range dl {
		wq[j] -= lr * dj * qf
		wu[j] -= lr * dj
		b[j] -= lr * dj
	}
}

// Dropped counts a loss on the node's own channel out (full queue or link
// loss) in that channel's drop frequency, a measurement that goes on under
// learning: frozen. Under objectives without a loss term a drop teaches
// nothing.
func (r *qnNode) Dropped(_ *sim.Packet, out int, _ sim.DropReason) {
	if r.drops == nil {
		return // measured under learning: frozen too
	}
	for k, c := range r.out {
		if c == out {
			r.drops[k] += qnDropWeight * (1 - r.drops[k])
			return
		}
	}
}

// Detected needs no action: decisions skip channels not Up, and the network
// has no per-channel state to reset.
func (r *qnNode) Detected(out int, up bool) {}

// Timer runs an install or a consensus round (send the parameters,
// remember them).
func (r *qnNode) Timer(tag int) {
	if tag == tagQNInstall {
		r.install()
		r.v.After(r.s.p.InstallEvery, tagQNInstall)
		return
	}
	if tag != tagConsensus || r.cons == nil {
		return
	}
	copy(r.sent, r.theta)
	vec := append([]float64(nil), r.theta...) // shared by this round's messages; receivers only read
	last := -1
	for k, c := range r.out {
		// one message per neighbour (parallel links: the first usable one),
		// as the Metropolis weights count neighbours
		if r.nbr[k] == last || !r.v.Up(c) {
			continue
		}
		last = r.nbr[k]
		r.v.Send(c, sim.Message{Type: msgParams, Vec: vec, Bytes: ParamsMessageBytes(len(vec))})
	}
	r.v.After(r.cons.every, tagConsensus)
}

// mix adds w·W_xy·(θ_y − θ_x⁰) for neighbour y's parameters vec.
func (r *qnNode) mix(y int, vec []float64) {
	if len(vec) != len(r.theta) || r.sent == nil {
		return
	}
	a := r.cons.weight * metropolisWeight(r.deg, neighbourCount(r.net, y))
	for i, v := range vec {
		r.theta[i] += a * (v - r.sent[i])
	}
}

// fastTanh is tanh by the [7/6] Padé approximant from Lambert's continued
// fraction, x(135135 + 17325x² + 378x⁴ + x⁶)/(135135 + 62370x² + 3150x⁴ +
// 28x⁶), saturated at |x| > 4.97: absolute error below 1e-4 everywhere
// (checked against math.Tanh in TestFastTanh), about 4× faster than
// math.Tanh. The network uses it throughout, with derivative 1 − tanh².
func fastTanh(x float64) float64 {
	if x > 4.97 {
		return 1
	}
	if x < -4.97 {
		return -1
	}
	x2 := x * x
	return x * (135135 + x2*(17325+x2*(378+x2))) / (135135 + x2*(62370+x2*(3150+x2*28)))
}
