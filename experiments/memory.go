package experiments

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"time"
	"unsafe"

	"hoplore/sim"
)

// MemoryPart is one term of a memory estimate: the bytes that one setting
// of the experiment drives.
type MemoryPart struct {
	Setting string  // the setting, as a user would change it: "bin: 10us (1e+07 bins per run)"
	Bytes   float64 // bytes at peak
}

// MemoryEstimate is a rough upper estimate of a sweep's peak memory.
type MemoryEstimate struct {
	Total float64
	Parts []MemoryPart // largest first
}

// Largest returns the term that drives most of the estimate.
func (m MemoryEstimate) Largest() MemoryPart {
	if len(m.Parts) == 0 {
		return MemoryPart{}
	}
	return m.Parts[0]
}

// Memory figures used by EstimateMemory, bytes.
const (
	processBytes     = 30e6 // runtime, parsed experiment, Parquet writers
	perRunBytes      = 1536 // every run of the grid: its description, its place in the plan and listings, its runs row (measured: about 0.9 kB)
	queuedBytes      = 200  // a packet and its queue slot
	failureBytes     = 600  // a failure event, its engine events and its recoveries row (measured: about 390)
	seriesRowBytes   = 200  // a series row and a bin's counters
	channelBytes     = 300  // channel state and its links row
	perBinHistSpread = 1e3  // delivery times of one bin span three decades
	// A replay's demand in the engine: its destination and weight in the
	// source's draw table of the period (alias method: weight, probability,
	// alias), and a source's entry per period (rate, table header: 80
	// bytes, doubled for the slack of growing slices).
	replayDemandBytes = 40
	// A demand row of a matrix file as validation keeps it: names, rate,
	// and the row and position its error messages point at (measured:
	// about 370).
	demandRowBytes    = 400
	replaySourceBytes = 160
	// A flow of traffic.flows.sample beyond its record (sim.FlowRecord,
	// with the slack of its slice's growth): its flows.parquet row (256
	// bytes and its optional values) and its encoding in the run's part,
	// both held while the part is written (measured with the record:
	// 420–515 bytes per sampled flow, the higher when the record's slice
	// or the rows are not yet collected at the peak).
	flowRowBytes = 500
	// GCFactor turns live heap into resident memory: with the garbage
	// collector's default pacing (GOGC=100) the heap grows to about twice
	// its live part before a collection.
	GCFactor = 2
)

// EstimateMemory returns a rough upper estimate of the peak memory of
// running the experiment with the given number of workers (resident
// memory: live heap × GCFactor), by the setting that drives each part: the
// process itself, every run of the grid
// (replicates × cells), and the largest runs held at once by the workers —
// their time series (bin), their queues with every buffer full (buffer),
// their topology, their agents' tables (as each kind estimates them), the
// candidate paths of their flows' idle-network completion times, the
// flows they record one by one (traffic.flows.sample: the flows expected
// in the measured window, at most the sample) and their failure events (random failures: the expected count from mtbf and
// mttr). Cost: one estimate per cell, not per replicate.
func (e *Experiment) EstimateMemory(workers int) MemoryEstimate {
	runs := e.Runs()
	type runEst struct {
		total float64
		parts []MemoryPart
	}
	var per []runEst
	seen := map[string]bool{}
	for _, r := range runs {
		key := r.Dims.Topology + "\x00" + r.Dims.Agent + "\x00" + r.Dims.Failure + "\x00" + fmt.Sprint(r.Dims.Load)
		if seen[key] {
			continue
		}
		seen[key] = true
		ps := r.memoryParts()
		est := runEst{parts: ps}
		for _, p := range ps {
			est.total += p.Bytes
		}
		for range min(e.Replicates, max(workers, 1)) { // the workers may all hold replicates of this cell
			per = append(per, est)
		}
	}
	slices.SortStableFunc(per, func(a, b runEst) int { return cmp.Compare(b.total, a.total) })
	agg := map[string]float64{}
	var order []string
	add := func(setting string, b float64) {
		if _, ok := agg[setting]; !ok {
			order = append(order, setting)
		}
		agg[setting] += b
	}
	add("the process itself", processBytes)
	add(fmt.Sprintf("replicates: %d (%d runs in the grid)", e.Replicates, len(runs)), float64(len(runs))*perRunBytes)
	if tr := e.Traffic; tr.Matrix == "file" {
		// the demands as read, and a replay's matrices on each topology,
		// held from validation on
		var demands int
		for _, p := range tr.Periods {
			demands += len(p.Demands)
		}
		add(fmt.Sprintf("traffic.matrix: %d demands read", demands), float64(demands)*demandRowBytes)
		if tr.Replay {
			for _, t := range e.Topologies {
				add(replaySetting(e, t), ReplayBytes(len(tr.Periods), len(t.Graph.Nodes)))
			}
		}
	}
	for i := 0; i < workers && i < len(per); i++ {
		for _, p := range per[i].parts {
			add(p.Setting, p.Bytes)
		}
	}
	var m MemoryEstimate
	for i, s := range order {
		b := agg[s]
		if i > 0 { // the live heap of everything but the process allowance
			b *= GCFactor
		}
		m.Parts = append(m.Parts, MemoryPart{Setting: s, Bytes: b})
		m.Total += b
	}
	slices.SortStableFunc(m.Parts, func(a, b MemoryPart) int { return cmp.Compare(b.Bytes, a.Bytes) })
	return m
}

