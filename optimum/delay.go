package optimum

import "math"

// MinDelay is the outcome of Solver.MinDelay.
type MinDelay struct {
	// Feasible is false when no routing keeps every channel below
	// saturation (the least maximum utilisation is certified ≥ 1, or could
	// not be shown < 1): then no finite mean delay exists and Mean, Lower
	// and Gap are NaN.
	Feasible bool
	// Mean is the mean delay in seconds of the routing found, γ the
	// routable demand and cs² the solver's service-time variability:
	// T = (1/γ) Σ_e [f_e/c_e + (1 + cs²)/2 · f_e²/(c_e(c_e − f_e)) + f_e·p_e],
	// T = (1/γ) Σ_e [f_e/(c_e − f_e) + f_e·p_e] for cs² = 1 (M/M/1).
	Mean float64
	// Lower is a certified lower bound on the least mean delay of any
	// splittable routing, in seconds.
	Lower float64
	// Gap is Mean/Lower − 1.
	Gap float64
	// Iterations counts the flow-deviation iterations.
	Iterations int
	// Start is the min–max solve that gave the starting routing.
	Start MinMax
}

// maxIterations bounds the iterations of MinDelay; the gap reached is
// reported whether or not it met the target.
const maxIterations = 5000

// MinDelay finds a splittable routing of the demand (SetDemand) that
// minimises the mean delay under Kleinrock's model of a network of
// independent channels with propagation (the independence assumption:
// Kleinrock, Communication Nets, 1964; Queueing Systems Vol. 2, 1976), each
// channel an M/G/1 queue with an infinite buffer whose mean sojourn is the
// Pollaczek–Khinchine one (Kleinrock, Queueing Systems Vol. 1, 1975, ch. 5):
// 1/c + ρ(1 + cs²)/(2(c − f)), ρ = f/c, with cs² the squared coefficient of
// variation of the service time (SetServiceSCV; 1 by default, the M/M/1
// sojourn 1/(c − f)). So
//
//	T(f) = (1/γ) Σ_e [ f_e/(c_e − f_e)·(1 − b·f_e/c_e) + f_e·p_e ],  b = (1 − cs²)/2
//
// with f_e and c_e in packets/s, p_e the propagation delay and γ the total
// routable demand; each term is f_e/c_e + (1 + cs²)/2 · f_e²/(c_e(c_e − f_e))
// + f_e·p_e, convex on [0, c_e) for cs² ≥ 0. The method is flow deviation
// (Fratta, Gerla & Kleinrock, Networks 3, 1973), that is Frank–Wolfe: from
// a feasible routing (the min–max one, feasible when its maximum
// utilisation is below 1), route all demand on cheapest trees under the
// marginal lengths
//
//	∂(γT)/∂f_e = (c_e − b·f_e(2c_e − f_e)/c_e)/(c_e − f_e)² + p_e,
//
// (c_e/(c_e − f_e)² + p_e for M/M/1), then move to the best point towards
// that flow by a line search (bisection on the derivative, which is
// increasing since T is convex). The Frank–Wolfe gap g = ∇T(f)·(f − y) ≥
// T(f) − T* certifies a lower bound T(f) − g at every iteration; it stops
// when Mean/Lower − 1 ≤ eps, or after a bounded number of iterations.
//
// When the last solve was MinMaxUtil at the same eps for the current
// demand, its routing is the start and it is not solved again. The routing
// found stays in the solver (for Splits). Allocation-free once the solver
// exists.
func (s *Solver) MinDelay(eps float64) (MinDelay, error) {
	start, err := s.mm, error(nil)
	if s.solved != 1 || s.mmEps != eps {
		if start, err = s.MinMaxUtil(eps); err != nil {
			return MinDelay{}, err
		}
	}
	res := MinDelay{Start: start, Mean: math.NaN(), Lower: math.NaN(), Gap: math.NaN()}
	if s.total == 0 {
		res.Feasible, res.Mean, res.Lower, res.Gap = true, 0, 0, 0
		return res, nil
	}
	// Tighten the min–max solve until it decides feasibility.
	for tries, e := 0, eps; start.Util >= 1 && start.Lower < 1 && tries < 2; tries++ {
		e /= 4
		if start, err = s.MinMaxUtil(e); err != nil {
			return MinDelay{}, err
		}
		res.Start = start
	}
	if start.Util >= 1 {
		return res, nil // the min–max routing stays in the solver
	}
	s.solved = 2
	res.Feasible = true
	gamma, b := s.total, s.short
	cost := s.delaySum()
	lower := 0.0
	for res.Iterations = 0; res.Iterations < maxIterations; res.Iterations++ {
		for c, ch := range s.net.Channels {
			if ch.Capacity > 0 {
				f := s.tot[c]
				r := ch.Capacity - f
				s.lengths[c] = (ch.Capacity-b*f*(2*ch.Capacity-f)/ch.Capacity)/(r*r) + ch.Delay
			} else {
				s.lengths[c] = math.Inf(1)
			}
		}
		s.routeAll(s.lengths)
		var g float64
		for c, ch := range s.net.Channels {
			if ch.Capacity > 0 {
				g += s.lengths[c] * (s.tot[c] - s.ytot[c])
			}
		}
		lower = math.Max(lower, cost-g)
		if cost <= (1+eps)*lower {
			break
		}
		step := s.lineDelay()
		mix(s.flow, s.yk, step)
		mix(s.tot, s.ytot, step)
		cost = s.delaySum()
	}
	res.Mean = cost / gamma
	res.Lower = lower / gamma
	res.Gap = cost/lower - 1
	return res, nil
}

