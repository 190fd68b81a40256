package sim

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"

	"hoplore/paths"
)

// Run simulates cfg and returns what it measured. It is deterministic: the
// same Config gives the same Result. Cost: O(events · log events).
func Run(cfg *Config) (*Result, error) {
	return RunContext(context.Background(), cfg)
}

// RunContext is Run that gives up, returning ctx's error, soon after ctx is
// done (it looks every 65,536 events).
func RunContext(ctx context.Context, cfg *Config) (*Result, error) {
	e, err := newEngine(cfg)
	if err != nil {
		return nil, err
	}
	if err := e.loop(ctx); err != nil {
		return nil, fmt.Errorf("sim: run stopped at %.3f s of simulated time: %w", e.now.Seconds(), err)
	}
	return e.finish()
}

type chanState struct {
	q       pktQueue
	qBytes  int
	busy    bool
	txPkt   int32
	txStart Time
	txEnd   Time
	epoch   uint32 // bumped when the channel goes down: what was in flight is lost
	up      bool   // physically usable
	seenUp  bool   // the sending node's belief (after detection)
	detGen  uint32 // bumped at every physical change; stale detections are ignored

	busyTotal Time // cumulative transmitting time (any packet)
	sent      int64
	downAt    Time
	downTotal Time // within the measured window

	redraw *rand.Rand

	// current parameters (Config.Conditions change them)
	bw    float64
	delay Time
	loss  float64
	rLoss *rand.Rand
}

type nodeState struct {
	up      bool
	downCnt int
}

type source struct {
	rate float64
	dst  alias
	// with Traffic.Periods: the largest total rate over the base matrix and
	// the periods, and each period's rate and destinations
	peakRate float64
	pRate    []float64
	pDst     []alias
	rArr     *rand.Rand
	rDst     *rand.Rand
	rSize    *rand.Rand
	rFlow    *rand.Rand
}

type engine struct {
	cfg      *Config
	net      *Net
	now      Time
	seq      uint64
	heap     eventHeap
	topDone  bool // the event at the top of heap has been handled: the next schedule replaces it
	hopLimit int
	flows    int
	bin      Time
	nbins    int
	peak     float64 // largest rate factor of the traffic phases
	period   int     // index of the current traffic period, −1 before the first
	conds    []LinkCondition

	pkts []Packet
	free []int32
	live int64 // measured data packets in the network

	ch       []chanState
	chFrom   []int32 // sending node of each channel, compact for the views' checks
	linkDown []int   // reasons a link is down (its own failure, a failed end node)
	nodes    []nodeState
	src      []source

	routers []Router
	arr     []Arrivals
	drp     []Dropper
	fw      []FlowWatcher // per node; nil without flow traffic or watchers
	cfw     FlowWatcher   // the central agent's, if it watches flows
	rcv     []Receiver
	det     []Detector
	ls      []LinkStater
	timed   []Timed
	anyLS   bool
	central Central
	cTimed  Timed
	cview   *ControlView

	tellBuf   []*Message
	tellDepth int
	snaps     []*Snapshot
	pairDel   []int64
	pairDelay []float64
	pairDrop  []int64
	pairGen   []int64
	binBusy   []Time // nbins × channels
	res       *Result
	failures  []FailureEvent
	search    paths.Search // flooding distances and partitions
	floodW    []float64    // per channel: propagation delay in ns, +Inf when down
	floodSrc  []int

	// flow traffic
	fsrc    []flowSource
	fl      []flowState
	ffree   []int32
	fserial uint64
	fpkt    int         // packet size of flows
	idle    *idleRoutes // candidate paths of flows' idle-network completion times
	fseen   int64       // measured flows offered to the sample
	fsample *rand.Rand  // the sample's reservoir draws
	fend    FlowEnd     // what FlowWatcher.FlowEnded is handed
	// per pair, cumulative over packets of flow traffic (central agents,
	// with flow traffic): Snapshot.PairFlow*
	pairFDel   []int64
	pairFDelay []float64
	pairFDrop  []int64

	// physical partitions, for classifying unreachable packets
	comp       []int32       // component label of each node over what is up; −1 when down
	compArcUp  []bool        // scratch: channels up
	compNodeUp []bool        // scratch: nodes up
	curFail    int           // index in failures of the event applied last, −1 before any
	applying   bool          // inside applyFailure: drops wait in pending
	pending    []pendingDrop // drops caused by the event being applied
}

type pendingDrop struct {
	id     int32
	reason DropReason
	c      int
}

