package experiments

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"hash/fnv"
	"math"
	"slices"
	"strconv"

	"hoplore/agents"
	"hoplore/sim"
)

// Run is one run of the grid: a cell and a replicate. Package sweep
// executes runs.
type Run struct {
	// Index is the run's position in Experiment.Runs.
	Index int
	// Dims are the run's dimension columns. Dims.Load is the requested
	// normalised load, or for absolute rates the normalised load they amount
	// to on the run's topology.
	Dims Dims
	// AgentSeed seeds the agent's own randomness: a mix of Dims.Seed and the
	// agent's label.
	AgentSeed uint64

	Exp      *Experiment
	Topology *Topology
	Agent    agents.Params
	Failure  *Failure

	// StartState, when the agent has start_from, is the state file its
	// learner starts from (see the README, "Train on failures, test on
	// others").
	StartState string

	load    float64 // requested normalised load; NaN for absolute rates
	failure int     // index in Topology's failure schedules
}

// Dims are the values that identify a run in the result tables: its cell
// (experiment, topology, agent, load, failure schedule), replicate, seed, id
// and position in the grid.
type Dims struct {
	Experiment string
	Topology   string
	Agent      string // the agent's canonical label (agents.Params.Canonical)
	Load       float64
	Failure    string
	Replicate  int
	Seed       uint64
	// RunID names the run: unique within the experiment (see RunID).
	RunID string
	// Index is the run's position in the experiment's full grid order.
	Index int
}

// Cells returns the number of cells: topologies × loads × failure
// schedules × agents, a family of failures (each) counting one schedule per
// element on each topology.
func (e *Experiment) Cells() int {
	n := 0
	for _, t := range e.Topologies {
		n += e.numLoads() * len(t.failures) * len(e.Agents)
	}
	return n
}

// Schedules returns the number of failure schedules on topology i, a
// family counting one per element.
func (e *Experiment) Schedules(i int) int { return len(e.Topologies[i].failures) }

func (e *Experiment) numLoads() int {
	if e.Traffic.Absolute {
		return 1
	}
	return len(e.Loads)
}

// Runs returns every run of the grid, Cells() × Replicates of them, in a
// fixed order: by topology, then load, then failure schedule, then agent (in
// the order the file lists them), then replicate. The result is computed once
// and shared; callers must not modify it.
func (e *Experiment) Runs() []*Run {
	e.runsOnce.Do(func() {
		loads := e.Loads
		if e.Traffic.Absolute {
			loads = []float64{math.NaN()}
		}
		for _, t := range e.Topologies {
			key := "" // t's Graph.Key, when an agent starts from a learned state
			for _, l := range loads {
				dimLoad := l
				if math.IsNaN(l) {
					dimLoad = t.absoluteLoad()
				}
				for fi, f := range t.failures {
					cell := cellKey(t.Label, l, f.Name)
					for ai, a := range e.Agents {
						label := a.Canonical()
						for rep := 0; rep < e.Replicates; rep++ {
							seed := RunSeed(e.Seed, cell, rep)
							e.runs = append(e.runs, &Run{
								Index: len(e.runs),
								Dims: Dims{
									Experiment: e.Name,
									Topology:   t.Label,
									Agent:      label,
									Load:       dimLoad,
									Failure:    f.Name,
									Replicate:  rep,
									Seed:       seed,
									RunID:      RunID(e.Name, cell, label, rep),
									Index:      len(e.runs),
								},
								AgentSeed: AgentSeed(seed, label),
								Exp:       e,
								Topology:  t,
								Agent:     a,
								Failure:   f,
								load:      l,
								failure:   fi,
							})
							if ai < len(e.Starts) && e.Starts[ai] != nil {
								if key == "" {
									key = t.Graph.Key()
								}
								e.runs[len(e.runs)-1].StartState = pickState(e.Starts[ai], key, rep)
							}
						}
					}
				}
			}
		}
		ids := make(map[string]bool, len(e.runs))
		for _, r := range e.runs {
			if ids[r.Dims.RunID] {
				panic(fmt.Sprintf("experiments: run id %s repeats", r.Dims.RunID))
			}
			ids[r.Dims.RunID] = true
		}
	})
	return e.runs
}

