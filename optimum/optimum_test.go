package optimum_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"

	"hoplore/optimum"
	"hoplore/sim"
	"hoplore/topologies"
)

// uniformAt returns the solver for bundled topology name with uniform
// all-pairs demand at normalised load (1.0 saturates the busiest channel
// under hop-count shortest path, lowest index first).
func uniformAt(t testing.TB, name string, params map[string]float64, load float64) *optimum.Solver {
	t.Helper()
	net, m := uniformNet(t, name, params, load)
	s, err := optimum.NewSolver(net)
	if err != nil {
		t.Fatal(err)
	}
	if err := s.SetDemand(m); err != nil {
		t.Fatal(err)
	}
	return s
}

// uniformNet returns the model and demand of uniformAt.
func uniformNet(t testing.TB, name string, params map[string]float64, load float64) (optimum.Network, [][]float64) {
	t.Helper()
	g, err := topologies.Generate(name, params)
	if err != nil {
		t.Fatal(err)
	}
	n := sim.Compile(g)
	m := sim.UniformMatrix(n)
	sc := sim.SaturationScale(n, m, 1000) * load
	for i := range m {
		for j := range m[i] {
			m[i][j] *= sc
		}
	}
	return optimum.FromNet(n, 1000, nil), m
}

// TestRingSymmetry: on a ring of n nodes with uniform demand, shortest paths
// are already optimal when n is odd (λ* = 1 at normalised load 1), while on
// an even ring the n/2-hop pairs split evenly over both directions: per
// channel load falls from Σ_{h=1..n/2} h·(pairs) to the balanced value,
// λ* = 0.75 for n = 6 (symmetry argument, Bertsekas & Gallager, Data
// Networks, 1992, §5.4; the LP optimum of the same instance agrees).
func TestRingSymmetry(t *testing.T) {
	for _, tc := range []struct {
		nodes float64
		want  float64
	}{{5, 1.0}, {6, 0.75}, {7, 1.0}, {8, 0.8}} {
		s := uniformAt(t, "ring", map[string]float64{"nodes": tc.nodes}, 1.0)
		r, err := s.MinMaxUtil(0.01)
		if err != nil {
			t.Fatal(err)
		}
		if r.Lower > tc.want*(1+1e-9) || r.Util < tc.want*(1-1e-9) || r.Gap > 0.01 {
			t.Errorf("ring %v: util %.6f lower %.6f gap %.4f, want λ* = %.3f inside with gap ≤ 1%%", tc.nodes, r.Util, r.Lower, r.Gap, tc.want)
		}
	}
}

// TestSingleChannel: one channel carrying demand d of capacity c has
// λ* = d/c exactly (definition).
func TestSingleChannel(t *testing.T) {
	s, err := optimum.NewSolver(optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 1, Capacity: 8, Delay: 0.01}}})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.SetDemand([][]float64{{0, 6}}); err != nil {
		t.Fatal(err)
	}
	r, err := s.MinMaxUtil(0.01)
	if err != nil {
		t.Fatal(err)
	}
	if r.Util != 0.75 || r.Lower != 0.75 || r.Gap != 0 {
		t.Errorf("got util %v lower %v gap %v, want 0.75 0.75 0", r.Util, r.Lower, r.Gap)
	}
	d, err := s.MinDelay(0.01)
	if err != nil {
		t.Fatal(err)
	}
	// M/M/1: T = 1/(c − d) + propagation = 0.5 + 0.01 (Kleinrock, Queueing Systems Vol. 1, 1975, §3.2).
	if !d.Feasible || math.Abs(d.Mean-0.51) > 1e-12 || d.Gap != 0 {
		t.Errorf("got %+v, want mean 0.51 exactly", d)
	}
}