func newEngine(cfg *Config) (*engine, error) {
	if cfg.Net == nil {
		return nil, errors.New("sim: config has no network")
	}
	if cfg.Agent == nil {
		return nil, errors.New("sim: config has no agent")
	}
	if cfg.Duration <= 0 {
		return nil, errors.New("sim: duration must be positive")
	}
	if cfg.Warmup < 0 || cfg.Warmup >= cfg.Duration {
		return nil, fmt.Errorf("sim: warm-up %v must be in [0, duration %v)", cfg.Warmup.Seconds(), cfg.Duration.Seconds())
	}
	if cfg.Bin <= 0 {
		return nil, errors.New("sim: bin must be positive")
	}
	net := cfg.Net
	N := net.NumNodes()
	e := &engine{cfg: cfg, net: net, hopLimit: cfg.HopLimit, flows: cfg.Traffic.Flows, bin: cfg.Bin}
	if e.hopLimit <= 0 {
		e.hopLimit = DefaultHopLimit
	}
	if e.flows <= 0 {
		e.flows = DefaultFlows
	}
	e.nbins = int((cfg.Duration + cfg.Bin - 1) / cfg.Bin)
	if err := checkTraffic(cfg, N); err != nil {
		return nil, err
	}
	e.peak = 1
	for i, ph := range cfg.Traffic.Phases {
		if ph.Factor < 0 || math.IsNaN(ph.Factor) || math.IsInf(ph.Factor, 0) || (i > 0 && ph.At < cfg.Traffic.Phases[i-1].At) {
			return nil, fmt.Errorf("sim: traffic phase %d: factors must be finite and non-negative, times in order", i)
		}
		e.peak = math.Max(e.peak, ph.Factor)
	}
	e.ch = make([]chanState, len(net.Channels))
	e.chFrom = make([]int32, len(net.Channels))
	for i := range net.Channels {
		e.chFrom[i] = int32(net.Channels[i].From)
	}
	for i := range e.ch {
		e.ch[i].up, e.ch[i].seenUp = true, true
		e.ch[i].bw, e.ch[i].delay = net.Channels[i].Bandwidth, net.Channels[i].Delay
		if cfg.Traffic.Redraw {
			e.ch[i].redraw = Stream(cfg.Seed, StreamRedraw, uint64(i))
		}
	}
	e.linkDown = make([]int, len(net.Graph.Links))
	e.nodes = make([]nodeState, N)
	for i := range e.nodes {
		e.nodes[i].up = true
	}
	e.binBusy = make([]Time, e.nbins*len(net.Channels))
	e.res = &Result{
		Delivery: NewHistogram(),
		Channels: make([]ChannelResult, len(net.Channels)),
		Series:   make([]Bin, e.nbins),
	}
	for b := range e.res.Series {
		e.res.Series[b].Start = Time(b) * cfg.Bin
		e.res.Series[b].End = min(Time(b+1)*cfg.Bin, cfg.Duration)
	}
	// traffic sources
	e.src = make([]source, N)
	for s := 0; s < N; s++ {
		var items []int32
		var w []float64
		var rate float64
		if s < len(cfg.Traffic.Rates) {
			for d, r := range cfg.Traffic.Rates[s] {
				if r > 0 && d != s {
					items = append(items, int32(d))
					w = append(w, r)
					rate += r
				}
			}
		}
		src := &e.src[s]
		src.rate = rate
		src.peakRate = rate
		for _, p := range cfg.Traffic.Periods {
			var items []int32
			var w []float64
			var pr float64
			if s < len(p.Rates) {
				for d, r := range p.Rates[s] {
					if r > 0 && d != s {
						items = append(items, int32(d))
						w = append(w, r)
						pr += r
					}
				}
			}
			src.pRate = append(src.pRate, pr)
			var a alias
			if pr > 0 {
				a = newAlias(items, w)
			}
			src.pDst = append(src.pDst, a)
			src.peakRate = math.Max(src.peakRate, pr)
		}
		if src.peakRate > 0 {
			src.dst = newAlias(items, w)
			src.rArr = Stream(cfg.Seed, StreamArrivals, uint64(s))
			src.rDst = Stream(cfg.Seed, StreamDestinations, uint64(s))
			src.rSize = Stream(cfg.Seed, StreamSizes, uint64(s))
			src.rFlow = Stream(cfg.Seed, StreamFlows, uint64(s))
			e.schedule(e.interarrival(src), evGen, int32(s), 0, 0)
		}
	}
	e.period = -1
	e.initFlows()
	// link conditions, applied in (time, position) order
	e.conds = append([]LinkCondition(nil), cfg.Conditions...)
	sort.SliceStable(e.conds, func(i, j int) bool { return e.conds[i].At < e.conds[j].At })
	for i, c := range e.conds {
		switch {
		case c.Link < 0 || c.Link >= len(net.Graph.Links):
			return nil, fmt.Errorf("sim: link condition %d names link %d, which does not exist", i, c.Link)
		case c.Bandwidth < 0 || math.IsNaN(c.Bandwidth) || math.IsInf(c.Bandwidth, 0):
			return nil, fmt.Errorf("sim: link condition %d: bandwidth %g is not positive", i, c.Bandwidth)
		case c.SetDelay && c.Delay < 0:
			return nil, fmt.Errorf("sim: link condition %d: negative delay", i)
		case c.SetLoss && !(c.Loss >= 0 && c.Loss <= 1):
			return nil, fmt.Errorf("sim: link condition %d: loss %g is outside [0, 1]", i, c.Loss)
		case c.At < 0:
			return nil, fmt.Errorf("sim: link condition %d: negative time", i)
		}
		if c.At <= cfg.Duration {
			e.schedule(c.At, evCondition, int32(i), 0, 0)
		}
	}
	// failures, applied in (time, position) order
	e.failures = append([]FailureEvent(nil), cfg.Failures.Events...)
	sort.SliceStable(e.failures, func(i, j int) bool { return e.failures[i].At < e.failures[j].At })
	for i, f := range e.failures {
		for _, l := range f.Links {
			if l < 0 || l >= len(net.Graph.Links) {
				return nil, fmt.Errorf("sim: failure event %d names link %d, which does not exist", i, l)
			}
		}
		if f.Node >= N {
			return nil, fmt.Errorf("sim: failure event %d names node %d, which does not exist", i, f.Node)
		}
		if f.At <= cfg.Duration {
			e.schedule(f.At, evFail, int32(i), 0, 0)
		}
	}
	e.res.Failures = e.failures
	e.res.Outcomes = make([]Outcome, len(e.failures))
	for k := range e.res.Outcomes {
		e.res.Outcomes[k].LastReachable = -1
	}
	e.curFail = -1
	e.comp = make([]int32, N)
	e.components()
	// agent
	switch a := cfg.Agent.(type) {
	case PerNode:
		e.routers = make([]Router, N)
		e.arr = make([]Arrivals, N)
		e.drp = make([]Dropper, N)
		e.rcv = make([]Receiver, N)
		e.det = make([]Detector, N)
		e.ls = make([]LinkStater, N)
		e.timed = make([]Timed, N)
		for v := 0; v < N; v++ {
			view := &NodeView{e: e, node: v, out: net.Out[v], rng: Stream(cfg.AgentSeed, StreamAgent, uint64(v))}
			r := a.Node(view)
			e.routers[v] = r
			e.arr[v], _ = r.(Arrivals)
			e.drp[v], _ = r.(Dropper)
			e.rcv[v], _ = r.(Receiver)
			e.det[v], _ = r.(Detector)
			e.ls[v], _ = r.(LinkStater)
			e.timed[v], _ = r.(Timed)
			if w, ok := r.(FlowWatcher); ok && cfg.Traffic.FlowGen != nil {
				if e.fw == nil {
					e.fw = make([]FlowWatcher, N)
				}
				e.fw[v] = w
			}
			if e.ls[v] != nil {
				e.anyLS = true
			}
		}
	case Central:
		e.central = a
		e.cTimed, _ = a.(Timed)
		e.pairDel = make([]int64, N*N)
		e.pairDelay = make([]float64, N*N)
		e.pairDrop = make([]int64, N*N)
		e.pairGen = make([]int64, N*N)
		if cfg.Traffic.FlowGen != nil {
			e.cfw, _ = a.(FlowWatcher)
			e.pairFDel = make([]int64, N*N)
			e.pairFDelay = make([]float64, N*N)
			e.pairFDrop = make([]int64, N*N)
		}
		e.cview = &ControlView{e: e, rng: Stream(cfg.AgentSeed, StreamAgent, math.MaxUint32)}
		a.Start(e.cview)
	default:
		return nil, fmt.Errorf("sim: agent %q is neither per-node nor central", cfg.Agent.Name())
	}
	return e, nil
}

