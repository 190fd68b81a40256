package sim

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
)

// FlowGen is flow traffic: transfers of many packets. Flows from s to d
// start as a Poisson process of rate Rates[s][d] flows per second (scaled
// by Traffic.Phases, not replaced by Traffic.Periods); a flow's size in
// bytes is drawn from Size and cut into packets of PacketBytes (the last one
// holds the rest), which the source emits back to back at its sending rate:
// packet k (from 0) leaves at start + (bytes before it)·8/rate. Every packet
// of a flow carries the same flow label, so label hashing keeps a flow on
// one path. A source that is down when a packet is due stops the flow: it
// ends failed.
type FlowGen struct {
	Rates [][]float64 // flows per second from s to d
	Size  SizeDist    // flow sizes in bytes (draws rounded up to whole bytes)
	// RateLimit is the sending rate in bit/s; 0 means the source's access
	// rate: the bandwidth of its fastest channel on the intact network.
	RateLimit float64
	// PacketBytes is the size of a flow's packets; 0 means
	// DefaultFlowPacketBytes.
	PacketBytes int
	// MiceBytes and ElephantBytes set the size classes of the results: a
	// flow of at most MiceBytes is a mouse, of at least ElephantBytes an
	// elephant, otherwise medium. 0 means DefaultMiceBytes and
	// DefaultElephantBytes.
	MiceBytes, ElephantBytes float64
	// Sample is the most measured flows a run records one by one
	// (FlowResult.Sample); 0 records none. Every measured flow is kept
	// while there are at most Sample of them; beyond, a uniform sample of
	// Sample flows by reservoir sampling (Vitter, Random Sampling with a
	// Reservoir, 1985, algorithm R) over the order in which flows end,
	// drawn from the run's own stream StreamFlowSample: a pure function of
	// the run.
	Sample int
}

// Defaults of FlowGen.
const (
	DefaultFlowPacketBytes = 1500 // a common maximum transmission unit (common practice)
	DefaultMiceBytes       = 100e3
	DefaultElephantBytes   = 10e6
)

// FlowClass is a size class of flows.
type FlowClass uint8

// Flow size classes.
const (
	Mice FlowClass = iota
	Medium
	Elephant
	NumFlowClasses
)

var flowClassNames = [NumFlowClasses]string{"mice", "medium", "elephant"}

// String returns the class's name in the results.
func (c FlowClass) String() string { return flowClassNames[c] }

// FlowResult is what a run measured of its flows: those started at or after
// the warm-up. A flow completes when its last packet is delivered; it fails
// when one of its packets is dropped or its source stops it; it is
// unfinished when the run ends first.
//
// The slowdown of a completed flow is its completion time over its
// completion time alone on the idle network (IdealFCT, with the channels'
// bandwidths and delays when it started): the best of the hop-count
// shortest path and, per bandwidth threshold, the path of least zero-load
// delay over the channels at least that wide, so that a flow sent alone
// along the best of these paths has slowdown 1 wherever that path is.
// Other traffic only delays a packet in the FIFO store-and-forward tandem,
// so a flow kept on one of the candidate paths never falls below 1. A
// routing that finds a path better than every candidate (rare: IdealFCT
// states how often), or that splits one flow over several paths, can.
type FlowResult struct {
	Started, Completed, Failed, Unfinished int64
	Classes                                [NumFlowClasses]FlowClassResult
	// Delivered counts the delivered packets of measured flows, Reordered
	// those of them that arrived after a packet sent later in the same flow
	// (a sequence number below the next expected one: Morton et al., RFC
	// 4737, Packet Reordering Metrics, 2006).
	Delivered, Reordered int64
	// ReorderedFlows counts the measured flows that saw any reordering.
	ReorderedFlows int64
	// Sample holds at most FlowGen.Sample of the measured flows (see
	// there), ordered by flow id.
	Sample []FlowRecord
}

// FlowOutcome is how a flow ended.
type FlowOutcome uint8