// cellKey is the canonical identity of a cell without its agent.
func cellKey(topology string, load float64, failure string) string {
	return "topology=" + topology + "\x00load=" + fmtLoad(load) + "\x00failure=" + failure
}

func fnv64(s string) uint64 {
	h := fnv.New64a()
	h.Write([]byte(s))
	return h.Sum64()
}

// RunSeed returns the seed of replicate rep of the cell whose key (without
// the agent) is cell: sim.Mix of the experiment seed, the FNV-1a hash of the
// key and the replicate. It depends on nothing else, so adding cells leaves
// other runs' seeds unchanged.
func RunSeed(expSeed uint64, cell string, rep int) uint64 {
	return sim.Mix(sim.Mix(expSeed, fnv64(cell)), uint64(rep))
}

// AgentSeed returns the seed of an agent's own randomness in a run.
func AgentSeed(runSeed uint64, agentLabel string) uint64 {
	return sim.Mix(runSeed, fnv64("agent="+agentLabel))
}

// RunID returns a run's identifier: the first 12 hex digits of the SHA-256
// of the experiment name, the cell key, the agent label and the replicate.
func RunID(experiment, cell, agent string, rep int) string {
	h := sha256.Sum256([]byte("experiment=" + experiment + "\x00" + cell + "\x00agent=" + agent + "\x00replicate=" + strconv.Itoa(rep)))
	return hex.EncodeToString(h[:6])
}

// prepare computes t's traffic matrix shape and its saturation scale; Parse
// calls it once per topology.
func (t *Topology) prepare(e *Experiment) error {
	n := t.Net
	switch e.Traffic.Matrix {
	case "uniform":
		t.shape = sim.UniformMatrix(n)
	case "gravity":
		t.shape = sim.GravityMatrix(n)
	case "hotspot":
		m, err := sim.HotspotMatrix(n, t.hot, e.Traffic.Hotspot.Fraction)
		if err != nil {
			return err
		}
		t.shape = m
	case "pairs":
		t.shape = t.pairs
	case "file":
		if !e.Traffic.Replay {
			t.shape = t.periods[0]
			break
		}
		// A replay is scaled as a whole: load 1 saturates the busiest
		// channel in the busiest period.
		t.scale = math.Inf(1)
		for _, m := range t.periods {
			t.scale = math.Min(t.scale, sim.SaturationScale(n, m, e.Traffic.Size.Mean()))
		}
		if !(t.scale > 0) || math.IsInf(t.scale, 0) {
			return fmt.Errorf("the traffic matrices offer no load")
		}
		// for estimates, the mean over the periods
		t.shapeTotal, t.shapeHops = 0, 0
		for _, m := range t.periods {
			for s, row := range m {
				hs := n.Hops[s]
				for d, v := range row {
					t.shapeTotal += v / float64(len(t.periods))
					t.shapeHops += v * float64(hs[d]) / float64(len(t.periods))
				}
			}
		}
		return nil
	}
	t.scale = sim.SaturationScale(n, t.shape, e.Traffic.Size.Mean())
	if g := e.Traffic.FlowGen; g != nil {
		t.flowScale = sim.SaturationScale(n, t.shape, g.Size.Mean())
	}
	t.shapeTotal, t.shapeHops = 0, 0
	for s, row := range t.shape {
		hs := n.Hops[s]
		for d, v := range row {
			t.shapeTotal += v
			t.shapeHops += v * float64(hs[d])
		}
	}
	if !(t.scale > 0) || math.IsInf(t.scale, 0) {
		return fmt.Errorf("the traffic matrix offers no load")
	}
	return nil
}