func checkTraffic(cfg *Config, N int) error {
	t := &cfg.Traffic
	if len(t.Rates) > N {
		return fmt.Errorf("sim: traffic matrix has %d rows for %d nodes", len(t.Rates), N)
	}
	for s, row := range t.Rates {
		if len(row) > N {
			return fmt.Errorf("sim: traffic matrix row %d has %d entries for %d nodes", s, len(row), N)
		}
		for d, r := range row {
			if r < 0 || math.IsNaN(r) || math.IsInf(r, 0) {
				return fmt.Errorf("sim: traffic rate %d→%d is %g", s, d, r)
			}
		}
	}
	for k, p := range t.Periods {
		if t.Periodic {
			return errors.New("sim: periodic sources do not follow traffic periods")
		}
		if p.At < 0 || k > 0 && p.At < t.Periods[k-1].At {
			return fmt.Errorf("sim: traffic period %d: times must be non-negative and in order", k)
		}
		if len(p.Rates) > N {
			return fmt.Errorf("sim: traffic period %d has %d rows for %d nodes", k, len(p.Rates), N)
		}
		for s, row := range p.Rates {
			if len(row) > N {
				return fmt.Errorf("sim: traffic period %d row %d has %d entries for %d nodes", k, s, len(row), N)
			}
			for d, r := range row {
				if r < 0 || math.IsNaN(r) || math.IsInf(r, 0) {
					return fmt.Errorf("sim: traffic period %d: rate %d→%d is %g", k, s, d, r)
				}
			}
		}
	}
	if err := t.Size.Check(); err != nil {
		return fmt.Errorf("sim: packet size: %w", err)
	}
	if t.FlowGen != nil {
		if err := t.FlowGen.check(N); err != nil {
			return err
		}
	}
	return nil
}

// schedule adds an event. The first event scheduled while the current one
// is handled takes its place at the top of the heap (replaceTop) instead of
// a pop and a push: the heap holds the same events either way, so the order
// of events is unchanged.
func (e *engine) schedule(at Time, kind uint8, a, b int32, c uint32) {
	e.seq++
	ev := event{at: at, seq: e.seq, kind: kind, a: a, b: b, c: c}
	if e.topDone {
		e.topDone = false
		e.heap.replaceTop(ev)
		return
	}
	e.heap.push(ev)
}