// TestTwoParallelChannels: demand λ = 9 over two parallel channels of
// capacities 10 and 4 (no propagation). The optimum equalises the marginal
// delays C1/(C1−f1)² = C2/(C2−f2)², giving f1 = C1 − √C1·(C1+C2−λ)/(√C1+√C2)
// = 6.93713 and T* = 0.369980 s (Kleinrock, Communication Nets, 1964: the
// square-root capacity assignment; closed form).
func TestTwoParallelChannels(t *testing.T) {
	c1, c2, lam := 10.0, 4.0, 9.0
	f1 := c1 - math.Sqrt(c1)*(c1+c2-lam)/(math.Sqrt(c1)+math.Sqrt(c2))
	f2 := lam - f1
	tStar := (f1/(c1-f1) + f2/(c2-f2)) / lam
	if math.Abs(f1-6.93713) > 5e-6 || math.Abs(tStar-0.369980) > 5e-7 {
		t.Fatalf("closed form: f1 %.6f T* %.6f", f1, tStar)
	}
	s, err := optimum.NewSolver(optimum.Network{Nodes: 2, Channels: []optimum.Channel{
		{From: 0, To: 1, Capacity: c1}, {From: 0, To: 1, Capacity: c2}, {From: 1, To: 0, Capacity: 1},
	}})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.SetDemand([][]float64{{0, lam}}); err != nil {
		t.Fatal(err)
	}
	for _, eps := range []float64{0.01, 0.001} {
		r, err := s.MinDelay(eps)
		if err != nil {
			t.Fatal(err)
		}
		if !r.Feasible || r.Lower > tStar*(1+1e-12) || r.Mean < tStar*(1-1e-12) || r.Gap > eps {
			t.Errorf("ε %v: mean %.6f lower %.6f gap %.5f, want T* = %.6f inside, gap ≤ ε", eps, r.Mean, r.Lower, r.Gap, tStar)
		}
		// Near the optimum T is flat: T − T* ≈ ½T''·Δf², so the flow is
		// within √(2·ε·T*/T'') of f1 (T'' = Σ 2C/(C−f)³/λ at the optimum).
		curv := (2*c1/math.Pow(c1-f1, 3) + 2*c2/math.Pow(c2-f2, 3)) / lam
		tol := math.Sqrt(2 * r.Gap * tStar / curv)
		if got := s.Load()[0]; math.Abs(got-f1) > tol+1e-9 {
			t.Errorf("ε %v: f1 = %.6f, want %.6f ± %.2g", eps, got, f1, tol)
		}
	}
	var sp optimum.Splits
	s.Splits(&sp)
	w := sp.At(0, 1)
	if len(w) != 2 || w[0].Channel != 0 || w[1].Channel != 1 || math.Abs(w[0].Weight+w[1].Weight-1) > 1e-12 {
		t.Fatalf("splits at 0 towards 1: %+v", w)
	}
	if got := w[0].Weight * lam; math.Abs(got-s.Load()[0]) > 1e-9 {
		t.Errorf("split weight gives %.6f packets/s on channel 0, flow is %.6f", got, s.Load()[0])
	}
}

// TestSingleChannelMG1: one channel of capacity c = 8 packets/s carrying
// λ = 6 with 10 ms propagation, for several service-time variabilities cs²:
// the mean delay is exactly the Pollaczek–Khinchine M/G/1 sojourn
// 1/c + ρ(1 + cs²)/(2(c − λ)), ρ = λ/c, plus propagation (Kleinrock,
// Queueing Systems Vol. 1, 1975, §5.6; M/D/1 at cs² = 0, §5.5's
// W = ρ/(2μ(1 − ρ)): 0.3125 s + 0.01 s; M/M/1 at cs² = 1, §3.2: 1/(c − λ)).
func TestSingleChannelMG1(t *testing.T) {
	const c, lam, p = 8.0, 6.0, 0.01
	for _, tc := range []struct {
		name string
		scv  float64
		want float64
	}{
		{"M/D/1", 0, 1.0/c + (lam/c)/(2*c*(1-lam/c)) + p},
		{"M/M/1", 1, 1/(c-lam) + p},
		{"M/G/1 cs²=0.25", 0.25, 1.0/c + (lam/c)*1.25/(2*(c-lam)) + p},
		{"M/G/1 cs²=4", 4, 1.0/c + (lam/c)*5/(2*(c-lam)) + p},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := optimum.NewSolver(optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 1, Capacity: c, Delay: p}}})
			if err != nil {
				t.Fatal(err)
			}
			if err := s.SetServiceSCV(tc.scv); err != nil {
				t.Fatal(err)
			}
			if s.ServiceSCV() != tc.scv {
				t.Fatalf("ServiceSCV %v after setting %v", s.ServiceSCV(), tc.scv)
			}
			if err := s.SetDemand([][]float64{{0, lam}}); err != nil {
				t.Fatal(err)
			}
			d, err := s.MinDelay(0.01)
			if err != nil {
				t.Fatal(err)
			}
			if !d.Feasible || math.Abs(d.Mean-tc.want) > 1e-12 || d.Gap != 0 {
				t.Errorf("got %+v, want mean %.15g exactly", d, tc.want)
			}
			if got := optimum.ChannelDelay(lam, c, p, tc.scv) / lam; math.Abs(got-tc.want) > 1e-12 {
				t.Errorf("ChannelDelay/λ = %.15g, want %.15g", got, tc.want)
			}
			if got := optimum.ChannelDelay(c, c, p, tc.scv); !math.IsInf(got, 1) {
				t.Errorf("ChannelDelay at saturation = %v, want +Inf", got)
			}
		})
	}
	if got, want := optimum.ChannelDelay(lam, c, p, 1), lam/(c-lam)+lam*p; got != want {
		t.Errorf("ChannelDelay with cs² = 1: %v, want the M/M/1 term %v exactly", got, want)
	}
	if want := 0.3125 + p; math.Abs(1.0/c+(lam/c)/(2*c*(1-lam/c))+p-want) > 1e-15 {
		t.Fatalf("M/D/1 by hand: want %v", want)
	}
}