// absoluteLoad returns the normalised load absolute rates amount to on t.
func (t *Topology) absoluteLoad() float64 { return 1 / t.scale }

// Rates returns the run's traffic matrix in packets per second; for a
// replay, its first period's (see Periods).
func (r *Run) Rates() [][]float64 {
	t := r.Topology
	if r.Exp.Traffic.Replay {
		return scaled(t.periods[0], r.factor())
	}
	return scaled(t.shape, r.factor())
}

// factor is what the topology's matrix is multiplied by for the run.
func (r *Run) factor() float64 {
	if math.IsNaN(r.load) {
		return 1
	}
	f := r.load * r.Topology.scale
	if g := r.Exp.Traffic.FlowGen; g != nil && g.Share > 0 {
		f *= 1 - g.Share
	}
	return f
}

// FlowRates returns the run's flow traffic in flows per second per pair,
// nil without flow traffic. With a share X of a cell's load L, flows of the
// matrix's shape offer normalised load X·L by themselves and the packets
// (1−X)·L; as both follow the same shape over the same hop-count paths,
// the busiest channel carries L in all (normalised load counts bytes:
// packets times their mean size plus flows times theirs). With arrivals,
// each source starts that many flows per second, spread over
// destinations in its row's proportions.
func (r *Run) FlowRates() [][]float64 {
	g := r.Exp.Traffic.FlowGen
	if g == nil {
		return nil
	}
	t := r.Topology
	if g.Share > 0 {
		f := g.Share * t.flowScale
		if !math.IsNaN(r.load) {
			f *= r.load
		}
		return scaled(t.shape, f)
	}
	out := make([][]float64, len(t.shape))
	for s, row := range t.shape {
		var sum float64
		for d, v := range row {
			if d != s {
				sum += v
			}
		}
		out[s] = make([]float64, len(row))
		if sum == 0 {
			continue
		}
		for d, v := range row {
			if d != s {
				out[s][d] = g.Arrivals * v / sum
			}
		}
	}
	return out
}

// flowGen returns the run's sim flow traffic, nil without.
func (r *Run) flowGen() *sim.FlowGen {
	g := r.Exp.Traffic.FlowGen
	if g == nil {
		return nil
	}
	return &sim.FlowGen{Rates: r.FlowRates(), Size: g.Size, RateLimit: g.RateLimit, PacketBytes: g.PacketBytes,
		MiceBytes: g.MiceBytes, ElephantBytes: g.ElephantBytes, Sample: g.Sample}
}

func scaled(m [][]float64, f float64) [][]float64 {
	out := make([][]float64, len(m))
	for s, row := range m {
		out[s] = make([]float64, len(row))
		for d, v := range row {
			out[s][d] = v * f
		}
	}
	return out
}

// Periods returns the matrices of a replay in packets per second with the
// times they start, nil when the traffic is not a replay.
func (r *Run) Periods() []sim.RatePeriod {
	if !r.Exp.Traffic.Replay {
		return nil
	}
	out := make([]sim.RatePeriod, len(r.Topology.periods))
	for k, m := range r.Topology.periods {
		out[k] = sim.RatePeriod{At: r.Exp.Traffic.Periods[k].At, Rates: scaled(m, r.factor())}
	}
	return out
}

