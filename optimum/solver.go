package optimum

import (
	"fmt"
	"math"

	"hoplore/paths"
)

// Solver holds a network and every buffer the solvers need, so that
// repeated solves on the same network (a controller re-solving for a new
// demand estimate) allocate nothing. A Solver is not safe for concurrent use.
type Solver struct {
	net      Network
	graph    *paths.Graph
	outStart []int // channels leaving node v: out[outStart[v]:outStart[v+1]], by head node then index
	out      []int

	// dem[k*N+s] is the routable demand s→k in packets/s.
	dem        []float64
	total      float64 // Σ dem
	unroutable float64 // demand between nodes with no path, packets/s
	solved     int     // 0 none, 1 min-max flow held in flow, 2 min-delay, 3 min-mix flow held in flow
	mm         MinMax  // the last MinMaxUtil result (solved == 1)
	mmEps      float64 // and its eps

	// Service-time variability of MinDelay's M/G/1 channels: scv is the
	// squared coefficient of variation cs², and short = (1 − cs²)/2, the
	// share of the M/M/1 queueing term the Pollaczek–Khinchine mean lacks.
	scv, short float64

	// MinMix's weights: as given (objW), the delay weight over γT₀ and the
	// loss weight over γ, the norm's exponent (0 without a utilisation
	// weight), and T₀.
	objW                      Weights
	objWD, objWL, objP, objD0 float64

	// Shortest-path workspace; dist and next alias the search's results.
	search paths.Search
	dist   []float64
	next   []int32
	depth  []int32
	stack  []int32
	count  []int32
	order  []int
	load   []float64
	rem    []float64
	// Cycle-cancelling workspace.
	cstate, cpos, cvia []int32

	lengths []float64 // per channel: coarse-step lengths, then marginal delays
	lprimal []float64 // per channel: fine-step lengths
	lmask   []float64 // per channel: coarse lengths kept on the nearly saturated channels
	gtot    []float64 // per channel: the ℓp descent's loads (gradientBound)
	flow    []float64 // [k*E+c]: flow towards k on channel c, the current solution
	tot     []float64 // Σ_k flow
	yk      []float64 // [k*E+c]: the latest direction (phase or all-or-nothing flow)
	ytot    []float64
	dir     []float64 // per channel: MinMix's step direction
	sumk    []float64 // running sum of phase flows (min-max)
	sumtot  []float64
}

// NewSolver validates net and returns a solver for it. Cost O(N² + N·E)
// memory: per-destination flows are kept so that a solution can be installed
// as per-destination splits.
func NewSolver(net Network) (*Solver, error) {
	if err := net.validate(); err != nil {
		return nil, err
	}
	N, E := net.Nodes, len(net.Channels)
	s := &Solver{net: Network{Nodes: N, Channels: append([]Channel(nil), net.Channels...)}, scv: 1}
	tails, heads := make([]int, E), make([]int, E)
	for c, ch := range net.Channels {
		tails[c], heads[c] = ch.From, ch.To
	}
	s.graph = paths.NewGraph(N, tails, heads)
	s.outStart = make([]int, N+1)
	s.out = make([]int, 0, E)
	for v := 0; v < N; v++ {
		arcs, _ := s.graph.Out(v)
		for _, a := range arcs {
			s.out = append(s.out, int(a))
		}
		s.outStart[v+1] = len(s.out)
	}
	s.dem = make([]float64, N*N)
	s.depth = make([]int32, N)
	s.stack = make([]int32, 0, N)
	s.count = make([]int32, N+1)
	s.order = make([]int, 0, N)
	s.cstate, s.cpos, s.cvia = make([]int32, N), make([]int32, N), make([]int32, N)
	s.load = make([]float64, N)
	s.rem = make([]float64, N)
	s.lengths = make([]float64, E)
	s.lprimal = make([]float64, E)
	s.lmask = make([]float64, E)
	s.gtot = make([]float64, E)
	s.flow = make([]float64, N*E)
	s.tot = make([]float64, E)
	s.yk = make([]float64, N*E)
	s.ytot = make([]float64, E)
	s.dir = make([]float64, E)
	s.sumk = make([]float64, N*E)
	s.sumtot = make([]float64, E)
	return s, nil
}

// SetServiceSCV sets the squared coefficient of variation cs² of the
// packet service time that MinDelay's channels assume: 1 (the default)
// for exponential packet sizes, M/M/1 channels; 0 for a fixed size, M/D/1
// channels; any finite cs² ≥ 0 for M/G/1 channels (sim.SizeDist.SCV gives
// it for a size distribution). It leaves the last solution in place.
func (s *Solver) SetServiceSCV(cs2 float64) error {
	if !(cs2 >= 0) || math.IsInf(cs2, 1) {
		return fmt.Errorf("%w: service-time squared coefficient of variation %v is not a finite number >= 0", ErrInput, cs2)
	}
	s.scv, s.short = cs2, (1-cs2)/2
	return nil
}