// Flow outcomes.
const (
	FlowCompleted  FlowOutcome = iota // every packet delivered
	FlowFailed                        // a packet dropped, or the source stopped it
	FlowUnfinished                    // still sending or in flight when the run ended
)

var flowOutcomeNames = [...]string{"completed", "failed", "unfinished"}

// String returns the outcome's name in the results.
func (o FlowOutcome) String() string { return flowOutcomeNames[o] }

// FlowRecord is one measured flow.
type FlowRecord struct {
	// ID numbers the run's flows from 1 in the order they started,
	// warm-up included.
	ID       int64
	Src, Dst int
	Size     int64 // bytes
	Class    FlowClass
	Start    Time // emission of the first packet
	// End is the delivery of the last packet of a completed flow, −1
	// otherwise.
	End Time
	// Ideal is the completion time alone on the idle network along the best
	// of IdealFCT's candidate paths, with the channels' parameters at Start;
	// −1 when the destination cannot be reached on the intact network.
	Ideal     Time
	Packets   int32 // packets sent
	Delivered int32 // packets delivered
	Reordered int32 // packets delivered below the next expected sequence number
	Outcome   FlowOutcome
}

// FlowClassResult is what one size class of flows measured.
type FlowClassResult struct {
	Started, Completed, Failed int64
	// FCT is the completion time of completed flows in seconds: from the
	// first packet's emission to the last packet's delivery.
	FCT    *Histogram
	FCTSum float64
	// Slowdown is FCT over the idle-network completion time (FlowResult
	// documents it), for completed flows between reachable nodes.
	Slowdown    *Histogram
	SlowdownSum float64
	Bytes       float64 // bytes of completed flows
}

// IdealFCT returns the completion time of a flow of size bytes from src to
// dst on the idle network, alone: packets of packetBytes (the last holding
// the rest) paced at rate bit/s, over channels of bandwidth bw[c] (bit/s)
// and propagation delay delay[c], plus each intermediate node's processing
// time, along the best of a set of candidate paths: the hop-count shortest
// path of HopRoute and, for each of up to IdleThresholds bandwidth
// thresholds b (the smallest channel bandwidth always one of them), the
// path of least zero-load delay (propagation, processing and one full
// packet's transmission per hop) over the channels of bandwidth ≥ b. A
// mouse's best is then the low-delay path, an elephant's the wide one; the
// pacing rate caps the bottleneck. The candidates hold the best of all
// simple paths in most cases and are never better than it (see the tests
// for the measured share). It returns −1 when dst cannot be reached.
func IdealFCT(n *Net, src, dst int, size int64, packetBytes int, rate float64, bw []float64, delay []Time) Time {
	prm := &staticParams{bw, delay}
	return newIdleRoutes(n, packetBytes).fct(src, dst, size, rate, prm)
}

// chanParams gives a channel's current bandwidth and propagation delay.
type chanParams interface {
	chanParams(c int) (float64, Time)
}

type staticParams struct {
	bw    []float64
	delay []Time
}

func (s *staticParams) chanParams(c int) (float64, Time) { return s.bw[c], s.delay[c] }

func (e *engine) chanParams(c int) (float64, Time) { return e.ch[c].bw, e.ch[c].delay }