// TestTwoParallelChannelsMD1: the two-channel instance of
// TestTwoParallelChannels (capacities 10 and 4, λ = 9) with fixed-size
// packets, cs² = 0. The optimum equalises the marginal delays of the two
// M/D/1 channels; that one-variable problem is solved here independently:
// γT(f1) = Σ_i f_i·(1/c_i + ρ_i/(2(c_i − f_i))) written from the
// Pollaczek–Khinchine mean (Kleinrock, Queueing Systems Vol. 1, 1975, ch. 5),
// its derivative by gonum's finite differences (diff/fd) and the root by
// bisection. T* must lie inside the solver's certified [Lower, Mean] and
// the flow near f1*.
func TestTwoParallelChannelsMD1(t *testing.T) {
	c1, c2, lam := 10.0, 4.0, 9.0
	gammaT := func(f1 float64) float64 {
		f2 := lam - f1
		return f1*(1/c1+(f1/c1)/(2*(c1-f1))) + f2*(1/c2+(f2/c2)/(2*(c2-f2)))
	}
	deriv := func(f1 float64) float64 {
		return fd.Derivative(gammaT, f1, &fd.Settings{Formula: fd.Central, Step: 1e-6})
	}
	lo, hi := lam-c2+1e-9, c1-1e-9
	for i := 0; i < 100 && hi-lo > 1e-12; i++ {
		if mid := (lo + hi) / 2; deriv(mid) > 0 {
			hi = mid
		} else {
			lo = mid
		}
	}
	f1 := (lo + hi) / 2
	tStar := gammaT(f1) / lam
	if !(f1 > lam-c2+1e-6 && f1 < c1-1e-6) {
		t.Fatalf("independent optimum f1 = %v not inside (%v, %v)", f1, lam-c2, c1)
	}
	s, err := optimum.NewSolver(optimum.Network{Nodes: 2, Channels: []optimum.Channel{
		{From: 0, To: 1, Capacity: c1}, {From: 0, To: 1, Capacity: c2}, {From: 1, To: 0, Capacity: 1},
	}})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.SetServiceSCV(0); err != nil {
		t.Fatal(err)
	}
	if err := s.SetDemand([][]float64{{0, lam}}); err != nil {
		t.Fatal(err)
	}
	curv := fd.Derivative(gammaT, f1, &fd.Settings{Formula: fd.Central2nd, Step: 1e-4}) / lam
	for _, eps := range []float64{0.01, 0.001} {
		r, err := s.MinDelay(eps)
		if err != nil {
			t.Fatal(err)
		}
		// tStar is a minimum found to ~1e-12 in f1, so flat: relative 1e-9 covers
		// the finite-difference and bisection error.
		if !r.Feasible || r.Lower > tStar*(1+1e-9) || r.Mean < tStar*(1-1e-9) || r.Gap > eps {
			t.Errorf("ε %v: mean %.6f lower %.6f gap %.5f, want T* = %.6f inside, gap ≤ ε", eps, r.Mean, r.Lower, r.Gap, tStar)
		}
		// T − T* ≈ ½T''·Δf², so the flow is within √(2·ε·T*/T'') of f1*.
		tol := math.Sqrt(2 * r.Gap * tStar / curv)
		if got := s.Load()[0]; math.Abs(got-f1) > tol+1e-6 {
			t.Errorf("ε %v: f1 = %.6f, want %.6f ± %.2g", eps, got, f1, tol)
		}
	}
}