func (e *engine) loop(ctx context.Context) error {
	end := e.cfg.Duration
	done := ctx.Done()
	for e.heap.len() > 0 {
		if e.heap.ev[0].at > end {
			break
		}
		if done != nil && e.res.Events&0xffff == 0 {
			select {
			case <-done:
				return ctx.Err()
			default:
			}
		}
		ev := e.heap.ev[0] // removed by the first schedule, or below
		e.topDone = true
		e.now = ev.at
		e.res.Events++
		switch ev.kind {
		case evGen:
			e.generate(int(ev.a))
		case evTxDone:
			e.txDone(int(ev.a), ev.c)
		case evArrive:
			e.arrive(int(ev.a), ev.b, ev.c)
		case evForward:
			e.forwardAfterProcessing(int(ev.a), ev.b, ev.c)
		case evTimer:
			e.fireTimer(int(ev.a), int(ev.b))
		case evFail:
			e.applyFailure(int(ev.a))
		case evDetect:
			e.detect(int(ev.a), ev.b == 1, ev.c)
		case evLSA:
			if e.nodes[ev.a].up {
				e.ls[ev.a].LinkChanged(int(ev.b), ev.c == 1)
			}
		case evSnapshot:
			s := e.snaps[ev.b]
			e.snaps[ev.b] = nil
			e.central.Telemetry(s)
		case evCondition:
			e.applyCondition(int(ev.a))
		case evFlowStart:
			e.startFlow(int(ev.a))
		case evFlowPacket:
			e.emitFlowPacket(ev.a)
		}
		if e.topDone {
			e.topDone = false
			e.heap.pop()
		}
	}
	e.now = end
	return nil
}

// ---- packets ----

func (e *engine) alloc() int32 {
	if n := len(e.free); n > 0 {
		id := e.free[n-1]
		e.free = e.free[:n-1]
		return id
	}
	e.pkts = append(e.pkts, Packet{})
	id := int32(len(e.pkts) - 1)
	e.pkts[id].id = id
	return id
}

func (e *engine) release(id int32) {
	p := &e.pkts[id]
	p.Route = nil
	p.Msg.Vec = nil
	p.live = false
	e.free = append(e.free, id)
}

func (e *engine) drawSize(s *SizeDist, r *rand.Rand) int {
	switch s.Kind {
	case Fixed:
		return s.Bytes
	case Exponential:
		return max(1, int(math.Ceil(r.ExpFloat64()*s.MeanBytes)))
	case Bimodal:
		if r.Float64() < s.LargeFraction {
			return s.LargeBytes
		}
		return s.SmallBytes
	default:
		return int(min(s.Draw(r), math.MaxInt32))
	}
}

// factor returns the rate factor of the traffic phases at the current time.
func (e *engine) factor() float64 {
	f := 1.0
	for _, ph := range e.cfg.Traffic.Phases {
		if ph.At > e.now {
			break
		}
		f = ph.Factor
	}
	return f
}

// interarrival draws the time to a source's next emission candidate. With
// phases, Poisson candidates come at the peak rate and generate accepts
// each with probability factor/peak (thinning: Lewis & Shedler 1979).
func (e *engine) interarrival(src *source) Time {
	if e.cfg.Traffic.Periodic {
		f := e.factor()
		if f <= 0 {
			return e.bin // look again later
		}
		return Time(math.Round(1e9 / (src.rate * f)))
	}
	return Time(math.Ceil(src.rArr.ExpFloat64() / (src.peakRate * e.peak) * 1e9))
}

// applyCondition sets the parameters of both channels of a link.
func (e *engine) applyCondition(k int) {
	c := &e.conds[k]
	if e.idle != nil && (c.Bandwidth > 0 || c.SetDelay) {
		e.idle.invalidate()
	}
	for _, ci := range [2]int{2 * c.Link, 2*c.Link + 1} {
		ch := &e.ch[ci]
		if c.Bandwidth > 0 {
			ch.bw = c.Bandwidth
		}
		if c.SetDelay {
			ch.delay = c.Delay
		}
		if c.SetLoss {
			ch.loss = c.Loss
			if ch.rLoss == nil && c.Loss > 0 {
				ch.rLoss = Stream(e.cfg.Seed, StreamLoss, uint64(ci))
			}
		}
	}
}

// periodRate returns source s's total rate now and the destinations to draw
// from, advancing the current traffic period.
func (e *engine) periodRate(src *source) (float64, *alias) {
	ps := e.cfg.Traffic.Periods
	for e.period+1 < len(ps) && ps[e.period+1].At <= e.now {
		e.period++
	}
	if e.period < 0 {
		return src.rate, &src.dst
	}
	return src.pRate[e.period], &src.pDst[e.period]
}