// ChannelDelay returns a channel's term of γ·T in MinDelay: f packets/s
// times the channel's mean delay, the Pollaczek–Khinchine M/G/1 sojourn for
// service-time variability cs² plus propagation p, that is
// f/(c − f)·(1 − (1 − cs²)/2·f/c) + f·p for f < c packets/s of capacity c
// (+Inf for f ≥ c). With cs² = 1 it is the M/M/1 term f/(c − f) + f·p
// exactly. For a controller that weighs the routing in force on the same
// scale as MinDelay's.
func ChannelDelay(f, c, p, cs2 float64) float64 {
	if f >= c {
		return math.Inf(1)
	}
	return f/(c-f)*(1-(1-cs2)/2*f/c) + f*p
}

// delaySum returns γ·T(tot) = Σ_e f_e/(c_e − f_e)·(1 − b·f_e/c_e) + f_e·p_e.
func (s *Solver) delaySum() float64 {
	var sum float64
	b := s.short
	for c, ch := range s.net.Channels {
		if f := s.tot[c]; f > 0 {
			sum += f/(ch.Capacity-f)*(1-b*f/ch.Capacity) + f*ch.Delay
		}
	}
	return sum
}

// lineDelay returns the step in [0, 1] minimising T(tot + step·(ytot − tot)),
// staying strictly below every capacity, by bisection on the derivative.
func (s *Solver) lineDelay() float64 {
	hi := 1.0
	for c, ch := range s.net.Channels {
		if d := s.ytot[c] - s.tot[c]; d > 0 && ch.Capacity > 0 {
			hi = math.Min(hi, (ch.Capacity-s.tot[c])/d)
		}
	}
	b := s.short
	deriv := func(step float64) float64 {
		var sum float64
		for c, ch := range s.net.Channels {
			d := s.ytot[c] - s.tot[c]
			if d == 0 || ch.Capacity == 0 {
				continue
			}
			f := s.tot[c] + step*d
			r := ch.Capacity - f
			if r <= 0 {
				return math.Inf(1)
			}
			sum += ((ch.Capacity-b*f*(2*ch.Capacity-f)/ch.Capacity)/(r*r) + ch.Delay) * d
		}
		return sum
	}
	if hi >= 1 && deriv(1) <= 0 {
		return 1
	}
	lo := 0.0
	for i := 0; i < 60 && hi-lo > 1e-12; i++ {
		mid := (lo + hi) / 2
		if deriv(mid) > 0 {
			hi = mid
		} else {
			lo = mid
		}
	}
	return lo
}