// TestServiceSCVBadInput: a service-time variability must be a finite
// number ≥ 0.
func TestServiceSCVBadInput(t *testing.T) {
	s, err := optimum.NewSolver(optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 1, Capacity: 1}}})
	if err != nil {
		t.Fatal(err)
	}
	for _, v := range []float64{-0.5, math.NaN(), math.Inf(1)} {
		if err := s.SetServiceSCV(v); !errors.Is(err, optimum.ErrInput) {
			t.Errorf("SetServiceSCV(%v): got %v, want an optimum.ErrInput", v, err)
		}
	}
	if s.ServiceSCV() != 1 {
		t.Errorf("ServiceSCV %v after refused values, want the default 1", s.ServiceSCV())
	}
}

// TestInfeasible: demand above every routing's capacity has no finite mean
// delay.
func TestInfeasible(t *testing.T) {
	s, err := optimum.NewSolver(optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 1, Capacity: 4}}})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.SetDemand([][]float64{{0, 5}}); err != nil {
		t.Fatal(err)
	}
	r, err := s.MinDelay(0.01)
	if err != nil {
		t.Fatal(err)
	}
	if r.Feasible || !math.IsNaN(r.Mean) || r.Start.Util != 1.25 {
		t.Errorf("got %+v, want infeasible with λ* = 1.25", r)
	}
}

func TestBadInput(t *testing.T) {
	for _, tc := range []struct {
		name string
		net  optimum.Network
		dem  [][]float64
		eps  float64
	}{
		{"no nodes", optimum.Network{}, nil, 0.01},
		{"channel out of range", optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 2, Capacity: 1}}}, nil, 0.01},
		{"self loop", optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 1, To: 1, Capacity: 1}}}, nil, 0.01},
		{"negative capacity", optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 1, Capacity: -1}}}, nil, 0.01},
		{"NaN delay", optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 1, Capacity: 1, Delay: math.NaN()}}}, nil, 0.01},
		{"negative demand", optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 1, Capacity: 1}}}, [][]float64{{0, -1}}, 0.01},
		{"demand too wide", optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 1, Capacity: 1}}}, [][]float64{{0, 1, 1}}, 0.01},
		{"epsilon 0", optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 1, Capacity: 1}}}, nil, 0},
		{"epsilon 0.6", optimum.Network{Nodes: 2, Channels: []optimum.Channel{{From: 0, To: 1, Capacity: 1}}}, nil, 0.6},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := optimum.NewSolver(tc.net)
			if err == nil {
				err = s.SetDemand(tc.dem)
			}
			if err == nil {
				_, err = s.MinMaxUtil(tc.eps)
			}
			if !errors.Is(err, optimum.ErrInput) {
				t.Fatalf("got %v, want an optimum.ErrInput", err)
			}
		})
	}
}

// TestUnroutable: demand between disconnected parts is set aside.
func TestUnroutable(t *testing.T) {
	s, err := optimum.NewSolver(optimum.Network{Nodes: 3, Channels: []optimum.Channel{
		{From: 0, To: 1, Capacity: 10}, {From: 1, To: 0, Capacity: 10}, {From: 1, To: 2, Capacity: 0}, {From: 2, To: 1, Capacity: 0},
	}})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.SetDemand([][]float64{{0, 2, 3}, {1, 0, 0}}); err != nil {
		t.Fatal(err)
	}
	if r, u := s.Demand(); r != 3 || u != 3 {
		t.Errorf("routable %v unroutable %v, want 3 3", r, u)
	}
	r, _ := s.MinMaxUtil(0.01)
	if r.Lower > 0.2*(1+1e-12) || r.Util < 0.2*(1-1e-12) || r.Gap > 0.01 {
		t.Errorf("got %+v, want 0.2 inside with gap ≤ 1%%", r)
	}
}