func (e *engine) generate(s int) {
	src := &e.src[s]
	// the Poisson process keeps ticking even while the node is down, so that
	// a failure does not shift the random streams of later packets
	e.schedule(e.now+e.interarrival(src), evGen, int32(s), 0, 0)
	dst := &src.dst
	if e.cfg.Traffic.Periods != nil {
		// thinning from the peak over periods and phases
		var rate float64
		rate, dst = e.periodRate(src)
		if src.rArr.Float64()*src.peakRate*e.peak >= rate*e.factor() {
			return
		}
	} else if e.cfg.Traffic.Phases != nil && !e.cfg.Traffic.Periodic {
		if src.rArr.Float64()*e.peak >= e.factor() {
			return
		}
	} else if e.cfg.Traffic.Periodic && e.factor() <= 0 {
		return
	}
	d := dst.draw(src.rDst)
	size := e.drawSize(&e.cfg.Traffic.Size, src.rSize)
	flow := uint32(src.rFlow.IntN(e.flows))
	if !e.nodes[s].up {
		return
	}
	id := e.alloc()
	p := &e.pkts[id]
	*p = Packet{id: id, Kind: Data, Src: s, Dst: int(d), Size: size, Born: e.now, Prev: -1,
		Flow: uint32(Mix(uint64(s)<<32|uint64(d), uint64(flow))), Measured: e.now >= e.cfg.Warmup,
		bin: e.binOf(e.now), at: int32(s), live: true, unreachable: !e.reaches(s, int(d)), cause: int32(e.curFail)}
	b := &e.res.Series[p.bin]
	b.Generated++
	if e.pairGen != nil {
		e.pairGen[s*len(e.nodes)+int(d)]++
	}
	if p.Measured {
		e.res.Generated++
		e.live++
	}
	e.forward(s, id)
}

// countRouteChanges adds n route changes at the current time: to the bin of
// now, and to the run's total when now is past the warm-up.
func (e *engine) countRouteChanges(n int) {
	if n == 0 {
		return
	}
	e.res.Series[e.binOf(e.now)].RouteChanges += int64(n)
	if e.now >= e.cfg.Warmup {
		e.res.RouteChanges += int64(n)
	}
}

func (e *engine) binOf(t Time) int32 {
	return int32(min(int(t/e.bin), e.nbins-1))
}

func (e *engine) route(node int, p *Packet) int {
	if e.central != nil {
		return e.central.Route(node, p)
	}
	return e.routers[node].Route(p)
}

func (e *engine) forward(node int, id int32) {
	p := &e.pkts[id]
	if p.Dst == node {
		e.deliver(id)
		return
	}
	if p.Hops >= e.hopLimit {
		if p.fl != 0 && e.cfg.PinFlows {
			e.pinHopLimit(node, p)
		}
		e.drop(id, HopLimit, -1)
		return
	}
	c := e.route(node, p)
	if p.fl != 0 {
		c = e.flowHop(node, p, c)
	}
	if c == NoRoute {
		e.drop(id, NoRouteDrop, -1)
		return
	}
	if c < 0 || c >= len(e.ch) || e.net.Channels[c].From != node {
		panic(fmt.Sprintf("sim: agent %s at node %d chose channel %d, which does not leave it", e.cfg.Agent.Name(), node, c))
	}
	e.enqueue(c, id)
}

func (e *engine) enqueue(c int, id int32) {
	ch := &e.ch[c]
	p := &e.pkts[id]
	if !ch.up {
		e.drop(id, LinkDown, c)
		return
	}
	if ch.redraw != nil && p.Kind == Data && p.Hops > 0 {
		p.Size = e.drawSize(&e.cfg.Traffic.Size, ch.redraw)
	}
	p.queuedAt = e.now
	p.at = int32(e.net.Channels[c].From)
	if !ch.busy {
		e.startTx(c, id)
		return
	}
	if ch.q.len() >= e.net.Channels[c].Buffer {
		e.drop(id, QueueFull, c)
		return
	}
	ch.q.push(id)
	ch.qBytes += p.Size
}

func (e *engine) startTx(c int, id int32) {
	ch := &e.ch[c]
	p := &e.pkts[id]
	dur := Time(math.Round(float64(p.Size) * 8 / ch.bw * 1e9))
	p.LastWait = e.now - p.queuedAt
	p.LastTx = dur
	ch.busy = true
	ch.txPkt = id
	ch.txStart = e.now
	ch.txEnd = e.now + dur
	e.schedule(ch.txEnd, evTxDone, int32(c), 0, ch.epoch)
}

// addBusy accounts transmitting time [from, to) on channel c.
func (e *engine) addBusy(c int, from, to Time) {
	if to <= from {
		return
	}
	ch := &e.ch[c]
	ch.busyTotal += to - from
	nch := len(e.ch)
	for b := int(from / e.bin); b < e.nbins; b++ {
		bs, be := Time(b)*e.bin, Time(b+1)*e.bin
		if bs >= to {
			break
		}
		e.binBusy[b*nch+c] += min(to, be) - max(from, bs)
	}
	if lo := max(from, e.cfg.Warmup); to > lo {
		e.res.Channels[c].Util += float64(to - lo) // converted to a fraction in finish
	}
}

func (e *engine) txDone(c int, epoch uint32) {
	ch := &e.ch[c]
	if epoch != ch.epoch || !ch.busy {
		return // the transmission was cut by a failure
	}
	id := ch.txPkt
	e.addBusy(c, ch.txStart, e.now)
	ch.busy = false
	ch.sent++
	if e.now >= e.cfg.Warmup {
		e.res.Channels[c].Packets++
	}
	p := &e.pkts[id]
	p.Prev = e.net.Channels[c].From
	if ch.loss > 0 && ch.rLoss.Float64() < ch.loss {
		e.drop(id, LinkLoss, c)
	} else {
		e.schedule(e.now+ch.delay, evArrive, int32(c), id, ch.epoch)
	}
	if ch.q.len() > 0 {
		next := ch.q.pop()
		ch.qBytes -= e.pkts[next].Size
		e.startTx(c, next)
	}
}