// idealFCT is exact for the engine's store-and-forward FIFO channels. The
// departure of packet r from hop i is D(r,i) = max(D(r,i−1) + d(i−1),
// D(r−1,i)) + s(r)/b(i), and packet r leaves the source at a(r) (the
// pacing, hop 0): a tandem of queues in max-plus form (Baccelli, Cohen,
// Olsder & Quadrat, Synchronization and Linearity, 1992), whose last value
// is the longest path through the lattice of (packet, hop) cells. With
// packets 1..n−1 equal and the last one smaller, a longest path serves
// packets 1..n−1 all at one hop j, carries packet n−1 on to a hop k ≥ j,
// and packet n from k to the end: maximised over j ≤ k by one pass along
// the path. Transmission times are rounded to nanoseconds per packet, as
// the engine does. The path follows the next-hop channels next (a tree into
// dst that src reaches), or HopRoute's when next is nil; src ≠ dst, and dst
// is reachable. Cost O(hops · degree), no allocation.
func idealFCT(n *Net, src, dst int, size int64, packetBytes int, rate float64, prm chanParams, next []int32) Time {
	np := (size + int64(packetBytes) - 1) / int64(packetBytes)
	last := size - (np-1)*int64(packetBytes)
	hop := func(v int) (c, to int, full, lt, d Time) {
		if next == nil {
			c = HopRoute(n, v, dst)
		} else {
			c = int(next[v])
		}
		to = n.Channels[c].To
		b, dl := prm.chanParams(c)
		if to != dst {
			dl += n.Graph.Nodes[to].Processing
		}
		return c, to, txTime(int64(packetBytes), b), txTime(last, b), dl
	}
	// first pass: totals of the last packet's transmissions and the delays
	var lTot, dTot Time
	for v := src; v != dst; {
		_, to, _, lt, d := hop(v)
		lTot += lt
		dTot += d
		v = to
	}
	pace := func(bytes int64) Time { return Time(math.Round(float64(bytes) * 8 / rate * 1e9)) }
	aN := pace(size - last) // the last packet leaves the source
	best := aN + lTot + dTot
	if np == 1 {
		return best
	}
	aN1 := pace(size - last - int64(packetBytes))
	bestX := aN1 + dTot      // j = 0: packets 1..n−1 held by the pacing
	var prefix Time          // Σ_{i<k} (full_i + d_i)
	lSuf, dSuf := lTot, dTot // Σ_{i≥k} last_i, Σ_{i≥k} d_i
	for v := src; v != dst; {
		_, to, full, lt, d := hop(v)
		bestX = max(bestX+full, prefix+Time(np-1)*full+dSuf)
		best = max(best, bestX+lSuf)
		prefix += full + d
		lSuf -= lt
		dSuf -= d
		v = to
	}
	return best
}

// Check reports whether d is a usable size distribution.
func (d SizeDist) Check() error {
	bad := func(x float64) bool { return math.IsNaN(x) || math.IsInf(x, 0) }
	switch d.Kind {
	case Fixed:
		if d.Bytes <= 0 {
			return errors.New("fixed size must be positive")
		}
	case Exponential:
		if !(d.MeanBytes > 0) || bad(d.MeanBytes) {
			return errors.New("mean size must be positive")
		}
	case Bimodal:
		if d.SmallBytes <= 0 || d.LargeBytes <= 0 || !(d.LargeFraction >= 0 && d.LargeFraction <= 1) {
			return errors.New("bimodal sizes must be positive and the fraction in [0, 1]")
		}
	case Pareto:
		if !(d.Shape > 1) || bad(d.Shape) {
			return fmt.Errorf("pareto shape %g must exceed 1 (the mean is infinite otherwise)", d.Shape)
		}
		if !(d.MeanBytes > 0) || bad(d.MeanBytes) {
			return errors.New("pareto mean size must be positive")
		}
	case Lognormal:
		if bad(d.Mu) || !(d.Sigma >= 0) || bad(d.Sigma) {
			return errors.New("lognormal mu must be finite and sigma finite and non-negative")
		}
	case Classes:
		if len(d.Classes) == 0 {
			return errors.New("a mix needs at least one class")
		}
		var sum float64
		for i, c := range d.Classes {
			if !(c.Bytes > 0) || bad(c.Bytes) {
				return fmt.Errorf("mix class %d: size must be positive", i)
			}
			if !(c.Fraction >= 0) || bad(c.Fraction) {
				return fmt.Errorf("mix class %d: fraction must be non-negative", i)
			}
			sum += c.Fraction
		}
		if math.Abs(sum-1) > 1e-9 {
			return fmt.Errorf("mix fractions add up to %g, not 1", sum)
		}
	case Empirical:
		if len(d.CDF) == 0 {
			return errors.New("a cdf needs at least one point")
		}
		for i, p := range d.CDF {
			if !(p.Bytes > 0) || bad(p.Bytes) {
				return fmt.Errorf("cdf point %d: size must be positive", i)
			}
			if !(p.P > 0 && p.P <= 1) {
				return fmt.Errorf("cdf point %d: probability %g is outside (0, 1]", i, p.P)
			}
			if i > 0 && (p.Bytes <= d.CDF[i-1].Bytes || p.P <= d.CDF[i-1].P) {
				return fmt.Errorf("cdf point %d: sizes and probabilities must both increase", i)
			}
		}
		if last := d.CDF[len(d.CDF)-1].P; last != 1 {
			return fmt.Errorf("cdf ends at probability %g, not 1", last)
		}
	default:
		return fmt.Errorf("unknown size distribution %d", d.Kind)
	}
	return nil
}