// Config builds the engine configuration of the run. The topology's Net is
// shared between runs (read-only); everything else is the run's own.
func (r *Run) Config() (*sim.Config, error) {
	e, t := r.Exp, r.Topology
	ap := r.Agent
	ap.MeanPacketBytes = r.meanPacketBytes()
	ap.PacketSizeSCV = r.packetSizeSCV()
	agent, err := agents.New(ap, t.Net)
	if err != nil {
		return nil, fmt.Errorf("experiments: run %s: %w", r.Dims.RunID, err)
	}
	cfg := &sim.Config{
		Net:      t.Net,
		Duration: e.Duration,
		Warmup:   e.Warmup,
		Bin:      e.Bin,
		HopLimit: e.HopLimit,
		Traffic: sim.Traffic{
			Rates:   r.baseRates(),
			Periods: r.Periods(),
			Size:    e.Traffic.Size,
			Redraw:  e.Traffic.Redraw,
			Flows:   e.Traffic.Flows,
			Phases:  e.Traffic.Phases,
			FlowGen: r.flowGen(),
		},
		Failures:   r.Failures(),
		Conditions: t.conditions,
		Agent:      agent,
		PinFlows:   r.Agent.Pin == agents.PinFlow,
		Seed:       r.Dims.Seed,
		AgentSeed:  r.AgentSeed,
	}
	if k, _ := agents.Lookup(r.Agent.Kind); k.Central {
		cfg.ControlDelay = r.Agent.ControlDelay
	}
	return cfg, nil
}

// baseRates are the rates before any period: the matrix, or nothing for a
// replay.
func (r *Run) baseRates() [][]float64 {
	if r.Exp.Traffic.Replay {
		return nil
	}
	return r.Rates()
}

// Failures returns the run's failure schedule: the scheduled events resolved
// on its topology followed by the random ones drawn from its seed.
func (r *Run) Failures() sim.Failures {
	f := r.Failure
	out := sim.Failures{Detection: f.Detection}
	if f.Name == "none" {
		out.Detection = DefaultDetection
		return out
	}
	for _, ev := range r.Topology.scheduled[r.failure] {
		ev.Links = slices.Clone(ev.Links)
		out.Events = append(out.Events, ev)
	}
	if f.Random != nil {
		out.Events = append(out.Events, randomFailures(r.Topology.Graph, f.Random, r.Exp.Duration, r.Dims.Seed)...)
	}
	return out
}

// randomFailures draws random failures with sim.RandomFailures: every
// element of the scope (links or nodes, in index order) alternates between
// up times exponential with mean MTBF and down times exponential with mean
// MTTR, each element from its own stream, so adding an element leaves the
// others' draws unchanged. Events after duration are left out.
func randomFailures(g *sim.Graph, rf *Random, duration sim.Time, seed uint64) []sim.FailureEvent {
	n := len(g.Links)
	if rf.Scope == "nodes" {
		n = len(g.Nodes)
	}
	evs := sim.RandomFailures(seed, n, rf.MTBF, rf.MTTR, duration, func(i int, ev *sim.FailureEvent) {
		if rf.Scope == "nodes" {
			ev.Node = i
			ev.Element = g.Nodes[i].Name
			return
		}
		l := g.Links[i]
		ev.Links = []int{i}
		ev.Element = g.Nodes[l.A].Name + "-" + g.Nodes[l.B].Name
	})
	out := evs[:0]
	for _, ev := range evs {
		if ev.At < duration {
			out = append(out, ev)
		}
	}
	return out
}

// Events per hop of a data packet (transmission end, arrival) and per
// generated packet (generation), for EstimateEvents.
const (
	eventsPerHop    = 2
	eventsPerPacket = 1
)

// size returns what the agent's cost estimate needs to know of the run.
func (r *Run) size() agents.RunSize {
	t := r.Topology
	f := 1.0
	if !math.IsNaN(r.load) {
		f = r.load * t.scale
	}
	total := t.shapeTotal * f
	if g := r.Exp.Traffic.FlowGen; g != nil {
		if g.Share > 0 {
			total *= 1 - g.Share
		}
		// flow packets per second: flows per second times packets per flow
		total += sumRates(r.FlowRates()) * g.packetsPerFlow()
	}
	meanHops := 0.0
	if t.shapeTotal > 0 {
		meanHops = t.shapeHops / t.shapeTotal
	}
	return agents.RunSize{
		Nodes:    t.Net.NumNodes(),
		Links:    len(t.Net.Graph.Links),
		Channels: len(t.Net.Channels),
		Seconds:  r.Exp.Duration.Seconds(),
		Packets:  total,
		MeanHops: meanHops,
	}
}