// randomInstance draws a connected network of 3..8 nodes (random spanning
// tree plus extra links, both directions, capacities 1..10 packets/s,
// propagation 0..5 ms) and a sparse random demand.
func randomInstance(rng *rand.Rand) (optimum.Network, [][]float64) {
	n := 3 + rng.IntN(6)
	var links [][2]int
	has := map[[2]int]bool{}
	add := func(a, b int) {
		if a > b {
			a, b = b, a
		}
		if a != b && !has[[2]int{a, b}] {
			has[[2]int{a, b}] = true
			links = append(links, [2]int{a, b})
		}
	}
	for v := 1; v < n; v++ {
		add(v, rng.IntN(v))
	}
	for i := rng.IntN(n); i > 0; i-- {
		add(rng.IntN(n), rng.IntN(n))
	}
	net := optimum.Network{Nodes: n}
	for _, l := range links {
		for _, dir := range [][2]int{{l[0], l[1]}, {l[1], l[0]}} {
			net.Channels = append(net.Channels, optimum.Channel{From: dir[0], To: dir[1], Capacity: 1 + 9*rng.Float64(), Delay: 0.005 * rng.Float64()})
		}
	}
	dem := make([][]float64, n)
	for s := range dem {
		dem[s] = make([]float64, n)
		for d := range dem[s] {
			if s != d && rng.Float64() < 0.6 {
				dem[s][d] = 2 * rng.Float64()
			}
		}
	}
	return net, dem
}

// failLink gives both channels of one random link capacity 0 (failed)
// when the network stays strongly connected without it.
func failLink(rng *rand.Rand, net *optimum.Network) {
	l := rng.IntN(len(net.Channels) / 2)
	saved := net.Channels[2*l].Capacity
	net.Channels[2*l].Capacity, net.Channels[2*l+1].Capacity = 0, 0
	// Links are symmetric, so reaching every node from 0 is enough.
	seen := make([]bool, net.Nodes)
	seen[0] = true
	for changed := true; changed; {
		changed = false
		for _, ch := range net.Channels {
			if ch.Capacity > 0 && seen[ch.From] && !seen[ch.To] {
				seen[ch.To], changed = true, true
			}
		}
	}
	for _, ok := range seen {
		if !ok {
			net.Channels[2*l].Capacity, net.Channels[2*l+1].Capacity = saved, saved
			return
		}
	}
}

// lpMinMax solves the least maximum utilisation exactly as a linear
// program with gonum's simplex (an independent general-purpose solver):
// variables x[k][e] (flow towards k on channel e), λ and one slack per
// channel; rows: conservation at every node but k for each destination k,
// and Σ_k x[k][e] − c_e·λ + slack_e = 0.
func lpMinMax(t *testing.T, net optimum.Network, dem [][]float64) float64 {
	t.Helper()
	N, E := net.Nodes, len(net.Channels)
	nv := N*E + 1 + E
	iL := N * E
	var rows [][]float64
	var b []float64
	for k := 0; k < N; k++ {
		for v := 0; v < N; v++ {
			if v == k {
				continue
			}
			r := make([]float64, nv)
			for e, ch := range net.Channels {
				if ch.From == v {
					r[k*E+e] += 1
				}
				if ch.To == v {
					r[k*E+e] -= 1
				}
			}
			rows, b = append(rows, r), append(b, dem[v][k])
		}
	}
	for e, ch := range net.Channels {
		r := make([]float64, nv)
		for k := 0; k < N; k++ {
			r[k*E+e] = 1
		}
		r[iL], r[iL+1+e] = -ch.Capacity, 1
		rows, b = append(rows, r), append(b, 0)
	}
	A := mat.NewDense(len(rows), nv, nil)
	for i, r := range rows {
		A.SetRow(i, r)
	}
	c := make([]float64, nv)
	c[iL] = 1
	opt, _, err := lp.Simplex(c, A, b, 1e-10, nil)
	if err != nil {
		t.Fatalf("lp: %v", err)
	}
	return opt
}