// Draw returns one size in bytes from d, rounded up to a whole byte and at
// least 1, using r. It allocates nothing.
func (d *SizeDist) Draw(r *rand.Rand) float64 {
	var x float64
	switch d.Kind {
	case Fixed:
		x = float64(d.Bytes)
	case Exponential:
		x = r.ExpFloat64() * d.MeanBytes
	case Bimodal:
		x = float64(d.SmallBytes)
		if r.Float64() < d.LargeFraction {
			x = float64(d.LargeBytes)
		}
	case Pareto:
		// inversion: xm·U^(−1/α) with U in (0, 1]
		xm := d.MeanBytes * (d.Shape - 1) / d.Shape
		x = xm * math.Pow(1-r.Float64(), -1/d.Shape)
	case Lognormal:
		x = math.Exp(d.Mu + d.Sigma*r.NormFloat64())
	case Classes:
		u := r.Float64()
		x = d.Classes[len(d.Classes)-1].Bytes
		for _, c := range d.Classes {
			if u < c.Fraction {
				x = c.Bytes
				break
			}
			u -= c.Fraction
		}
	case Empirical:
		u := r.Float64()
		pts := d.CDF
		if u < pts[0].P {
			x = pts[0].Bytes
			break
		}
		// first point with P > u (the last has P = 1 > u)
		lo, hi := 1, len(pts)-1
		for lo < hi {
			m := (lo + hi) / 2
			if pts[m].P > u {
				hi = m
			} else {
				lo = m + 1
			}
		}
		a, b := pts[lo-1], pts[lo]
		x = a.Bytes + (u-a.P)/(b.P-a.P)*(b.Bytes-a.Bytes)
	}
	return math.Max(1, math.Ceil(x))
}

func (g *FlowGen) check(N int) error {
	if len(g.Rates) > N {
		return fmt.Errorf("sim: flow matrix has %d rows for %d nodes", len(g.Rates), N)
	}
	for s, row := range g.Rates {
		if len(row) > N {
			return fmt.Errorf("sim: flow matrix row %d has %d entries for %d nodes", s, len(row), N)
		}
		for d, r := range row {
			if r < 0 || math.IsNaN(r) || math.IsInf(r, 0) {
				return fmt.Errorf("sim: flow rate %d→%d is %g", s, d, r)
			}
		}
	}
	if err := g.Size.Check(); err != nil {
		return fmt.Errorf("sim: flow size: %w", err)
	}
	if g.RateLimit < 0 || math.IsNaN(g.RateLimit) || math.IsInf(g.RateLimit, 0) {
		return fmt.Errorf("sim: flow rate limit %g must be positive", g.RateLimit)
	}
	if g.Sample < 0 {
		return fmt.Errorf("sim: flow sample %d must not be negative", g.Sample)
	}
	if g.PacketBytes < 0 {
		return fmt.Errorf("sim: flow packet size %d must be positive", g.PacketBytes)
	}
	m, el := g.classBounds()
	if !(m > 0) || !(el >= m) || math.IsInf(el, 0) {
		return fmt.Errorf("sim: flow classes: mice bound %g and elephant bound %g must be positive and in order", m, el)
	}
	return nil
}