func (e *engine) arrive(c int, id int32, epoch uint32) {
	ch := &e.ch[c]
	if epoch != ch.epoch {
		e.drop(id, LinkDown, c)
		return
	}
	to := e.net.Channels[c].To
	p := &e.pkts[id]
	if !e.nodes[to].up {
		e.drop(id, NodeDown, -1)
		return
	}
	p.Hops++
	p.at = int32(to)
	if p.Kind == Control {
		if r := e.rcv; r != nil && r[to] != nil {
			m := p.Msg
			e.release(id)
			e.deliverMsg(to, c, m)
			return
		}
		e.release(id)
		return
	}
	if e.arr != nil && e.arr[to] != nil {
		e.arr[to].Arrived(p, c)
	}
	if proc := e.net.Graph.Nodes[to].Processing; proc > 0 && p.Dst != to {
		e.schedule(e.now+proc, evForward, int32(to), id, 0)
		return
	}
	e.forward(to, id)
}

func (e *engine) forwardAfterProcessing(node int, id int32, _ uint32) {
	if !e.nodes[node].up {
		e.drop(id, NodeDown, -1)
		return
	}
	e.forward(node, id)
}

func (e *engine) deliver(id int32) {
	p := &e.pkts[id]
	delay := (e.now - p.Born).Seconds()
	b := &e.res.Series[p.bin]
	b.Delivered++
	b.DelaySum += delay
	if b.Delivery == nil {
		b.Delivery = NewHistogram()
	}
	b.Delivery.Add(delay)
	if e.pairDel != nil {
		k := p.Src*len(e.nodes) + p.Dst
		e.pairDel[k]++
		e.pairDelay[k] += delay
		if p.fl != 0 {
			e.pairFDel[k]++
			e.pairFDelay[k] += delay
		}
	}
	if p.Measured {
		r := e.res
		r.Delivered++
		e.live--
		r.Delivery.Add(delay)
		r.DeliveryBatches.Add(delay)
		r.DeliverySum += delay
		r.DeliveryMax = math.Max(r.DeliveryMax, delay)
		r.HopsSum += int64(p.Hops)
		if h := e.net.Hops[p.Src][p.Dst]; h > 0 {
			r.StretchSum += float64(p.Hops) / float64(h)
		}
		r.DeliveredBits += float64(p.Size) * 8
	}
	if p.fl != 0 {
		e.flowPacketDone(p, true)
	}
	e.release(id)
}

// drop discards packet id for reason; c is the channel involved, or -1.
func (e *engine) drop(id int32, reason DropReason, c int) {
	p := &e.pkts[id]
	if p.Kind == Control {
		if e.now >= e.cfg.Warmup {
			e.res.ControlDropped++
		}
		e.release(id)
		return
	}
	if e.applying {
		// classified once the event's new topology is known
		e.pending = append(e.pending, pendingDrop{id: id, reason: reason, c: c})
		return
	}
	b := &e.res.Series[p.bin]
	b.Dropped++
	if p.unreachable {
		b.Unreachable++
	}
	if e.pairDrop != nil {
		e.pairDrop[p.Src*len(e.nodes)+p.Dst]++
		if p.fl != 0 {
			e.pairFDrop[p.Src*len(e.nodes)+p.Dst]++
		}
	}
	if p.unreachable {
		if p.cause >= 0 {
			e.res.Outcomes[p.cause].LostUnreachable++
		}
	} else if e.curFail >= 0 {
		o := &e.res.Outcomes[e.curFail]
		switch {
		case reason == QueueFull:
			o.LostQueueFull++
		default:
			o.LostReachable++
			o.LastReachable = e.now
		}
	}
	if p.Measured {
		e.res.Dropped[reason]++
		if p.unreachable {
			e.res.Unreachable[reason]++
		}
		e.live--
		if c >= 0 {
			switch reason {
			case QueueFull:
				e.res.Channels[c].DroppedQueueFull++
			case LinkDown:
				e.res.Channels[c].DroppedLinkDown++
			case LinkLoss:
				e.res.Channels[c].DroppedLinkLoss++
			}
		}
	}
	if c >= 0 && (reason == QueueFull || reason == LinkLoss) && e.drp != nil {
		if d := e.drp[e.net.Channels[c].From]; d != nil {
			d.Dropped(p, c, reason)
		}
	}
	if p.fl != 0 {
		e.flowPacketDone(p, false)
	}
	e.release(id)
}

// ---- control traffic ----

func (e *engine) sendControl(node, c int, m Message) bool {
	if m.Bytes <= 0 {
		panic("sim: in-band control message without a size")
	}
	measured := e.now >= e.cfg.Warmup
	if measured {
		e.res.ControlPackets++
		e.res.ControlBytes += int64(m.Bytes)
	}
	if !e.nodes[node].up {
		if measured {
			e.res.ControlDropped++
		}
		return false
	}
	id := e.alloc()
	p := &e.pkts[id]
	m.From = node
	*p = Packet{id: id, Kind: Control, Src: node, Dst: e.net.Channels[c].To, Size: m.Bytes, Born: e.now, Prev: -1, Msg: m, bin: e.binOf(e.now)}
	ch := &e.ch[c]
	if !ch.up || (ch.busy && ch.q.len() >= e.net.Channels[c].Buffer) {
		e.drop(id, QueueFull, c)
		return false
	}
	e.enqueue(c, id)
	return true
}

