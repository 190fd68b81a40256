package optimum

import "math"

// MinMax is the outcome of Solver.MinMaxUtil.
type MinMax struct {
	// Util is λ_P, the maximum channel utilisation of the routing found (the
	// primal): every channel carries at most Util·capacity.
	Util float64
	// Lower is λ_D, a lower bound on the least maximum utilisation any
	// splittable routing can achieve, certified by a length function.
	Lower float64
	// Gap is Util/Lower − 1, the certified relative gap (0 when there is no
	// demand).
	Gap float64
	// Phases counts the Garg–Könemann phases run.
	Phases int
}

// maxPhases bounds the phases of MinMaxUtil; the gap reached is reported
// whether or not it met the target.
const maxPhases = 5000

// MinMaxUtil finds a splittable routing of the demand (SetDemand) that
// minimises the maximum channel utilisation λ = max_e f_e/c_e, the maximum
// concurrent flow problem (Shahrokhi & Matula, J. ACM 37, 1990): 1/λ* is the
// largest factor by which every demand can be scaled and still fit.
//
// It follows Garg & Könemann (SIAM J. Comput. 37, 2007) with Fleischer's
// grouping of commodities (SIAM J. Discrete Math. 13, 2000), here by
// destination so that one reverse Dijkstra serves every source of a
// destination: in each phase every destination's whole demand is routed on
// cheapest trees under multiplicative lengths l_e ← l_e·(1 + η·f/(λ·c_e)),
// in steps that put at most λ·c_e on any channel (λ the best utilisation so
// far, which makes the demand's scale irrelevant). Where it deviates from
// the published scheme, it does so to certify the gap it reports instead of
// relying on the worst-case bound:
//
//   - Two length functions evolve side by side: one with coarse steps
//     (η = 10ε), whose lengths give the dual bound
//     λ_D = Σ_k Σ_s d_sk·dist_l(s,k) / Σ_e c_e·l_e (weak duality: any
//     lengths give a lower bound on λ*), evaluated every phase with the
//     best kept; and one with fine steps (η = 5ε), whose phase flows make
//     the primal.
//   - Once a routing is found, the same bound is also taken for lengths
//     kept only on the channels that routing nearly saturates (see
//     tightBound): near the optimum these certify the gap in a few phases
//     where the multiplicative lengths alone approach it only slowly.
//   - The same bound is also taken for the lengths u_e^(p−1)/c_e, the
//     gradient of the ℓp norm of the utilisations, along a few
//     Frank–Wolfe steps on that norm from the routing's loads (see
//     gradientBound): where paths of unequal hop counts share the
//     bottleneck the multiplicative lengths oscillate around the optimal
//     ones and their bound stalls short of λ* (on a one-hop path beside a
//     two-hop one at 17% at ε = 5%), while these certify it exactly within
//     a few phases.
//   - The primal is the best routing found among the average of the fine
//     phase flows since the last power-of-two phase and the best point on
//     the segment from the current routing to each new phase flow (exact
//     line search on the maximum utilisation). Each phase routes the whole
//     demand, so every such convex combination is a routing.
//
// It stops when Util/Lower − 1 ≤ eps, or after a bounded number of phases
// (the gap reached is reported either way). Cost per phase: about three
// times N reverse Dijkstras, plus at most 4N (every phase while they
// help, every 16th at most while they do not) for the bounds on nearly
// saturated channels, plus at most 12N (every phase while they help,
// every 64th at most while they do not) for the gradient bounds, plus
// O(N·E).
//
// The routing found stays in the solver (for Splits and as the start of
// MinDelay). Allocation-free once the solver exists.
func (s *Solver) MinMaxUtil(eps float64) (MinMax, error) {
	if err := CheckEpsilon(eps); err != nil {
		return MinMax{}, err
	}
	clear(s.flow)
	clear(s.tot)
	s.solved, s.mm, s.mmEps = 1, MinMax{}, eps
	if s.total == 0 {
		return MinMax{}, nil
	}
	// Phase 0: every destination on its cheapest tree under lengths 1/c.
	for c, ch := range s.net.Channels {
		s.lengths[c] = usable(ch, 1/math.Max(ch.Capacity, math.SmallestNonzeroFloat64))
	}
	copy(s.lprimal, s.lengths)
	s.routeAll(s.lengths)
	copy(s.flow, s.yk)
	copy(s.tot, s.ytot)
	copy(s.sumk, s.yk)
	copy(s.sumtot, s.ytot)
	res := MinMax{Util: s.maxUtil(s.tot)}
	res.Lower = s.dualBound(s.lengths)
	etaD, etaP := math.Min(0.5, 10*eps), math.Min(0.5, 5*eps)
	count := 1.0 // phases summed in sumk
	nextTight, tightGap := 1, 1
	nextGrad, gradGap := 1, 1
	for res.Phases = 1; res.Phases <= maxPhases; res.Phases++ {
		if res.Util <= (1+eps)*res.Lower {
			break
		}
		scale := res.Util
		// The dual process: coarse steps move the lengths quickly.
		s.phase(s.lengths, etaD, scale)
		if g, u := s.lineMax(); u < res.Util {
			mix(s.flow, s.yk, g)
			mix(s.tot, s.ytot, g)
			res.Util = s.maxUtil(s.tot)
		}
		res.Lower = math.Max(res.Lower, s.dualBound(s.lengths))
		if res.Phases >= nextTight {
			// Back off while it does not raise the bound.
			if b := s.tightBound(res.Util); b > res.Lower {
				res.Lower, tightGap = b, 1
			} else {
				tightGap = min(2*tightGap, maxTightGap)
			}
			nextTight = res.Phases + tightGap
		}
		if res.Phases >= nextGrad && res.Util > (1+eps)*res.Lower {
			b := s.gradientBound(res.Util, res.Lower, eps)
			if b > (1+eps/8)*res.Lower {
				gradGap = 1
			} else {
				gradGap = min(2*gradGap, maxGradGap)
			}
			res.Lower = math.Max(res.Lower, b)
			nextGrad = res.Phases + gradGap
		}
		// The primal process: fine steps whose phase flows average well.
		s.phase(s.lprimal, etaP, scale)
		if res.Phases&(res.Phases-1) == 0 && res.Phases >= 8 {
			clear(s.sumk)
			clear(s.sumtot)
			count = 0
		}
		for i, f := range s.yk {
			s.sumk[i] += f
		}
		for c, f := range s.ytot {
			s.sumtot[c] += f
		}
		count++
		if u := s.maxUtil(s.sumtot) / count; u < res.Util {
			for i, f := range s.sumk {
				s.flow[i] = f / count
			}
			for c, f := range s.sumtot {
				s.tot[c] = f / count
			}
			res.Util = u
		}
		if g, u := s.lineMax(); u < res.Util {
			mix(s.flow, s.yk, g)
			mix(s.tot, s.ytot, g)
			res.Util = s.maxUtil(s.tot)
		}
	}
	res.Phases--
	res.Gap = res.Util/res.Lower - 1
	s.mm, s.mmEps = res, eps
	return res, nil
}

