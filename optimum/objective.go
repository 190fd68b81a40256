package optimum

import (
	"fmt"
	"math"
)

// Weights weigh the terms of MinMix's objective: mean delay over the mean
// zero-load path time, loss fraction, maximum channel utilisation. Each
// weight is finite and ≥ 0, and one at least is > 0.
type Weights struct {
	Delay, Loss, Utilisation float64
}

// MixResult is the outcome of Solver.MinMix and Solver.MinLoss.
type MixResult struct {
	// Feasible is false when the objective has a delay term and no routing
	// keeps every channel below saturation (the least maximum utilisation
	// is certified ≥ 1, or could not be shown < 1): no finite mean delay
	// exists, Value, Lower and Gap are +Inf and the terms are those of the
	// min–max routing left in the solver. Without a delay term every
	// routing is feasible (finite buffers lose what does not fit).
	Feasible bool
	// Value is the objective of the routing found:
	// w_d·DelayRatio + w_l·LossRate + w_u·MaxUtil.
	Value float64
	// Lower is a certified lower bound on the least Value of any
	// splittable routing, and Gap = Value/Lower − 1 (0 when Value − Lower is
	// below 10⁻⁶ of the weights' sum, so that an optimum of 0 stops).
	Lower, Gap float64
	// Smoothed is the objective the iterations minimise, the maximum
	// utilisation replaced by the ℓp norm of the utilisations (equal to
	// Value without a utilisation weight); SmoothedLower its Frank–Wolfe
	// lower bound.
	Smoothed, SmoothedLower float64
	// P is the norm's exponent (0 without a utilisation weight).
	P float64
	// The terms of the routing found: mean delay ÷ mean zero-load path time
	// (+Inf when the routing saturates a channel),
	// expected lost packets ÷ routable demand, maximum utilisation.
	DelayRatio, LossRate, MaxUtil float64
	// Iterations counts the flow-deviation iterations.
	Iterations int
	// Start is the min–max solve that gave the starting routing.
	Start MinMax
}

// absFloor: an objective within this share of the weights' sum of its
// lower bound is solved, whatever the relative gap (an optimum of zero
// loss has no relative gap to reach): with the loss weight alone, one
// packet in a million.
const absFloor = 1e-6

// MinLoss finds a splittable routing of the demand (SetDemand) that
// minimises the expected share of packets lost: MinMix with the loss
// weight alone, whose Value and LossRate are then that share.
func (s *Solver) MinLoss(eps float64) (MixResult, error) {
	return s.MinMix(Weights{Loss: 1}, eps)
}