// tell delivers m to the far end of channel c at once. The message lives in
// an engine-owned slot for the duration of the call (receivers must not keep
// the pointer), so instant feedback allocates nothing; nested tells use
// deeper slots.
func (e *engine) tell(node, c int, m Message) {
	to := e.net.Channels[c].To
	if !e.nodes[to].up || e.rcv == nil || e.rcv[to] == nil {
		return
	}
	m.From = node
	e.deliverMsg(to, c, m)
}

// deliverMsg hands m to node to's receiver from an engine-owned slot.
func (e *engine) deliverMsg(to, c int, m Message) {
	if e.tellDepth == len(e.tellBuf) {
		e.tellBuf = append(e.tellBuf, make([]*Message, 4)...)
		for i := e.tellDepth; i < len(e.tellBuf); i++ {
			e.tellBuf[i] = new(Message)
		}
	}
	slot := e.tellBuf[e.tellDepth]
	*slot = m
	e.tellDepth++
	e.rcv[to].Receive(slot, c)
	e.tellDepth--
	slot.Vec = nil
}

func (e *engine) schedTimer(d Time, node, tag int) {
	if d < 0 {
		d = 0
	}
	e.schedule(e.now+d, evTimer, int32(node), int32(tag), 0)
}

func (e *engine) fireTimer(node, tag int) {
	if node < 0 {
		if e.cTimed != nil {
			e.cTimed.Timer(tag)
		}
		return
	}
	if e.timed[node] != nil {
		e.timed[node].Timer(tag)
	}
}

func (e *engine) requestSnapshot() {
	N := len(e.nodes)
	s := &Snapshot{
		Taken:  e.now,
		Busy:   make([]Time, len(e.ch)),
		Sent:   make([]int64, len(e.ch)),
		Queue:  make([]int, len(e.ch)),
		Up:     make([]bool, len(e.ch)),
		NodeUp: make([]bool, N),
		Loss:   make([]float64, len(e.ch)),

		Bandwidth: make([]float64, len(e.ch)),
	}
	for c := range e.ch {
		ch := &e.ch[c]
		s.Busy[c] = ch.busyTotal
		if ch.busy {
			s.Busy[c] += e.now - ch.txStart
		}
		s.Sent[c] = ch.sent
		s.Queue[c] = ch.q.len()
		s.Up[c] = ch.up
		s.Loss[c] = ch.loss
		s.Bandwidth[c] = ch.bw
	}
	for v := range e.nodes {
		s.NodeUp[v] = e.nodes[v].up
	}
	s.PairDelivered = append([]int64(nil), e.pairDel...)
	s.PairDelay = append([]float64(nil), e.pairDelay...)
	s.PairDropped = append([]int64(nil), e.pairDrop...)
	s.PairGenerated = append([]int64(nil), e.pairGen...)
	if e.pairFDel != nil {
		s.PairFlowDelivered = append([]int64(nil), e.pairFDel...)
		s.PairFlowDelay = append([]float64(nil), e.pairFDelay...)
		s.PairFlowDropped = append([]int64(nil), e.pairFDrop...)
	}
	idx := -1
	for i, x := range e.snaps {
		if x == nil {
			idx = i
			break
		}
	}
	if idx < 0 {
		e.snaps = append(e.snaps, nil)
		idx = len(e.snaps) - 1
	}
	e.snaps[idx] = s
	e.schedule(e.now+e.cfg.ControlDelay, evSnapshot, 0, int32(idx), 0)
}

// ---- failures ----

// applyFailure applies failure event i. What it drops waits until the new
// physical topology is known, so that every packet in the network is first
// marked unreachable when its destination is down or cut off from the node
// holding it. Cost: O(N + L + packets in the network).
func (e *engine) applyFailure(i int) {
	f := &e.failures[i]
	e.curFail = i
	e.applying = true
	if f.Node >= 0 {
		e.setNode(f.Node, f.Up)
	}
	for _, l := range f.Links {
		e.setLink(l, f.Up)
	}
	e.applying = false
	e.components()
	for k := range e.pkts {
		p := &e.pkts[k]
		if p.live && !p.unreachable && !e.reaches(int(p.at), p.Dst) {
			p.unreachable, p.cause = true, int32(i)
		}
	}
	for _, d := range e.pending {
		e.drop(d.id, d.reason, d.c)
	}
	e.pending = e.pending[:0]
}

// components labels the nodes by connected component of the physical
// topology: nodes up, joined by links up (both channels of a link are up or
// down together). A node down gets −1. Cost: O(N + L).
func (e *engine) components() {
	if e.compArcUp == nil {
		e.compArcUp = make([]bool, len(e.ch))
		e.compNodeUp = make([]bool, len(e.nodes))
	}
	for c := range e.ch {
		e.compArcUp[c] = e.ch[c].up
	}
	for v := range e.nodes {
		e.compNodeUp[v] = e.nodes[v].up
	}
	e.search.Components(e.net.digraph, e.compArcUp, e.compNodeUp, e.comp)
}

// reaches reports whether node b can be reached from node a over the
// physical topology as it is now.
func (e *engine) reaches(a, b int) bool {
	return e.comp[a] >= 0 && e.comp[a] == e.comp[b]
}