// tightFracs set the channels tightBound keeps: those loaded to at least
// (1 − f) times the routing's maximum utilisation, for each f (a routing
// near the optimum often has channels just below the maximum that no
// optimal routing saturates).
var tightFracs = [...]float64{1e-3, 1e-6}

// maxTightGap: tightBound is taken every phase while it raises the lower
// bound, and at intervals doubling up to maxTightGap phases while it does
// not, which bounds its cost where it does not help (it costs more than a
// phase's lengths bound).
const maxTightGap = 16

// tightBound returns the best dual bound of two length functions kept only
// on the channels the current routing loads to nearly its maximum
// utilisation util, zero elsewhere: the coarse lengths there, and length 1
// on each of them. Complementary slackness says an optimal length function
// is zero off the channels an optimal routing saturates (Ahuja, Magnanti &
// Orlin, Network Flows, 1993, §17.2 for the concurrent flow LP), so once
// the routing is close to optimal these are often far stronger bounds than
// the lengths themselves: when the saturated channels form a cut the
// second is the cut's demand over its capacity, which the multiplicative
// lengths only approach. Any lengths ≥ 0 give a valid bound (weak duality),
// so nothing is lost when they are weaker. Cost 4N Dijkstras.
func (s *Solver) tightBound(util float64) float64 {
	var b float64
	for _, f := range tightFracs {
		for c, ch := range s.net.Channels {
			switch {
			case ch.Capacity <= 0:
				s.lmask[c] = math.Inf(1)
			case s.tot[c] >= (1-f)*util*ch.Capacity:
				s.lmask[c] = s.lengths[c]
			default:
				s.lmask[c] = 0
			}
		}
		b = max(b, s.dualBound(s.lmask))
		for c, l := range s.lmask {
			if l > 0 && !math.IsInf(l, 1) {
				s.lmask[c] = 1
			}
		}
		b = max(b, s.dualBound(s.lmask))
	}
	return b
}