// MinMix finds a splittable routing of the demand (SetDemand) that
// minimises
//
//	Φ(f) = w_d·T(f)/T₀ + w_l·L(f)/γ + w_u·max_e f_e/c_e
//
// with γ the routable demand in packets/s and:
//
//   - T(f) the mean delay of MinDelay's model (independent M/G/1 channels
//     with propagation, infinite buffers) and T₀ = (1/γ)·Σ d_sk·τ(s,k) the
//     mean zero-load path time, τ the least Σ 1/c_e + p_e over paths s→k:
//     the delay term is 1 for an idle network's shortest paths and grows
//     with queueing. Its domain is f_e < c_e.
//   - L(f) = Σ_e f_e·(B_e + (1 − B_e)·l_e) the expected packets lost per
//     second: B_e = Blocking(f_e/c_e, Room_e), the M/M/1/K blocking
//     probability (Kleinrock, Queueing Systems Vol. 1, 1975, §3.6) of a
//     channel holding Room_e packets (Room 0: an unlimited buffer loses
//     the excess max(0, f_e − c_e)), and l_e the channel's Loss
//     probability for each packet it transmits. The flow each channel is
//     offered is the flow routed to it: what upstream channels lose is not
//     taken out (an upper estimate, tight when losses are small). Each
//     term is convex in f_e: f·B(f/c) = c·h(ρ) with h′(ρ) = B(ρ)·(1 + K −
//     N(ρ)) nondecreasing, checked numerically on ρ ∈ (0, 20] for K from 1
//     to 10⁴ (the package tests).
//   - the maximum utilisation made smooth for the iterations by the ℓp
//     norm U_p(f) = (Σ_e (f_e/c_e)^p)^(1/p), convex, with
//     max ≤ U_p ≤ m^(1/p)·max over the m usable channels; p = ln m /
//     ln(1 + ε/2), so that the norm exceeds the maximum by at most a factor
//     1 + ε/2.
//
// The method is flow deviation (Fratta, Gerla & Kleinrock, Networks 3,
// 1973), Frank–Wolfe with a line search, from the min–max routing (as
// MinDelay): route all demand on cheapest trees under the marginal costs
// ∂Φ/∂f_e, move to the best point towards a target by regula falsi on the
// derivative. The target is that all-or-nothing flow mixed with the last
// target so that successive directions are conjugate (conjugate
// Frank–Wolfe, Mitradjieva & Lindberg, Transportation Science 47, 2013):
// on a 50-node network it reached a certified 1.7% where plain flow
// deviation stalled near 10% in the same 5,000 iterations. The smoothed objective Φ_p is convex, so its Frank–Wolfe gap
// certifies a lower bound Φ_p* ≥ Φ_p(f) − g; since every term is ≥ 0,
// Φ_p ≤ m^(1/p)·Φ, and the unsmoothed optimum is at least
// Lower = SmoothedLower/m^(1/p) (= SmoothedLower without a utilisation
// weight). It stops when Value ≤ (1 + ε)·Lower, when Value − Lower is
// below 10⁻⁶ of the weights' sum, or after a bounded number of
// iterations, and reports the gap reached. Weights{Delay: 1} has the
// minimisers of MinDelay; Weights{Utilisation: 1} those of MinMaxUtil up
// to the norm's factor.
//
// When the last solve was MinMaxUtil at the same eps for the current
// demand, its routing is the start. The routing found stays in the solver
// (for Splits). Allocation-free once the solver exists.
func (s *Solver) MinMix(w Weights, eps float64) (MixResult, error) {
	if err := CheckEpsilon(eps); err != nil {
		return MixResult{}, err
	}
	if err := checkWeights(w); err != nil {
		return MixResult{}, err
	}
	start, err := s.mm, error(nil)
	if s.solved != 1 || s.mmEps != eps {
		if start, err = s.MinMaxUtil(eps); err != nil {
			return MixResult{}, err
		}
	}
	res := MixResult{Start: start, Feasible: true}
	if s.total == 0 {
		s.objW, s.objWD, s.objWL, s.objP = w, 0, 0, 0
		return res, nil
	}
	m := s.objSetup(w, eps)
	res.P = s.objP
	if w.Delay > 0 {
		for tries, e := 0, eps; start.Util >= 1 && start.Lower < 1 && tries < 2; tries++ {
			e /= 4
			if start, err = s.MinMaxUtil(e); err != nil {
				return MixResult{}, err
			}
			res.Start = start
		}
		if start.Util >= 1 {
			inf := math.Inf(1)
			res.Feasible, res.Value, res.Lower, res.Gap, res.Smoothed, res.SmoothedLower = false, inf, inf, inf, inf, inf
			res.DelayRatio, res.LossRate, res.MaxUtil = inf, s.lossSum()/s.total, start.Util
			return res, nil // the min–max routing stays in the solver
		}
	}
	s.solved = 3
	slack := 1.0 // m^(1/p): the norm's largest excess factor over the maximum
	if w.Utilisation > 0 {
		slack = math.Pow(m, 1/s.objP)
	}
	floor := absFloor * (w.Delay + w.Loss + w.Utilisation)
	phi := s.objValue()
	lower := math.Inf(-1)
	for res.Iterations = 0; res.Iterations < maxIterations; res.Iterations++ {
		s.objGradient()
		s.routeAll(s.lengths)
		var g float64
		for c, ch := range s.net.Channels {
			if ch.Capacity > 0 {
				g += s.lengths[c] * (s.tot[c] - s.ytot[c])
			}
		}
		lower = math.Max(lower, math.Max(0, phi-g))
		if v := s.objExact(); v <= (1+eps)*lower/slack || v-lower/slack <= floor {
			break
		}
		s.conjugate(res.Iterations > 0)
		step := s.objLine(s.dir)
		mix(s.flow, s.sumk, step)
		mix(s.tot, s.sumtot, step)
		phi = s.objValue()
	}
	res.Smoothed, res.SmoothedLower = phi, lower
	res.Value, res.Lower = s.objExact(), lower/slack
	res.DelayRatio, res.LossRate, res.MaxUtil = s.objTerms()
	if res.Value-res.Lower <= floor {
		res.Gap = 0
	} else {
		res.Gap = res.Value/res.Lower - 1
	}
	return res, nil
}