// checkRouting verifies that the solver's flow routes dem: conservation of
// every destination's flow at every node, non-negative flows.
func checkRouting(t *testing.T, s *optimum.Solver, dem [][]float64) {
	t.Helper()
	net := s.Network()
	for k := 0; k < net.Nodes; k++ {
		f := s.Flow(k)
		bal := make([]float64, net.Nodes)
		for e, ch := range net.Channels {
			if f[e] < 0 {
				t.Fatalf("negative flow %v towards %d on channel %d", f[e], k, e)
			}
			bal[ch.From] += f[e]
			bal[ch.To] -= f[e]
		}
		for v := range bal {
			if v != k && math.Abs(bal[v]-dem[v][k]) > 1e-9*(1+dem[v][k]) {
				t.Fatalf("towards %d node %d sends %v net, demand %v", k, v, bal[v], dem[v][k])
			}
		}
	}
}

// TestAgainstSimplex compares the least maximum utilisation with the exact
// LP optimum from gonum's simplex on random small instances (every second
// one with a failed link: capacity 0): the LP value must lie inside
// [Lower, Util] and Util within ε of it, and the splits must avoid the
// failed link.
func TestAgainstSimplex(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 1))
	const eps = 0.01
	n := 24
	if testing.Short() {
		n = 4 // the simplex is slow under the race detector
	}
	for i := 0; i < n; i++ {
		net, dem := randomInstance(rng)
		if i%2 == 1 {
			failLink(rng, &net)
		}
		s, err := optimum.NewSolver(net)
		if err != nil {
			t.Fatal(err)
		}
		if err := s.SetDemand(dem); err != nil {
			t.Fatal(err)
		}
		r, err := s.MinMaxUtil(eps)
		if err != nil {
			t.Fatal(err)
		}
		want := lpMinMax(t, net, dem)
		if r.Lower > want*(1+1e-7) || r.Util < want*(1-1e-7) || r.Util > want*(1+eps) {
			t.Errorf("instance %d (%d nodes, %d channels): util %.6f lower %.6f, LP optimum %.6f", i, net.Nodes, len(net.Channels), r.Util, r.Lower, want)
		}
		checkRouting(t, s, dem)
		var m float64
		for e, f := range s.Load() {
			if c := net.Channels[e].Capacity; c > 0 {
				m = math.Max(m, f/c)
			} else if f != 0 {
				t.Errorf("instance %d: %v packets/s on failed channel %d", i, f, e)
			}
		}
		if math.Abs(m-r.Util) > 1e-9*r.Util {
			t.Errorf("instance %d: routing's max utilisation %v, reported %v", i, m, r.Util)
		}
		checkSplits(t, s, dem)
	}
}

// checkSplits verifies the splits of the solver's last solution: weights
// positive and summing to 1 at every node that can reach the destination,
// no loop (each destination's next hops form a DAG), and following the
// weights from every source reproduces the solver's channel loads.
func checkSplits(t *testing.T, s *optimum.Solver, dem [][]float64) {
	t.Helper()
	var sp optimum.Splits
	s.Splits(&sp)
	net := s.Network()
	N := net.Nodes
	load := make([]float64, len(net.Channels))
	for d := 0; d < N; d++ {
		// Topological order by DFS; a back edge is a loop.
		state := make([]int, N)
		var order []int
		var visit func(v int)
		visit = func(v int) {
			state[v] = 1
			for _, x := range sp.At(v, d) {
				w := net.Channels[x.Channel].To
				if state[w] == 1 {
					t.Fatalf("loop towards %d through channel %d", d, x.Channel)
				}
				if state[w] == 0 {
					visit(w)
				}
			}
			state[v] = 2
			order = append(order, v)
		}
		for v := 0; v < N; v++ {
			if state[v] == 0 {
				visit(v)
			}
			var sum float64
			for _, x := range sp.At(v, d) {
				if x.Weight <= 0 || net.Channels[x.Channel].From != v || net.Channels[x.Channel].Capacity == 0 {
					t.Fatalf("bad split %+v at %d towards %d", x, v, d)
				}
				sum += x.Weight
			}
			if v != d && math.Abs(sum-1) > 1e-12 {
				t.Fatalf("weights at %d towards %d sum to %v", v, d, sum)
			}
		}
		// Push demand down the DAG (reverse post-order is topological).
		in := make([]float64, N)
		for v := 0; v < N; v++ {
			in[v] = dem[v][d]
		}
		for i := len(order) - 1; i >= 0; i-- {
			v := order[i]
			for _, x := range sp.At(v, d) {
				f := in[v] * x.Weight
				load[x.Channel] += f
				in[net.Channels[x.Channel].To] += f
			}
		}
	}
	for e, f := range load {
		if got := s.Load()[e]; f > got*(1+1e-4)+1e-9 {
			t.Errorf("splits put %v on channel %d, solution has %v", f, e, got)
		}
	}
}

