package optimum

import "math"

// Blocking returns the blocking probability of an M/M/1/K queue at offered
// load ρ = f/c ≥ 0 with room for k ≥ 1 packets, the one in transmission
// included (Kleinrock, Queueing Systems Vol. 1, 1975, §3.6):
//
//	B(ρ) = (1 − ρ)·ρ^k / (1 − ρ^(k+1)),  B(1) = 1/(k + 1),
//
// the share of arrivals that find the queue full (by PASTA, Wolff, Oper.
// Res. 30, 1982, the share of time it is full). It is evaluated in a form
// that stays accurate near ρ = 1 and for large k: with v = |ln ρ|,
// B = e^(−k·v)·expm1(−v)/expm1(−(k+1)·v) for ρ < 1 and
// expm1(−v)/expm1(−(k+1)·v) for ρ > 1.
func Blocking(rho float64, k int) float64 {
	if rho <= 0 {
		return 0
	}
	v := math.Abs(math.Log(rho))
	K := float64(k)
	if v == 0 {
		return 1 / (K + 1)
	}
	r := math.Expm1(-v) / math.Expm1(-(K+1)*v)
	if rho < 1 {
		return math.Exp(-K*v) * r
	}
	return r
}

// meanInSystem returns the mean number of packets in an M/M/1/K queue at
// load ρ > 0 (Kleinrock 1975, §3.6: N = ρ/(1 − ρ) − (k+1)ρ^(k+1)/(1 − ρ^(k+1)),
// k/2 at ρ = 1) for ρ ≤ 1, and for ρ > 1 the mean number of free places
// k − N, by the mirror symmetry p_n(ρ) = p_(k−n)(1/ρ) of the M/M/1/K
// distribution: either way, with v = |ln ρ|, q(v) − (k+1)·q((k+1)v),
// q(x) = 1/expm1(x) − 1/x, where the two poles at ρ = 1 cancel exactly and
// nothing is taken from a number close to it.
func meanInSystem(rho float64, k int) float64 {
	v := math.Abs(math.Log(rho))
	return qexp(v) - float64(k+1)*qexp(float64(k+1)*v)
}

// qexp returns 1/expm1(x) − 1/x for x ≥ 0 (−1/2 at 0), by its Bernoulli
// series 1/expm1(x) = 1/x − 1/2 + x/12 − x³/720 + x⁵/30240 − … below 0.01.
func qexp(x float64) float64 {
	switch {
	case x < 1e-2:
		x2 := x * x
		return -0.5 + x/12 - x*x2/720 + x*x2*x2/30240
	case x > 700:
		return -1 / x
	}
	return 1/math.Expm1(x) - 1/x
}

// lostShare returns h(ρ) = ρ·B(ρ), the packets lost to a full queue per
// unit of capacity, and its derivative h′(ρ) = B(ρ)·(1 + k − N(ρ)) (with N
// the mean number in the system; from d ln B/dρ). With k = 0 the buffer
// is unlimited and h is the limit k → ∞: the excess over capacity,
// max(0, ρ − 1), with h′ = 1 above capacity and 0 below.
func lostShare(rho float64, k int) (h, dh float64) {
	if rho <= 0 {
		return 0, 0
	}
	if k == 0 {
		if rho > 1 {
			return rho - 1, 1
		}
		return 0, 0
	}
	b := Blocking(rho, k)
	if rho > 1 {
		return rho * b, b * (1 + meanInSystem(rho, k)) // 1 + k − N from the free places
	}
	return rho * b, b * (1 + float64(k) - meanInSystem(rho, k))
}

// ChannelLoss returns a channel's term of the expected loss in MinLoss:
// the packets per second lost of f offered to a channel of capacity c
// packets/s that holds room packets (its M/M/1/K k, the one in
// transmission included; 0 unlimited) and then loses each transmitted
// packet with probability p: f·(B + (1 − B)·p), B = Blocking(f/c, room).
// For a controller that weighs the routing in force on the same scale as
// MinLoss's.
func ChannelLoss(f, c float64, room int, p float64) float64 {
	if f <= 0 {
		return 0
	}
	h, _ := lostShare(f/c, room)
	return f*p + (1-p)*c*h
}