// EstimateEvents returns a rough number of engine events the run will
// process: generated packets × (1 + 2 × mean shortest-path hops), plus what
// the agent's kind estimates for itself (control messages, controller
// rounds: agents.Kind.Cost), plus random failures. Cost: O(1).
func (r *Run) EstimateEvents() float64 {
	s := r.size()
	events := s.Packets * s.Seconds * (eventsPerPacket + eventsPerHop*s.MeanHops)
	events += r.Agent.Estimate(s).Events
	if f := r.Failure; f.Random != nil {
		events += 2 * s.Seconds / (f.Random.MTBF + f.Random.MTTR).Seconds() * float64(s.Channels)
	}
	return events
}

// EstimateEvents returns the sum of EstimateEvents over all runs. The
// replicates of a cell, consecutive in Runs, share their estimate (it
// depends on the cell, not on the seed), so it is taken once per cell.
func (e *Experiment) EstimateEvents() float64 {
	runs := e.Runs()
	step := max(e.Replicates, 1)
	s := 0.0
	for i := 0; i < len(runs); i += step {
		s += float64(min(step, len(runs)-i)) * runs[i].EstimateEvents()
	}
	return s
}

// EstimateBytes returns a rough upper estimate of the memory one run holds
// at its peak, in bytes: the time series (a delivery-time histogram whose
// values span three decades, and per-channel busy time per bin), packets
// that can be queued at once (every buffer full), the agent's tables (as its
// kind estimates them: agents.Kind.Cost) and the result rows. It ignores
// what the Go runtime itself needs (a few MB per process).
func (r *Run) EstimateBytes() float64 {
	const (
		packetBytes = 200 // a packet and its queue slot
	)
	histBytes := sim.HistogramBytes(1e3)
	e, t := r.Exp, r.Topology
	channels := float64(len(t.Net.Channels))
	bins := math.Ceil(float64(e.Duration) / float64(e.Bin))
	b := bins * (histBytes + 8*channels + 200) // series, busy time, series rows
	var queued float64
	for _, c := range t.Net.Channels {
		queued += float64(min(c.Buffer, 1<<20)) + 2
	}
	b += queued * packetBytes
	b += channels * 300 // channel state and links rows
	b += r.Agent.Estimate(r.size()).Bytes
	return b
}

// EstimatePeakBytes returns a rough upper estimate of the peak memory of
// running the experiment with the given number of workers, bytes: the total
// of EstimateMemory.
func (e *Experiment) EstimatePeakBytes(workers int) float64 {
	return e.EstimateMemory(workers).Total
}

func fmtLoad(l float64) string {
	if math.IsNaN(l) {
		return "absolute"
	}
	return strconv.FormatFloat(l, 'g', -1, 64)
}

// packetsPerFlow returns the mean number of packets of a flow: exact for
// fixed sizes and mixes, E[X]/P + 1/2 (at least 1) otherwise (the last
// packet's fill taken as uniform).
func (g *FlowTraffic) packetsPerFlow() float64 {
	pkt := float64(g.PacketBytes)
	if pkt == 0 {
		pkt = sim.DefaultFlowPacketBytes
	}
	if g.Size.Kind == sim.Classes {
		var n float64
		for _, c := range g.Size.Classes {
			n += c.Fraction * math.Ceil(math.Ceil(c.Bytes)/pkt)
		}
		return n
	}
	return math.Max(1, g.Size.Mean()/pkt+0.5)
}