func (g *FlowGen) classBounds() (mice, elephant float64) {
	mice, elephant = g.MiceBytes, g.ElephantBytes
	if mice == 0 {
		mice = DefaultMiceBytes
	}
	if elephant == 0 {
		elephant = math.Max(DefaultElephantBytes, mice)
	}
	return mice, elephant
}

// Class returns the size class of a flow of size bytes.
func (g *FlowGen) Class(size float64) FlowClass {
	m, el := g.classBounds()
	switch {
	case size <= m:
		return Mice
	case size >= el:
		return Elephant
	default:
		return Medium
	}
}

// PacketSize returns the size of the flow's packets.
func (g *FlowGen) PacketSize() int {
	if g.PacketBytes > 0 {
		return g.PacketBytes
	}
	return DefaultFlowPacketBytes
}

// ByteRates returns the offered bytes per second of each pair: flow rate
// times mean flow size. Normalised load adds them to the packet traffic's.
func (g *FlowGen) ByteRates() [][]float64 {
	mean := g.Size.Mean()
	out := make([][]float64, len(g.Rates))
	for s, row := range g.Rates {
		out[s] = make([]float64, len(row))
		for d, r := range row {
			out[s][d] = r * mean
		}
	}
	return out
}

// ---- engine side ----

type flowSource struct {
	rate float64 // flows per second
	dst  alias
	send float64 // sending rate, bit/s
	rArr *rand.Rand
	rDst *rand.Rand
	rSz  *rand.Rand
}

type flowState struct {
	id        int64 // FlowRecord.ID
	src, dst  int32
	size      int64 // bytes
	sentBytes int64
	npkts     int32
	sent      int32
	done      int32 // packets delivered or dropped
	delivered int32
	next      int32 // next expected sequence number (highest delivered + 1)
	reordered int32
	start     Time
	lastDel   Time
	ideal     Time
	rate      float64
	label     uint32
	class     FlowClass
	measured  bool
	stopped   bool
	live      bool
	first     int32    // channel of the first packet at the source (FlowEnd.First)
	path      []pinHop // with Config.PinFlows: the flow's pin at each node it reached
	gen       int32    // the latest generation of its pins (Config.PinFlows)
}

func (e *engine) initFlows() {
	g := e.cfg.Traffic.FlowGen
	if g == nil {
		return
	}
	N := len(e.nodes)
	e.fsrc = make([]flowSource, N)
	e.fpkt = g.PacketSize()
	e.idle = newIdleRoutes(e.net, e.fpkt)
	e.res.Flows = &FlowResult{}
	for c := range e.res.Flows.Classes {
		e.res.Flows.Classes[c].FCT = NewHistogram()
		e.res.Flows.Classes[c].Slowdown = NewHistogram()
	}
	for s := 0; s < N; s++ {
		var items []int32
		var w []float64
		var rate float64
		if s < len(g.Rates) {
			for d, r := range g.Rates[s] {
				if r > 0 && d != s {
					items = append(items, int32(d))
					w = append(w, r)
					rate += r
				}
			}
		}
		fs := &e.fsrc[s]
		fs.rate = rate
		fs.send = g.RateLimit
		if fs.send == 0 {
			for _, c := range e.net.Out[s] {
				fs.send = math.Max(fs.send, e.net.Channels[c].Bandwidth)
			}
		}
		if rate > 0 && fs.send > 0 {
			fs.dst = newAlias(items, w)
			fs.rArr = Stream(e.cfg.Seed, StreamFlowArrivals, uint64(s))
			fs.rDst = Stream(e.cfg.Seed, StreamFlowDestinations, uint64(s))
			fs.rSz = Stream(e.cfg.Seed, StreamFlowSizes, uint64(s))
			e.schedule(e.flowInterarrival(fs), evFlowStart, int32(s), 0, 0)
		}
	}
}