// MixValue returns the objective Φ of the last MinMix (its weights, and
// the demand's γ and T₀) for the channel loads load in packets/s, indexed
// as the network's channels: for a controller that weighs the routing in
// force on the same scale as a new solution. It is +Inf when there is a
// delay weight and a load reaches its channel's capacity, or when load
// puts flow on an absent channel; 0 without demand. Allocation-free.
func (s *Solver) MixValue(load []float64) float64 {
	if s.total == 0 {
		return 0
	}
	var v, mx float64
	for c, ch := range s.net.Channels {
		f := load[c]
		if f <= 0 {
			continue
		}
		if ch.Capacity == 0 {
			return math.Inf(1)
		}
		if s.objWD > 0 {
			if f >= ch.Capacity {
				return math.Inf(1)
			}
			v += s.objWD * (f/(ch.Capacity-f)*(1-s.short*f/ch.Capacity) + f*ch.Delay)
		}
		if s.objWL > 0 {
			v += s.objWL * ChannelLoss(f, ch.Capacity, ch.Room, ch.Loss)
		}
		mx = math.Max(mx, f/ch.Capacity)
	}
	return v + s.objW.Utilisation*mx
}

// conjDelta keeps the conjugate direction's weight on the previous
// target below 1 − conjDelta.
const conjDelta = 0.01

// conjugate sets the target of the next step, s̄ in sumk/sumtot, and the
// direction s̄ − tot in dir, by conjugate Frank–Wolfe (Mitradjieva &
// Lindberg, Transportation Science 47, 2013): s̄ = α·s̄_prev + (1 − α)·y
// with α chosen so that the new direction is conjugate to the previous
// one (dir on entry) under the diagonal of the Hessian at the current
// flow (the norm's cross terms left out), α = N/D with
// N = (y − f)ᵀH·d_prev and D = (y − s̄_prev)ᵀH·d_prev, clamped to
// [0, 1 − conjDelta] (0 when D = 0 or N/D < 0). s̄ is a convex
// combination of routings, so every step stays a routing; the first
// iteration (have false) is plain Frank–Wolfe.
func (s *Solver) conjugate(have bool) {
	alpha := 0.0
	if have {
		var up float64
		if s.objP > 0 {
			up, _ = s.norm(s.totAt)
		}
		var num, den float64
		for c, ch := range s.net.Channels {
			d := s.dir[c]
			if d == 0 || ch.Capacity == 0 {
				continue
			}
			f := s.tot[c]
			h := 1e-6 * ch.Capacity
			lo := math.Max(0, f-h)
			hi := f + h
			if s.objWD > 0 && hi >= ch.Capacity {
				hi = f
			}
			if hi <= lo {
				continue
			}
			hess := (s.marginal(ch, hi, up) - s.marginal(ch, lo, up)) / (hi - lo)
			if !(hess > 0) || math.IsInf(hess, 1) {
				continue
			}
			num += hess * d * (s.ytot[c] - f)
			den += hess * d * (s.ytot[c] - s.sumtot[c])
		}
		if den != 0 {
			alpha = num / den
		}
		if !(alpha >= 0) {
			alpha = 0
		}
		alpha = math.Min(alpha, 1-conjDelta)
	}
	if alpha == 0 {
		copy(s.sumk, s.yk)
		copy(s.sumtot, s.ytot)
	} else {
		for i, y := range s.yk {
			s.sumk[i] = alpha*s.sumk[i] + (1-alpha)*y
		}
		for c, y := range s.ytot {
			s.sumtot[c] = alpha*s.sumtot[c] + (1-alpha)*y
		}
	}
	for c := range s.dir {
		s.dir[c] = s.sumtot[c] - s.tot[c]
	}
}