// packetSizeSCV is the squared coefficient of variation of the run's data
// packet sizes, for central-optimal's min-delay model: the packet
// traffic's (sim.SizeDist.SCV), mixed with the flows' packets by packets
// per second as in meanPacketBytes, a flow's packets taken at their mean
// size (the shorter last packet of a flow is neglected).
func (r *Run) packetSizeSCV() float64 {
	e := r.Exp
	d := e.Traffic.Size
	g := e.Traffic.FlowGen
	if g == nil || e.Traffic.Replay {
		return d.SCV()
	}
	pr := sumRates(r.Rates())
	fr := sumRates(r.FlowRates()) * g.packetsPerFlow()
	if pr+fr == 0 {
		return d.SCV()
	}
	m, flowPkt := d.Mean(), g.Size.Mean()/g.packetsPerFlow()
	mean := (pr*m + fr*flowPkt) / (pr + fr)
	second := (pr*m*m*(1+d.SCV()) + fr*flowPkt*flowPkt) / (pr + fr) // E[X²]
	return math.Max(0, second/(mean*mean)-1)
}

func sumRates(m [][]float64) float64 {
	var s float64
	for _, row := range m {
		for _, v := range row {
			s += v
		}
	}
	return s
}

// OptimumInput is what the model optimum routes for a run (README, The
// model optimum): everything the run sends, as a fluid demand.
type OptimumInput struct {
	// Rates is the demand in packets per second per pair, a packet being
	// the run's mean data packet: a pair's mean offered bit rate over
	// 8·MeanBytes.
	Rates [][]float64
	// MeanBytes is the mean data packet size, SCV the squared coefficient
	// of variation of the sizes (packets and flows' packets mixed by
	// packets per second).
	MeanBytes, SCV float64
	// Load is the normalised load of the whole demand, the numerator of
	// opt_load_limit: the cell's load, except with flow arrivals (the
	// load then counts the packets alone), where it is sim.NormalisedLoad
	// of the whole demand. NaN for absolute rates.
	Load float64
}

// OptimumInput returns the run's demand for the model optimum. A pair's
// bit rate is its packets per second times their mean size plus, with flow
// traffic, its flows per second times the mean flow size (a flow's packets
// carry its bytes and no more: sim.FlowGen sends a flow of S bytes as
// ⌈S/P⌉ packets of at most P bytes); flows' burstiness (a flow's packets
// sent back to back) is not in it. Without flow traffic it is Rates() with
// the packet sizes' mean and variability and the cell's load.
func (r *Run) OptimumInput() OptimumInput {
	e := r.Exp
	in := OptimumInput{Rates: r.Rates(), MeanBytes: e.Traffic.Size.Mean(), SCV: e.Traffic.Size.SCV(), Load: r.Dims.Load}
	g := e.Traffic.FlowGen
	if g == nil || e.Traffic.Replay {
		return in
	}
	in.MeanBytes, in.SCV = r.meanPacketBytes(), r.packetSizeSCV()
	pkt, flow := e.Traffic.Size.Mean(), g.Size.Mean()
	fr := r.FlowRates()
	for s, row := range in.Rates {
		for d, v := range row {
			row[d] = (v*pkt + fr[s][d]*flow) / in.MeanBytes
		}
	}
	if g.Share == 0 && !math.IsNaN(in.Load) {
		in.Load = sim.NormalisedLoad(r.Topology.Net, in.Rates, in.MeanBytes)
	}
	return in
}

// meanPacketBytes is the mean size of the run's data packets, for the
// agents' estimates: the packet traffic's mean size and the flows' packets
// (mean flow size over mean packets per flow), weighted by packets per
// second.
func (r *Run) meanPacketBytes() float64 {
	e := r.Exp
	g := e.Traffic.FlowGen
	if g == nil || e.Traffic.Replay {
		return e.Traffic.Size.Mean()
	}
	pr := sumRates(r.Rates())
	fr := sumRates(r.FlowRates()) * g.packetsPerFlow()
	if pr+fr == 0 {
		return e.Traffic.Size.Mean()
	}
	flowPkt := g.Size.Mean() / g.packetsPerFlow()
	return (pr*e.Traffic.Size.Mean() + fr*flowPkt) / (pr + fr)
}