func (e *engine) flowInterarrival(fs *flowSource) Time {
	return Time(math.Ceil(fs.rArr.ExpFloat64() / (fs.rate * e.peak) * 1e9))
}

// startFlow handles a flow arrival at source s.
func (e *engine) startFlow(s int) {
	fs := &e.fsrc[s]
	e.schedule(e.now+e.flowInterarrival(fs), evFlowStart, int32(s), 0, 0)
	if e.cfg.Traffic.Phases != nil && fs.rArr.Float64()*e.peak >= e.factor() {
		return
	}
	g := e.cfg.Traffic.FlowGen
	d := int(fs.dst.draw(fs.rDst))
	size := int64(min(g.Size.Draw(fs.rSz), 1<<50))
	if !e.nodes[s].up {
		return
	}
	var fi int32
	if n := len(e.ffree); n > 0 {
		fi = e.ffree[n-1]
		e.ffree = e.ffree[:n-1]
	} else {
		e.fl = append(e.fl, flowState{})
		fi = int32(len(e.fl) - 1)
	}
	e.fserial++
	f := &e.fl[fi]
	path := f.path[:0] // keeps its storage: no allocation in the steady state
	*f = flowState{path: path, id: int64(e.fserial), src: int32(s), dst: int32(d), size: size,
		npkts: int32((size + int64(e.fpkt) - 1) / int64(e.fpkt)), start: e.now, rate: fs.send,
		label: uint32(Mix(uint64(s)<<32|uint64(d), e.fserial)), class: g.Class(float64(size)),
		measured: e.now >= e.cfg.Warmup, live: true, first: NoRoute}
	f.ideal = e.idle.fct(s, d, size, fs.send, e)
	if f.measured {
		e.res.Flows.Started++
		e.res.Flows.Classes[f.class].Started++
	}
	e.emitFlowPacket(fi)
}

func (e *engine) chanBW(c int) float64 { return e.ch[c].bw }
func (e *engine) chanDelay(c int) Time { return e.ch[c].delay }

// emitFlowPacket sends the next packet of flow fi and schedules the one
// after it.
func (e *engine) emitFlowPacket(fi int32) {
	f := &e.fl[fi]
	s := int(f.src)
	if !e.nodes[s].up {
		// the source stops the flow: it ends with what it sent
		f.stopped = true
		f.npkts = f.sent
		if f.done == f.sent {
			e.endFlow(fi)
		}
		return
	}
	size := min(int64(e.fpkt), f.size-f.sentBytes)
	seq := f.sent
	f.sent++
	f.sentBytes += size
	more := f.sent < f.npkts
	next := f.start + Time(math.Round(float64(f.sentBytes)*8/f.rate*1e9))
	d := int(f.dst)
	id := e.alloc()
	p := &e.pkts[id]
	*p = Packet{id: id, Kind: Data, Src: s, Dst: d, Size: int(size), Born: e.now, Prev: -1,
		Flow: f.label, Seq: seq, fl: fi + 1, Measured: e.now >= e.cfg.Warmup,
		bin: e.binOf(e.now), at: int32(s), live: true, unreachable: !e.reaches(s, d), cause: int32(e.curFail)}
	b := &e.res.Series[p.bin]
	b.Generated++
	if e.pairGen != nil {
		e.pairGen[s*len(e.nodes)+d]++
	}
	if p.Measured {
		e.res.Generated++
		e.live++
	}
	// f may be ended and reused inside forward only when this was its last packet
	e.forward(s, id)
	if more {
		e.schedule(next, evFlowPacket, fi, 0, 0)
	}
}