// lpMinDelay brackets the least mean delay of the model of independent
// M/G/1 channels with propagation, service-time variability scv = cs², by
// Kelley's cutting-plane method (Kelley, J. SIAM 8, 1960) on top of gonum's
// simplex: each channel's convex cost φ_e(F) = F·(1/c + ρ(1+cs²)/(2(c−F)))
// + p·F, ρ = F/c (F times the Pollaczek–Khinchine mean sojourn plus
// propagation: Kleinrock, Queueing Systems Vol. 1, 1975, ch. 5; F/(c−F) +
// p·F for cs² = 1) is replaced by the maximum of tangents, whose LP optimum
// is a lower bound; the LP's flows evaluated in the true cost give an upper
// bound; tangents are added at the LP's flows until the two meet within rel.
func lpMinDelay(t *testing.T, net optimum.Network, dem [][]float64, scv, rel float64) (lower, upper float64) {
	t.Helper()
	N, E := net.Nodes, len(net.Channels)
	var gamma float64
	for s := range dem {
		for d, r := range dem[s] {
			if s != d {
				gamma += r
			}
		}
	}
	phi := func(e int, f float64) (v, dv float64) {
		c, p := net.Channels[e].Capacity, net.Channels[e].Delay
		k := (1 + scv) / 2
		// d/dF [F²/(c−F)] = F(2c−F)/(c−F)²
		return f*(1/c+k*(f/c)/(c-f)) + p*f, 1/c + k*f*(2*c-f)/(c*(c-f)*(c-f)) + p
	}
	type cut struct {
		e int
		a float64
	}
	var cuts []cut
	for e, ch := range net.Channels {
		cuts = append(cuts, cut{e, 0}, cut{e, 0.5 * ch.Capacity}, cut{e, 0.9 * ch.Capacity})
	}
	lower, upper = 0, math.Inf(1)
	for iter := 0; iter < 60; iter++ {
		// Columns: x[k][e] (N·E), t_e (E), slack per capacity row (E), slack per cut.
		iT, iS, iC := N*E, N*E+E, N*E+2*E
		nv := iC + len(cuts)
		var rows [][]float64
		var b []float64
		for k := 0; k < N; k++ {
			for v := 0; v < N; v++ {
				if v == k {
					continue
				}
				r := make([]float64, nv)
				for e, ch := range net.Channels {
					if ch.From == v {
						r[k*E+e] += 1
					}
					if ch.To == v {
						r[k*E+e] -= 1
					}
				}
				rows, b = append(rows, r), append(b, dem[v][k])
			}
		}
		for e, ch := range net.Channels { // Σ_k x ≤ 0.9999·c
			r := make([]float64, nv)
			for k := 0; k < N; k++ {
				r[k*E+e] = 1
			}
			r[iS+e] = 1
			rows, b = append(rows, r), append(b, 0.9999*ch.Capacity)
		}
		for i, ct := range cuts { // φ'(a)·F − t + s = φ'(a)·a − φ(a)
			v, dv := phi(ct.e, ct.a)
			r := make([]float64, nv)
			for k := 0; k < N; k++ {
				r[k*E+ct.e] = dv
			}
			r[iT+ct.e] = -1
			r[iC+i] = 1
			rows, b = append(rows, r), append(b, dv*ct.a-v)
		}
		A := mat.NewDense(len(rows), nv, nil)
		for i, r := range rows {
			A.SetRow(i, r)
		}
		c := make([]float64, nv)
		for e := 0; e < E; e++ {
			c[iT+e] = 1
		}
		opt, x, err := lp.Simplex(c, A, b, 1e-10, nil)
		if err != nil {
			t.Fatalf("lp: %v", err)
		}
		lower = math.Max(lower, opt/gamma)
		var cost float64
		added := 0
		for e := 0; e < E; e++ {
			var f float64
			for k := 0; k < N; k++ {
				f += x[k*E+e]
			}
			v, _ := phi(e, f)
			cost += v
			if v-x[iT+e] > 1e-9*(1+v) {
				cuts = append(cuts, cut{e, f})
				added++
			}
		}
		upper = math.Min(upper, cost/gamma)
		if upper <= lower*(1+rel) || added == 0 {
			break
		}
	}
	return lower, upper
}