// checkWeights returns an error unless every weight is finite and ≥ 0 and
// one at least is > 0.
func checkWeights(w Weights) error {
	for _, x := range [...]float64{w.Delay, w.Loss, w.Utilisation} {
		if !(x >= 0) || math.IsInf(x, 1) {
			return fmt.Errorf("%w: weights %+v: each must be a finite number >= 0", ErrInput, w)
		}
	}
	if w.Delay+w.Loss+w.Utilisation == 0 {
		return fmt.Errorf("%w: weights %+v: one must be > 0", ErrInput, w)
	}
	return nil
}

// objSetup fixes the weights of the iterations: the delay weight over γT₀
// (N Dijkstras under the zero-load lengths 1/c + p), the loss weight over
// γ, and the norm's exponent p. It returns the number of usable channels.
func (s *Solver) objSetup(w Weights, eps float64) float64 {
	s.objW = w
	s.objWD, s.objWL, s.objP = 0, w.Loss/s.total, 0
	m := 0.0
	for _, ch := range s.net.Channels {
		if ch.Capacity > 0 {
			m++
		}
	}
	if w.Delay > 0 {
		d0 := s.zeroLoadSum(s.lengths)
		s.objD0 = d0 / s.total
		s.objWD = w.Delay / d0
	}
	if w.Utilisation > 0 {
		s.objP = math.Max(1, math.Log(math.Max(m, 2))/math.Log1p(eps/2))
	}
	return m
}

// objTerms returns the terms of the current routing: mean delay ÷ mean
// zero-load path time (+Inf when a channel is saturated: no finite mean
// delay), loss fraction, maximum utilisation.
func (s *Solver) objTerms() (delayRatio, loss, util float64) {
	util = s.maxUtil(s.tot)
	switch {
	case util >= 1:
		delayRatio = math.Inf(1)
	case s.objW.Delay > 0:
		delayRatio = s.delaySum() / s.total / s.objD0
	default:
		delayRatio = s.delaySum() / s.total / s.zeroLoadMean()
	}
	return delayRatio, s.lossSum() / s.total, util
}

// zeroLoadMean returns T₀ for the current demand (N Dijkstras).
func (s *Solver) zeroLoadMean() float64 { return s.zeroLoadSum(s.lprimal) / s.total }

// zeroLoadSum returns γT₀ = Σ d_sk·τ(s,k), τ the least Σ 1/c + p over the
// usable channels, for the current demand (N Dijkstras), with lengths as
// the scratch for the zero-load lengths.
func (s *Solver) zeroLoadSum(lengths []float64) float64 {
	for c, ch := range s.net.Channels {
		lengths[c] = usable(ch, 1/math.Max(ch.Capacity, math.SmallestNonzeroFloat64)+ch.Delay)
	}
	var d0 float64
	N := s.net.Nodes
	for k := 0; k < N; k++ {
		row := s.dem[k*N : (k+1)*N]
		if !hasDemand(row) {
			continue
		}
		s.towards(k, lengths)
		for v, r := range row {
			if r > 0 {
				d0 += r * s.dist[v]
			}
		}
	}
	return d0
}

// lossSum returns Σ_e ChannelLoss(tot_e) in packets/s.
func (s *Solver) lossSum() float64 {
	var sum float64
	for c, ch := range s.net.Channels {
		if f := s.tot[c]; f > 0 {
			sum += ChannelLoss(f, ch.Capacity, ch.Room, ch.Loss)
		}
	}
	return sum
}

// norm returns U_p of the utilisations of the flows f(c) and their
// maximum, scaled by the maximum so that nothing overflows.
func (s *Solver) norm(f func(c int) float64) (up, mx float64) {
	for c, ch := range s.net.Channels {
		if ch.Capacity > 0 {
			mx = math.Max(mx, f(c)/ch.Capacity)
		}
	}
	if mx == 0 {
		return 0, 0
	}
	var sum float64
	for c, ch := range s.net.Channels {
		if ch.Capacity > 0 {
			sum += math.Pow(f(c)/ch.Capacity/mx, s.objP)
		}
	}
	return mx * math.Pow(sum, 1/s.objP), mx
}

func (s *Solver) totAt(c int) float64 { return s.tot[c] }

// objValue returns Φ_p of the current routing (+Inf beyond a capacity
// when there is a delay weight).
func (s *Solver) objValue() float64 {
	var v float64
	if s.objWD > 0 {
		v += s.objWD * s.delaySum()
	}
	if s.objWL > 0 {
		v += s.objWL * s.lossSum()
	}
	if s.objP > 0 {
		up, _ := s.norm(s.totAt)
		v += s.objW.Utilisation * up
	}
	return v
}