// flowPacketDone accounts the end (delivery or drop) of a flow packet.
func (e *engine) flowPacketDone(p *Packet, delivered bool) {
	fi := p.fl - 1
	f := &e.fl[fi]
	f.done++
	if delivered {
		f.delivered++
		f.lastDel = e.now
		if p.Seq < f.next {
			f.reordered++
		} else {
			f.next = p.Seq + 1
		}
	}
	if f.done == f.npkts && (f.sent == f.npkts) {
		e.endFlow(fi)
	}
}

// flowHop returns the channel a packet of a flow takes at node, the
// agent's choice being c: pinned under Config.PinFlows; the first packet's
// at the source is kept for FlowEnd.First.
func (e *engine) flowHop(node int, p *Packet, c int) int {
	if e.cfg.PinFlows {
		c = e.pinned(node, p, c)
	}
	if p.Seq == 0 && p.Hops == 0 {
		e.fl[p.fl-1].first = int32(c)
	}
	return c
}

// endFlow records flow fi, all of whose packets are delivered or dropped,
// tells the watchers, and frees it.
func (e *engine) endFlow(fi int32) {
	f := &e.fl[fi]
	if e.cfw != nil || (e.fw != nil && e.fw[f.src] != nil && e.nodes[f.src].up) {
		e.tellFlowEnd(fi)
	}
	if f.measured {
		r := e.res.Flows
		c := &r.Classes[f.class]
		r.Delivered += int64(f.delivered)
		r.Reordered += int64(f.reordered)
		if f.reordered > 0 {
			r.ReorderedFlows++
		}
		out := FlowFailed
		if !f.stopped && f.delivered == f.npkts {
			out = FlowCompleted
			r.Completed++
			c.Completed++
			fct := (f.lastDel - f.start).Seconds()
			c.FCT.Add(fct)
			c.FCTSum += fct
			c.Bytes += float64(f.size)
			if f.ideal > 0 {
				sd := fct / f.ideal.Seconds()
				c.Slowdown.Add(sd)
				c.SlowdownSum += sd
			}
		} else {
			r.Failed++
			c.Failed++
		}
		e.sampleFlow(f, out)
	}
	f.live = false
	e.ffree = append(e.ffree, fi)
}

// tellFlowEnd hands the end of flow fi to its watcher: the central agent,
// or the router at the flow's source.
func (e *engine) tellFlowEnd(fi int32) {
	f := &e.fl[fi]
	fe := &e.fend
	*fe = FlowEnd{Slot: int(fi), ID: f.id, Src: int(f.src), Dst: int(f.dst), Size: f.size, Class: f.class,
		Label: f.label, Start: f.start, End: e.now, Ideal: f.ideal, Packets: f.sent, Delivered: f.delivered,
		Reordered: f.reordered, Outcome: FlowFailed, First: int(f.first), Measured: f.measured}
	if !f.stopped && f.delivered == f.npkts {
		fe.Outcome = FlowCompleted
		fe.End = f.lastDel
	}
	if e.cfw != nil {
		e.cfw.FlowEnded(fe)
		return
	}
	e.fw[f.src].FlowEnded(fe)
}

// pinHop is one node's pin of a flow: the channel its packets take there,
// the node's position on the pinned walk (hops from where the walk's
// generation began, in the generation's count), and the generation.
type pinHop struct{ node, ch, pos, gen int32 }