// ServiceSCV returns the service-time cs² set by SetServiceSCV (default 1).
func (s *Solver) ServiceSCV() float64 { return s.scv }

// Network returns the solver's network (shared: do not modify).
func (s *Solver) Network() *Network { return &s.net }

// SetDemand sets the demand matrix: demand[src][dst] packets/s (rows may be
// shorter than the node count; missing entries are 0; the diagonal is
// ignored). Demand between nodes that no path of usable channels joins is
// set aside and reported as unroutable by the solvers. Cost O(N·(N+E) log N).
func (s *Solver) SetDemand(demand [][]float64) error {
	N := s.net.Nodes
	if len(demand) > N {
		return fmt.Errorf("%w: demand has %d rows for %d nodes", ErrInput, len(demand), N)
	}
	clear(s.dem)
	s.total, s.unroutable, s.solved = 0, 0, 0
	for src, row := range demand {
		if len(row) > N {
			return fmt.Errorf("%w: demand row %d has %d entries for %d nodes", ErrInput, src, len(row), N)
		}
		for dst, r := range row {
			if !(r >= 0) || math.IsInf(r, 1) {
				return fmt.Errorf("%w: demand %d→%d is %v, not a finite number >= 0", ErrInput, src, dst, r)
			}
			if src != dst {
				s.dem[dst*N+src] = r
			}
		}
	}
	for c, ch := range s.net.Channels {
		s.lengths[c] = usable(ch, 1)
	}
	for k := 0; k < N; k++ {
		row := s.dem[k*N : (k+1)*N]
		any := false
		for _, r := range row {
			if r > 0 {
				any = true
				break
			}
		}
		if !any {
			continue
		}
		s.towards(k, s.lengths)
		for v, r := range row {
			if r > 0 && math.IsInf(s.dist[v], 1) {
				s.unroutable += r
				row[v] = 0
			}
			s.total += row[v]
		}
	}
	return nil
}

// usable returns l for a channel that can carry traffic and +Inf for an
// absent one.
func usable(ch Channel, l float64) float64 {
	if ch.Capacity > 0 {
		return l
	}
	return math.Inf(1)
}

// Demand returns the routable demand in packets/s and the demand set aside
// because no path joins its end nodes.
func (s *Solver) Demand() (routable, unroutable float64) { return s.total, s.unroutable }

// routeAll routes every destination's demand on its cheapest tree under
// lengths l into yk/ytot (all-or-nothing assignment). Cost N Dijkstras.
func (s *Solver) routeAll(l []float64) {
	N, E := s.net.Nodes, len(s.net.Channels)
	clear(s.yk)
	clear(s.ytot)
	for k := 0; k < N; k++ {
		row := s.dem[k*N : (k+1)*N]
		if !hasDemand(row) {
			continue
		}
		s.towards(k, l)
		s.treeLoads(k, row)
		y := s.yk[k*E : (k+1)*E]
		for _, v := range s.order[1:] {
			if f := s.load[v]; f > 0 {
				c := s.next[v]
				y[c] += f
				s.ytot[c] += f
			}
		}
	}
}

func hasDemand(row []float64) bool {
	for _, r := range row {
		if r > 0 {
			return true
		}
	}
	return false
}

// dualBound returns Σ_k Σ_s d_sk·dist_l(s,k) / Σ_e c_e·l_e, a lower bound on
// the least maximum utilisation of any routing (weak LP duality for the
// maximum concurrent flow problem: Shahrokhi & Matula, J. ACM 1990; Garg &
// Könemann, SIAM J. Comput. 2007). Cost N Dijkstras.
func (s *Solver) dualBound(l []float64) float64 {
	N := s.net.Nodes
	var den float64
	for c, ch := range s.net.Channels {
		if ch.Capacity > 0 {
			den += ch.Capacity * l[c]
		}
	}
	var num float64
	for k := 0; k < N; k++ {
		row := s.dem[k*N : (k+1)*N]
		if !hasDemand(row) {
			continue
		}
		s.towards(k, l)
		for v, r := range row {
			if r > 0 {
				num += r * s.dist[v]
			}
		}
	}
	if den == 0 {
		return 0
	}
	return num / den
}

// maxUtil returns max_c f[c]/capacity[c].
func (s *Solver) maxUtil(f []float64) float64 {
	var m float64
	for c, ch := range s.net.Channels {
		if f[c] > 0 {
			m = math.Max(m, f[c]/ch.Capacity)
		}
	}
	return m
}

// Flow returns the flow towards destination d on every channel, in
// packets/s, of the last solution (shared: do not modify).
func (s *Solver) Flow(d int) []float64 {
	E := len(s.net.Channels)
	return s.flow[d*E : (d+1)*E]
}

// Load returns the total flow on every channel, in packets/s, of the last
// solution (shared: do not modify).
func (s *Solver) Load() []float64 { return s.tot }