// phase routes every destination's whole demand once (one Garg–Könemann
// phase) under lengths l, updating them multiplicatively by
// l_e ← l_e·(1 + eta·f/(scale·c_e)) after each step, in steps that put at
// most scale·c_e on any channel. The phase flow is left in yk/ytot.
func (s *Solver) phase(l []float64, eta, scale float64) {
	N, E := s.net.Nodes, len(s.net.Channels)
	clear(s.yk)
	clear(s.ytot)
	for k := 0; k < N; k++ {
		row := s.dem[k*N : (k+1)*N]
		if !hasDemand(row) {
			continue
		}
		copy(s.rem, row)
		y := s.yk[k*E : (k+1)*E]
		for {
			s.towards(k, l)
			s.treeLoads(k, s.rem)
			sigma := 1.0
			for _, v := range s.order[1:] {
				if f := s.load[v]; f > 0 {
					c := s.next[v]
					sigma = math.Min(sigma, scale*s.net.Channels[c].Capacity/f)
				}
			}
			for _, v := range s.order[1:] {
				if f := sigma * s.load[v]; f > 0 {
					c := s.next[v]
					y[c] += f
					s.ytot[c] += f
					l[c] *= 1 + eta*f/(scale*s.net.Channels[c].Capacity)
				}
			}
			if sigma >= 1 {
				break
			}
			for v := range s.rem {
				s.rem[v] *= 1 - sigma
			}
		}
	}
	normalise(l)
}

// normaliseLengths rescales the lengths so that the largest is 1: only
// their ratios matter, and this keeps them far from overflow.
func normalise(ls []float64) {
	var m float64
	for _, l := range ls {
		if !math.IsInf(l, 1) {
			m = math.Max(m, l)
		}
	}
	if m > 0 {
		for c := range ls {
			ls[c] /= m
		}
	}
}

// mix sets f ← (1−g)·f + g·y.
func mix(f, y []float64, g float64) {
	for i := range f {
		f[i] += g * (y[i] - f[i])
	}
}

// lineMax minimises h(g) = max_c ((1−g)·tot_c + g·ytot_c)/cap_c over
// g ∈ [0, 1] (convex, piecewise linear) by golden-section search and
// returns the minimiser and h there. Cost O(60·E).
func (s *Solver) lineMax() (g, h float64) {
	eval := func(g float64) float64 {
		var m float64
		for c, ch := range s.net.Channels {
			if f := s.tot[c] + g*(s.ytot[c]-s.tot[c]); f > 0 {
				m = math.Max(m, f/ch.Capacity)
			}
		}
		return m
	}
	const phi = 0.6180339887498949
	a, b := 0.0, 1.0
	x1, x2 := b-phi*(b-a), a+phi*(b-a)
	f1, f2 := eval(x1), eval(x2)
	for i := 0; i < 60 && b-a > 1e-9; i++ {
		if f1 <= f2 {
			b, x2, f2 = x2, x1, f1
			x1 = b - phi*(b-a)
			f1 = eval(x1)
		} else {
			a, x1, f1 = x1, x2, f2
			x2 = a + phi*(b-a)
			f2 = eval(x2)
		}
	}
	g = (a + b) / 2
	return g, eval(g)
}

// gradSteps bounds the ℓp descent steps of one gradientBound, and
// gradStale ends the descent after that many steps whose bound is no
// better than the one held.
const gradSteps, gradStale = 12, 3

// maxGradGap: gradientBound is taken every phase while it raises the lower
// bound, and at intervals doubling up to maxGradGap phases while it does
// not (it costs up to gradSteps phases' worth of shortest paths).
const maxGradGap = 64