// pinned returns the channel packet p of a flow follows at node under
// Config.PinFlows, choice being the agent's. The flow's pins form a walk
// from the source; a generation of it begins with the first packet and
// again wherever a pin is re-decided, and the packet that re-decided it
// chooses afresh (the agent's choice) at every node after it that holds a
// pin of an older generation, as the first packet did. A packet carries the
// generation it follows and its position on it (hops from the source, less
// the loops it was taken out of): one of an older generation (sent before
// the pin changed, or still in flight round a loop) takes the newer pin's
// generation and position where it meets one. A pin is re-decided when its
// channel is seen down; when a packet of its generation comes back to it
// further along than the walk reached it (a loop; see pinHopLimit for a
// packet that dies there); and when it would send a packet of its
// generation, at its position, straight back to the node it came from (the
// walk goes there and back). A packet that has just joined a walk whose pin
// would send it back takes the agent's choice and leaves the pin as it is.
// So the packets in flight round a loop when it is found go round it at
// most once, and the later ones not at all.
func (e *engine) pinned(node int, p *Packet, choice int) int {
	f := &e.fl[p.fl-1]
	pos := int32(p.Hops) - p.pinOff
	for i := range f.path {
		h := &f.path[i]
		if int(h.node) != node {
			continue
		}
		back := e.net.Channels[h.ch].To == p.Prev
		switch {
		case h.gen < 0:
			return e.repin(f, h, p, choice) // a packet died here in a loop
		case p.pinGen < h.gen || (p.pinGen == h.gen && pos < h.pos):
			// the packet joins the walk here
			p.pinGen, p.pinOff = h.gen, int32(p.Hops)-h.pos
			if back {
				return choice // not round the walk's way back to where it came from
			}
		case p.pinGen > h.gen:
			// a re-decided walk meets an older pin: decide afresh
			if choice != NoRoute {
				h.ch, h.pos, h.gen = int32(choice), pos, p.pinGen
			}
			return choice
		case pos > h.pos:
			return e.repin(f, h, p, choice) // back where it passed: a loop
		case back:
			return e.repin(f, h, p, choice) // the walk goes straight back
		}
		if e.ch[h.ch].seenUp {
			return int(h.ch)
		}
		return e.repin(f, h, p, choice)
	}
	if choice != NoRoute {
		f.path = append(f.path, pinHop{int32(node), int32(choice), pos, p.pinGen})
	}
	return choice
}

// pinHopLimit notes that packet p of a flow dies at the hop limit at node
// under Config.PinFlows: if it had passed the node on its walk, the walk
// loops there, and the pin is re-decided for the next packet to reach it
// (the loop is detected when a packet comes back, which this one no longer
// does).
func (e *engine) pinHopLimit(node int, p *Packet) {
	f := &e.fl[p.fl-1]
	pos := int32(p.Hops) - p.pinOff
	for i := range f.path {
		if h := &f.path[i]; int(h.node) == node {
			if h.gen == p.pinGen && pos > h.pos {
				h.gen = -1
			}
			return
		}
	}
}

// repin re-decides pin h of flow f: it takes choice, the agent's for
// packet p, and a new generation, which p follows from h's position on.
// Without a choice the pin stays as it was and p is dropped.
func (e *engine) repin(f *flowState, h *pinHop, p *Packet, choice int) int {
	if choice == NoRoute {
		return NoRoute
	}
	f.gen++
	h.ch, h.gen = int32(choice), f.gen
	p.pinGen, p.pinOff = f.gen, int32(p.Hops)-h.pos
	return choice
}

// sampleFlow offers measured flow f, ended with outcome out, to the
// sample (FlowGen.Sample). Allocation-free once the sample is full.
func (e *engine) sampleFlow(f *flowState, out FlowOutcome) {
	n := e.cfg.Traffic.FlowGen.Sample
	if n <= 0 {
		return
	}
	rec := FlowRecord{ID: f.id, Src: int(f.src), Dst: int(f.dst), Size: f.size, Class: f.class,
		Start: f.start, End: -1, Ideal: f.ideal, Packets: f.sent, Delivered: f.delivered,
		Reordered: f.reordered, Outcome: out}
	if out == FlowCompleted {
		rec.End = f.lastDel
	}
	e.fseen++
	r := e.res.Flows
	if len(r.Sample) < n {
		r.Sample = append(r.Sample, rec)
		return
	}
	if e.fsample == nil {
		e.fsample = Stream(e.cfg.Seed, StreamFlowSample, 0)
	}
	if j := e.fsample.Uint64N(uint64(e.fseen)); j < uint64(n) {
		r.Sample[j] = rec
	}
}
