package sim

import (
	"context"
	"math/rand/v2"
	"runtime"
)

// PendingEvents runs cfg and returns the mean number of events pending in
// the kernel's heap, sampled at n evenly spaced instants of the measured
// window (the run is stopped and resumed at each instant; nothing else of
// the run changes).
func PendingEvents(cfg *Config, n int) (float64, error) {
	c := *cfg
	e, err := newEngine(&c)
	if err != nil {
		return 0, err
	}
	sum := 0.0
	for i := 1; i <= n; i++ {
		c.Duration = cfg.Warmup + (cfg.Duration-cfg.Warmup)*Time(i)/Time(n)
		if err := e.loop(context.Background()); err != nil {
			return 0, err
		}
		sum += float64(e.heap.len())
	}
	return sum / float64(n), nil
}

// Hold is the classic hold model of an event list (Vaucher & Duval, "A
// comparison of simulation event list algorithms", CACM 18(4), 1975): the
// kernel's typed event heap holding a fixed number of pending events, each
// step popping the earliest and pushing one a random exponential increment
// later, drawn from a PCG stream as the engine draws its own.
type Hold struct {
	h    eventHeap
	r    *rand.Rand
	seq  uint64
	mean float64 // mean increment in ns
}

// NewHold returns a hold loop over pending events whose increments have
// mean meanAhead (so that pending/meanAhead events happen per unit time).
func NewHold(pending int, meanAhead Time, seed uint64) *Hold {
	h := &Hold{r: rand.New(rand.NewPCG(seed, 1)), mean: float64(meanAhead)}
	for range pending {
		h.push(0)
	}
	return h
}

func (h *Hold) push(now Time) {
	h.seq++
	h.h.push(event{at: now + Time(h.r.ExpFloat64()*h.mean), seq: h.seq, kind: evGen})
}

// Run performs n hold steps and returns the simulated time reached.
func (h *Hold) Run(n int) Time {
	var now Time
	for range n {
		now = h.h.pop().at
		h.push(now)
	}
	return now
}

// Len returns the number of pending events.
func (h *Hold) Len() int { return h.h.len() }

// IdealFCTAlong is IdealFCT's completion time along one given simple path
// of channels from src to dst (path non-empty), rather than the best of
// the candidates.
func IdealFCTAlong(n *Net, path []int, size int64, packetBytes int, rate float64, bw []float64, delay []Time) Time {
	next := make([]int32, n.NumNodes())
	for i := range next {
		next[i] = NoRoute
	}
	for _, c := range path {
		next[n.Channels[c].From] = int32(c)
	}
	src, dst := n.Channels[path[0]].From, n.Channels[path[len(path)-1]].To
	return idealFCT(n, src, dst, size, packetBytes, rate, &staticParams{bw, delay}, next)
}

// IdleFCT returns IdealFCT as the engine computes it at each flow start:
// with the candidate trees cached per destination.
func IdleFCT(n *Net, packetBytes int, bw []float64, delay []Time) func(src, dst int, size int64, rate float64) Time {
	r, prm := newIdleRoutes(n, packetBytes), &staticParams{bw, delay}
	return func(src, dst int, size int64, rate float64) Time { return r.fct(src, dst, size, rate, prm) }
}

// IdleRoutesHeap returns the bytes allocated for the candidate paths of
// the idle-network completion time on net once dests destinations have
// their trees, and runs one look-up per destination.
func IdleRoutesHeap(n *Net, dests int) uint64 {
	bw, delay := make([]float64, len(n.Channels)), make([]Time, len(n.Channels))
	for c, ch := range n.Channels {
		bw[c], delay[c] = ch.Bandwidth, ch.Delay
	}
	var m0, m1 runtime.MemStats
	runtime.ReadMemStats(&m0)
	r, prm := newIdleRoutes(n, DefaultFlowPacketBytes), &staticParams{bw, delay}
	for d := 0; d < dests; d++ {
		r.fct((d+1)%n.NumNodes(), d, 1e6, 1e9, prm)
	}
	runtime.ReadMemStats(&m1)
	runtime.KeepAlive(r)
	return m1.TotalAlloc - m0.TotalAlloc
}
