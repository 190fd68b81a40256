package stats

import "math"

// MSERBatch is the batch size of MSER-5.
const MSERBatch = 5

// Truncation is where MSER puts the end of a series' initial transient.
type Truncation struct {
	// At is the number of values to delete from the start: a multiple of
	// the batch size.
	At int
	// OK is false when the minimum lies at the middle of the series or
	// later: the transient has not been seen to end (the run is too short,
	// or it never settles), and At is then not a usable warm-up.
	OK bool
	// Z is the difference between the means of the deleted and the kept
	// batches in units of its standard error, taking the batch means as
	// independent with the spread of all of them; NaN when nothing is
	// deleted. On a stationary series MSER still deletes a few batches now
	// and then, by chance: a small |Z| says the deleted part is noise, not a
	// transient.
	Z float64
}

// MSER returns the truncation point of the series x by the marginal
// standard error rule with batches of m values, MSER-m (White, "An
// effective truncation heuristic for bias reduction in simulation output",
// Simulation 69, 1997; MSER-5 for m = 5, from White, Cobb & Spratt, "A
// comparison of five steady-state truncation heuristics for simulation",
// Winter Simulation Conference 2000, and recommended by Hoad, Robinson &
// Davies, "Automating warm-up length estimation", J. Operational Research
// Society 61, 2010). x is averaged in k = ⌊n/m⌋ batches Z_1..Z_k (a last
// partial batch is left out); for each d the statistic
//
//	MSER(d) = Σ_{j>d} (Z_j − Z̄_d)² / (k − d)²,
//
// with Z̄_d the mean of the batches after d, estimates the squared standard
// error of the truncated mean plus its squared bias; the d that minimises
// it gives At = d·m. The search covers the first half, d ≤ ⌊k/2⌋: a
// truncation in the second half is not trusted (White 1997; Hoad, Robinson
// & Davies 2010), and there the statistic, divided by the square of a few
// batches, falls spuriously low on the last ones. A minimum on that
// boundary means the transient was not seen to end (the run is too short,
// or it never settles): OK is false. NaN values are not allowed (drop them
// first). Cost: O(n).
func MSER(x []float64, m int) Truncation {
	if m < 1 {
		panic("stats: MSER batch size must be positive")
	}
	k := len(x) / m
	if k < 3 {
		return Truncation{}
	}
	z := make([]float64, k)
	for j := range z {
		s := 0.0
		for _, v := range x[j*m : (j+1)*m] {
			s += v
		}
		z[j] = s / float64(m)
	}
	// suffix sums, from the end, of z centred on its mean (against
	// cancellation): Σ z and Σ z² over j ≥ d
	c := 0.0
	for _, v := range z {
		c += v
	}
	c /= float64(k)
	for j := range z {
		z[j] -= c
	}
	best, bestD := math.Inf(1), 0
	var s1, s2 float64
	stat := make([]float64, k)
	for d := k - 1; d >= 0; d-- {
		s1 += z[d]
		s2 += z[d] * z[d]
		n := float64(k - d)
		// Σ (z − z̄)² = Σ z² − (Σ z)²/n, clamped against rounding
		stat[d] = math.Max(s2-s1*s1/n, 0) / (n * n)
	}
	half := k / 2
	for d := 0; d <= half; d++ {
		if stat[d] < best {
			best, bestD = stat[d], d
		}
	}
	tr := Truncation{At: bestD * m, OK: bestD < half, Z: math.NaN()}
	if d := bestD; d > 0 {
		var del, kept float64
		for _, v := range z[:d] {
			del += v
		}
		for _, v := range z[d:] {
			kept += v
		}
		del /= float64(d)
		kept /= float64(k - d)
		// the spread of all batch means, transient included: the kept part
		// alone is the stretch MSER chose for its small spread
		sd := math.Sqrt(stat[0] * float64(k) * float64(k) / float64(k-1))
		tr.Z = (del - kept) / (sd * math.Sqrt(1/float64(d)+1/float64(k-d)))
	}
	return tr
}

// MSER5 is MSER with batches of 5.
func MSER5(x []float64) Truncation { return MSER(x, MSERBatch) }