// objExact returns Φ of the current routing, the true maximum in place of
// the norm.
func (s *Solver) objExact() float64 {
	var v float64
	if s.objWD > 0 {
		v += s.objWD * s.delaySum()
	}
	if s.objWL > 0 {
		v += s.objWL * s.lossSum()
	}
	if s.objP > 0 {
		v += s.objW.Utilisation * s.maxUtil(s.tot)
	}
	return v
}

// marginal returns ∂Φ_p/∂f_e at flow f on channel ch, given the norm's
// value up at the point (ignored without a utilisation weight).
func (s *Solver) marginal(ch Channel, f, up float64) float64 {
	var g float64
	if s.objWD > 0 {
		r := ch.Capacity - f
		if r <= 0 {
			return math.Inf(1)
		}
		b := s.short
		g += s.objWD * ((ch.Capacity-b*f*(2*ch.Capacity-f)/ch.Capacity)/(r*r) + ch.Delay)
	}
	if s.objWL > 0 {
		_, dh := lostShare(f/ch.Capacity, ch.Room)
		g += s.objWL * (ch.Loss + (1-ch.Loss)*dh)
	}
	if s.objP > 0 && up > 0 && f > 0 {
		g += s.objW.Utilisation * math.Pow(f/ch.Capacity/up, s.objP-1) / ch.Capacity
	}
	return g
}

// objGradient writes the marginal costs of the current routing into
// s.lengths (+Inf on absent channels).
func (s *Solver) objGradient() {
	var up float64
	if s.objP > 0 {
		up, _ = s.norm(s.totAt)
	}
	for c, ch := range s.net.Channels {
		if ch.Capacity > 0 {
			s.lengths[c] = s.marginal(ch, s.tot[c], up)
		} else {
			s.lengths[c] = math.Inf(1)
		}
	}
}

// objLine returns the step in [0, 1] minimising Φ_p(tot + step·dir),
// below every capacity when there is a delay weight, by regula falsi on
// the derivative (increasing, Φ_p being convex).
func (s *Solver) objLine(dir []float64) float64 {
	hi := 1.0
	if s.objWD > 0 {
		for c, ch := range s.net.Channels {
			if d := dir[c]; d > 0 && ch.Capacity > 0 {
				hi = math.Min(hi, (ch.Capacity-s.tot[c])/d)
			}
		}
	}
	var t float64
	at := func(c int) float64 { return s.tot[c] + t*dir[c] }
	deriv := func(step float64) float64 {
		t = step
		var up float64
		if s.objP > 0 {
			up, _ = s.norm(at)
		}
		var sum float64
		for c, ch := range s.net.Channels {
			d := dir[c]
			if d == 0 || ch.Capacity == 0 {
				continue
			}
			sum += s.marginal(ch, at(c), up) * d
		}
		return sum
	}
	dhi := math.Inf(1)
	if hi >= 1 {
		if dhi = deriv(1); dhi <= 0 {
			return 1
		}
	}
	// Regula falsi with the Illinois modification (Dowell & Jarratt, BIT
	// 11, 1971) on the derivative, falling back to bisection while an end
	// has no finite derivative (the capacity limit).
	lo, dlo := 0.0, deriv(0)
	deriv0 := dlo
	if dlo >= 0 {
		return 0
	}
	side := 0
	for i := 0; i < 100 && hi-lo > 1e-12*hi; i++ {
		mid := (lo + hi) / 2
		if !math.IsInf(dhi, 1) {
			mid = lo + (hi-lo)*dlo/(dlo-dhi)
			if !(mid > lo && mid < hi) {
				mid = (lo + hi) / 2
			}
		}
		dm := deriv(mid)
		switch {
		case dm > 0:
			hi, dhi = mid, dm
			if side == 1 {
				dlo /= 2
			}
			side = 1
		case dm < 0:
			lo, dlo = mid, dm
			if side == -1 && !math.IsInf(dhi, 1) {
				dhi /= 2
			}
			side = -1
		default:
			return mid
		}
		if math.Abs(dm) <= 1e-12*math.Abs(deriv0) {
			break
		}
	}
	return lo
}