// gradientBound returns the best dual bound of the length functions
// l_e = u_e^(p−1)/c_e (the gradient of Σ_e u_e^p/p, u_e = f_e/c_e the
// channel utilisations) met along a few Frank–Wolfe steps on Σ_e u_e^p
// (Frank & Wolfe, Naval Research Logistics Quarterly 3, 1956) from the
// loads of the routing found, p = ln m / ln(1 + eps/2) for the m usable
// channels (the norm then exceeds the maximum by at most 1 + eps/2). At a
// routing that minimises the ℓp norm every path that
// carries flow is a cheapest path under these lengths (the optimality
// condition of the convex problem), so the bound there is
// Σ u_e^p / Σ u_e^(p−1), a mean of the utilisations weighted towards the
// largest, which tends to λ* as p grows: it certifies the optimum where
// the multiplicative lengths oscillate around it, as when paths of unequal
// hop counts share a bottleneck (lengths that balance a one-hop path
// against a two-hop path cannot be reached by equal multiplicative steps
// on both). Only the loads move (in gtot); the routing found is kept. Any
// lengths ≥ 0 give a valid bound (weak duality), so the descent needs no
// convergence to be safe; it stops early once gradStale steps have not
// beaten lower. Cost per step N Dijkstras and O(60·E) powers.
func (s *Solver) gradientBound(util, lower, eps float64) float64 {
	var m float64
	for _, ch := range s.net.Channels {
		if ch.Capacity > 0 {
			m++
		}
	}
	p := math.Max(2, math.Log(math.Max(m, 2))/math.Log1p(eps/2))
	var best float64
	copy(s.gtot, s.tot)
	for step, stale := 0, 0; step < gradSteps && stale < gradStale; step++ {
		// Lengths (u_e/U)^(p−1)/c_e, U the largest utilisation: scaled so
		// that nothing overflows (only their ratios matter).
		top := s.maxUtil(s.gtot)
		if top <= 0 {
			return best
		}
		var den float64
		for c, ch := range s.net.Channels {
			switch {
			case ch.Capacity <= 0:
				s.lmask[c] = math.Inf(1)
			case s.gtot[c] > 0:
				s.lmask[c] = math.Pow(s.gtot[c]/ch.Capacity/top, p-1) / ch.Capacity
				den += ch.Capacity * s.lmask[c]
			default:
				s.lmask[c] = 0
			}
		}
		s.routeAll(s.lmask)
		var num float64
		for c, y := range s.ytot {
			if y > 0 {
				num += y * s.lmask[c]
			}
		}
		if den > 0 {
			best = math.Max(best, num/den)
		}
		if best <= lower {
			stale++
		}
		if util <= (1+eps)*best {
			break
		}
		s.lpLine(p)
	}
	return best
}

// lpLine moves gtot to the minimiser of Σ_e ((gtot_e + g·(ytot_e −
// gtot_e))/c_e)^p over g ∈ [0, 1] (convex in g), a root of the derivative,
// each term of which is scaled by the largest utilisation at g.
func (s *Solver) lpLine(p float64) {
	slope := func(g float64) float64 {
		var top float64
		for c, ch := range s.net.Channels {
			if ch.Capacity > 0 {
				top = math.Max(top, (s.gtot[c]+g*(s.ytot[c]-s.gtot[c]))/ch.Capacity)
			}
		}
		if top <= 0 {
			return 0
		}
		var d float64
		for c, ch := range s.net.Channels {
			if ch.Capacity <= 0 {
				continue
			}
			if u := (s.gtot[c] + g*(s.ytot[c]-s.gtot[c])) / ch.Capacity; u > 0 {
				d += math.Pow(u/top, p-1) * (s.ytot[c] - s.gtot[c]) / ch.Capacity
			}
		}
		return d
	}
	if slope(0) >= 0 {
		return
	}
	g := 1.0
	if slope(1) > 0 {
		// Bisection: the terms' scale differs with g, so only the sign of
		// the derivative is comparable between points.
		a, b := 0.0, 1.0
		for b-a > 1e-9 {
			if m := (a + b) / 2; slope(m) > 0 {
				b = m
			} else {
				a = m
			}
		}
		g = (a + b) / 2
	}
	mix(s.gtot, s.ytot, g)
}