func (e *engine) setNode(v int, up bool) {
	n := &e.nodes[v]
	if up == n.up {
		return
	}
	if !up {
		n.up = false
		// what the node holds is lost with it
		for _, c := range e.net.Out[v] {
			e.flush(c, NodeDown)
		}
		for _, c := range e.net.Out[v] {
			e.setLink(e.net.Channels[c].Link, false)
		}
		return
	}
	n.up = true
	for _, c := range e.net.Out[v] {
		e.setLink(e.net.Channels[c].Link, true)
	}
}

// flush drops everything queued or transmitting on channel c.
func (e *engine) flush(c int, reason DropReason) {
	ch := &e.ch[c]
	if ch.busy {
		e.addBusy(c, ch.txStart, e.now)
		ch.busy = false
		ch.epoch++ // cancels the pending end of transmission
		e.drop(ch.txPkt, reason, c)
	}
	for ch.q.len() > 0 {
		id := ch.q.pop()
		e.drop(id, reason, c)
	}
	ch.qBytes = 0
}

func (e *engine) setLink(l int, up bool) {
	was := e.linkDown[l] == 0
	if up {
		if e.linkDown[l] > 0 {
			e.linkDown[l]--
		}
	} else {
		e.linkDown[l]++
	}
	is := e.linkDown[l] == 0
	if was == is {
		return
	}
	lk := e.net.Graph.Links[l]
	for _, c := range []int{2 * l, 2*l + 1} {
		ch := &e.ch[c]
		ch.detGen++
		if !is {
			e.flush(c, LinkDown)
			ch.epoch++
			ch.up = false
			ch.downAt = e.now
		} else {
			ch.up = true
			e.addDown(c, ch.downAt, e.now)
		}
	}
	det := e.cfg.Failures.Detection
	var isUp int32
	if is {
		isUp = 1
	}
	e.schedule(e.now+det, evDetect, int32(2*l), isUp, e.ch[2*l].detGen)
	e.schedule(e.now+det, evDetect, int32(2*l+1), isUp, e.ch[2*l+1].detGen)
	if e.anyLS {
		e.flood(l, lk.A, lk.B, is)
	}
}

func (e *engine) addDown(c int, from, to Time) {
	if lo := max(from, e.cfg.Warmup); to > lo {
		e.res.Channels[c].Down += to - lo
	}
}

func (e *engine) detect(c int, up bool, gen uint32) {
	ch := &e.ch[c]
	if gen != ch.detGen {
		return // the link changed again before this was noticed
	}
	from := e.net.Channels[c].From
	if !e.nodes[from].up {
		return
	}
	ch.seenUp = up
	if e.det != nil && e.det[from] != nil {
		e.det[from].Detected(c, up)
	}
}

// flood schedules link-state news of link l at every node: detection time
// plus the propagation-delay distance from the nearer end node over links
// up now (Dijkstra from both end nodes; allocation-free after the first).
func (e *engine) flood(l, a, b int, up bool) {
	if e.floodW == nil {
		e.floodW = make([]float64, len(e.ch))
	}
	for c := range e.ch {
		if e.ch[c].up {
			e.floodW[c] = float64(e.net.Channels[c].Delay)
		} else {
			e.floodW[c] = math.Inf(1)
		}
	}
	e.floodSrc = e.floodSrc[:0]
	if e.nodes[a].up {
		e.floodSrc = append(e.floodSrc, a)
	}
	if e.nodes[b].up {
		e.floodSrc = append(e.floodSrc, b)
	}
	e.search.FromSet(e.net.digraph, e.floodSrc, e.floodW, nil)
	var u uint32
	if up {
		u = 1
	}
	for v, d := range e.search.Dist {
		if math.IsInf(d, 1) || e.ls[v] == nil {
			continue
		}
		e.schedule(e.now+e.cfg.Failures.Detection+Time(d), evLSA, int32(v), int32(l), u)
	}
}

// ---- end of run ----

func (e *engine) finish() (*Result, error) {
	r := e.res
	end := e.cfg.Duration
	window := float64(end - e.cfg.Warmup)
	for c := range e.ch {
		ch := &e.ch[c]
		if ch.busy {
			e.addBusy(c, ch.txStart, end)
			ch.busy = false
		}
		if !ch.up {
			e.addDown(c, ch.downAt, end)
		}
		r.Channels[c].Util /= window
	}
	nch := len(e.ch)
	for b := range r.Series {
		bin := &r.Series[b]
		w := float64(bin.End - bin.Start)
		for c := 0; c < nch; c++ {
			if u := float64(e.binBusy[b*nch+c]) / w; u > bin.UtilMax {
				bin.UtilMax = u
			}
		}
	}
	r.InFlight = e.live
	if r.Flows != nil {
		for i := range e.fl {
			if f := &e.fl[i]; f.live && f.measured {
				r.Flows.Unfinished++
				e.sampleFlow(f, FlowUnfinished)
			}
		}
		slices.SortFunc(r.Flows.Sample, func(a, b FlowRecord) int { return cmp.Compare(a.ID, b.ID) })
	}
	if got := r.Generated - r.Delivered - r.DroppedTotal(); got != r.InFlight {
		return nil, fmt.Errorf("sim: conservation violated: generated %d, delivered %d, dropped %d, in flight %d",
			r.Generated, r.Delivered, r.DroppedTotal(), r.InFlight)
	}
	return r, nil
}