// TestDelayAgainstSimplex compares the least mean delay with the bracket
// from a cutting-plane LP (gonum's simplex) on random small instances scaled
// to a least maximum utilisation of 0.8: the solver's mean must be at least
// the LP's lower bound, its certified lower bound at most the LP's upper
// bound, and its mean within ε of the LP's upper bound. M/M/1 channels
// (cs² = 1, the default), M/D/1 ones (cs² = 0, fixed-size packets) and
// M/G/1 ones of a bimodal size mix (64 and 1500 bytes, 30% large: cs² =
// 1.769).
func TestDelayAgainstSimplex(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 2))
	const eps = 0.01
	for _, tc := range []struct {
		name     string
		scv      float64
		n, short int
	}{
		{"M/M/1", 1, 20, 2}, // the simplex is slow under the race detector
		{"M/D/1", 0, 4, 1},
		{"M/G/1 bimodal", sim.SizeDist{Kind: sim.Bimodal, SmallBytes: 64, LargeBytes: 1500, LargeFraction: 0.3}.SCV(), 2, 0},
	} {
		n := tc.n
		if testing.Short() {
			n = tc.short
		}
		for i := 0; i < n; {
			net, dem := randomInstance(rng)
			if net.Nodes > 6 {
				continue // keep the cutting-plane LPs small
			}
			lam := lpMinMax(t, net, dem)
			for s := range dem {
				for d := range dem[s] {
					dem[s][d] *= 0.8 / lam
				}
			}
			s, err := optimum.NewSolver(net)
			if err != nil {
				t.Fatal(err)
			}
			if tc.scv != 1 {
				if err := s.SetServiceSCV(tc.scv); err != nil {
					t.Fatal(err)
				}
			}
			if err := s.SetDemand(dem); err != nil {
				t.Fatal(err)
			}
			r, err := s.MinDelay(eps)
			if err != nil {
				t.Fatal(err)
			}
			lo, hi := lpMinDelay(t, net, dem, tc.scv, 1e-4)
			if !r.Feasible || r.Mean < lo*(1-1e-9) || r.Lower > hi*(1+1e-9) || r.Mean > hi*(1+eps) || r.Gap > eps {
				t.Errorf("%s instance %d (%d nodes, %d channels): mean %.6f lower %.6f gap %.4f, LP bracket [%.6f, %.6f]", tc.name, i, net.Nodes, len(net.Channels), r.Mean, r.Lower, r.Gap, lo, hi)
			}
			checkRouting(t, s, dem)
			checkSplits(t, s, dem)
			i++
		}
	}
}

// TestNoAllocations: once a solver exists, solving again allocates nothing,
// for every objective.
func TestNoAllocations(t *testing.T) {
	s := uniformAt(t, "ring", map[string]float64{"nodes": 6}, 0.9)
	var sp optimum.Splits
	for _, w := range []optimum.Weights{{}, {Loss: 1}, {Delay: 1, Loss: 2, Utilisation: 0.5}} {
		solve := func() {
			var err error
			if w == (optimum.Weights{}) {
				_, err = s.MinDelay(0.01)
			} else {
				_, err = s.MinMix(w, 0.01)
			}
			if err != nil {
				t.Fatal(err)
			}
			s.Splits(&sp)
		}
		solve()
		if a := testing.AllocsPerRun(3, solve); a != 0 {
			t.Errorf("weights %+v: %v allocations per solve, want 0", w, a)
		}
	}
}