// memoryParts returns the run's own peak memory by setting.
func (r *Run) memoryParts() []MemoryPart {
	e, t := r.Exp, r.Topology
	channels := float64(len(t.Net.Channels))
	bins := math.Ceil(float64(e.Duration) / float64(e.Bin))
	var queued float64
	for _, c := range t.Net.Channels {
		queued += float64(min(c.Buffer, 1<<20)) + 2
	}
	// A bin's delivery-time histogram: none while the bin is empty; its
	// values span at most three decades, and fewer when the bin holds few
	// packets (a span of 1 + m for m packets is generous for delivery
	// times, which share their fixed path delays).
	perBin := r.size().Packets * e.Bin.Seconds() // packets delivered per bin, about
	hist := -math.Expm1(-perBin) * sim.HistogramBytes(min(perBinHistSpread, 1+perBin))
	ps := []MemoryPart{
		{fmt.Sprintf("bin: %s (%.3g bins per run)", time.Duration(e.Bin), bins),
			bins * (hist + 8*channels + seriesRowBytes)},
		{fmt.Sprintf("buffer (%.3g packets queued at most, topology %s)", queued, t.Label), queued * queuedBytes},
		{fmt.Sprintf("topology %s (%d channels)", t.Label, len(t.Net.Channels)), channels * channelBytes},
		{"agent " + r.Dims.Agent, r.Agent.Estimate(r.size()).Bytes},
	}
	if tr := e.Traffic; tr.Replay {
		// the run's scaled copy of the matrices, and the engine's
		// per-source draw tables of each period's demands
		var demands int
		for _, p := range tr.Periods {
			demands += len(p.Demands)
		}
		ps = append(ps, MemoryPart{replaySetting(e, t),
			ReplayBytes(len(tr.Periods), len(t.Graph.Nodes)) + float64(demands)*replayDemandBytes + float64(len(tr.Periods)*len(t.Graph.Nodes))*replaySourceBytes})
	}
	if e.Traffic.FlowGen != nil {
		// the candidate paths of the flows' idle-network completion
		// times: next-hop trees per destination with flow traffic
		var dests int
		fr := r.FlowRates()
		for d := range fr {
			for s, row := range fr {
				if s != d && d < len(row) && row[d] > 0 {
					dests++
					break
				}
			}
		}
		ps = append(ps, MemoryPart{fmt.Sprintf("traffic.flows: idle-network paths towards %d destinations (topology %s)", dests, t.Label),
			sim.IdleRoutesBytes(len(t.Graph.Nodes), len(t.Net.Channels), dests)})
		if n := r.sampledFlows(); n > 0 {
			ps = append(ps, MemoryPart{fmt.Sprintf("traffic.flows.sample: %d (%.3g flows recorded per run)", e.Traffic.FlowGen.Sample, n),
				n * FlowSampleBytes})
		}
	}
	if f := r.Failure; f != nil && f.Random != nil {
		n := float64(len(t.Graph.Links))
		if f.Random.Scope == "nodes" {
			n = float64(len(t.Graph.Nodes))
		}
		cycle := (f.Random.MTBF + f.Random.MTTR).Seconds()
		events := 2 * n * (e.Duration.Seconds()/cycle + 1)
		ps = append(ps, MemoryPart{fmt.Sprintf("failures %s: mtbf %s, mttr %s (%.3g failure events per run)",
			f.Name, time.Duration(f.Random.MTBF), time.Duration(f.Random.MTTR), events), events * failureBytes})
	} else if f != nil {
		ps = append(ps, MemoryPart{"failures " + f.Name, float64(len(f.Events)) * failureBytes})
	}
	return ps
}

// FlowSampleBytes is the memory a run takes per flow of its
// traffic.flows.sample: the record in the engine's sample, with the slack
// of the slice's growth (a quarter), its flows.parquet row and its
// encoding in the run's part.
const FlowSampleBytes = float64(unsafe.Sizeof(sim.FlowRecord{}))*5/4 + flowRowBytes

// sampledFlows returns how many flows the run records one by one, about:
// the flows expected to start in its measured window (flows per second,
// at the highest phase factor if above 1, times the window), at most
// traffic.flows.sample.
func (r *Run) sampledFlows() float64 {
	e := r.Exp
	g := e.Traffic.FlowGen
	if g == nil || g.Sample == 0 {
		return 0
	}
	peak := 1.0
	for _, ph := range e.Traffic.Phases {
		peak = math.Max(peak, ph.Factor)
	}
	n := sumRates(r.FlowRates()) * peak * (e.Duration - e.Warmup).Seconds()
	return math.Min(math.Ceil(n), float64(g.Sample))
}

// replaySetting names a replay's memory term on topology t.
func replaySetting(e *Experiment, t *Topology) string {
	n := len(t.Graph.Nodes)
	return fmt.Sprintf("traffic.matrix: a replay of %d periods (dense %d×%d matrices on topology %s)", len(e.Traffic.Periods), n, n, t.Label)
}
