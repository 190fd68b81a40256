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
	// independent with the spread of the kept ones (the stationary part);
	// NaN when nothing is deleted. On a stationary series MSER still
	// deletes a few batches now and then, by chance, and the ones it
	// deletes are the outlying ones, so Z is compared with MSERCritical(K),
	// not with a normal quantile.
	Z float64
	// K is the number of batches.
	K int
	// Deleted and Kept are the means of the deleted and the kept batches
	// (NaN when nothing is deleted).
	Deleted, Kept float64
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
	tr := Truncation{At: bestD * m, OK: bestD < half, Z: math.NaN(), K: k, Deleted: math.NaN(), Kept: math.NaN()}
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
		// the spread of the kept batch means: the spread of all of them,
		// transient included, bounds |Z| below √(k−1) whatever the
		// transient (under 3.29 for k ≤ 11 batches), and shrinks it the
		// larger the transient is; MSERCritical allows for MSER having
		// chosen the kept stretch for its small spread
		nk := float64(k - d)
		sd := math.Sqrt(stat[d] * nk * nk / (nk - 1))
		tr.Z = (del - kept) / (sd * math.Sqrt(1/float64(d)+1/nk))
		tr.Deleted, tr.Kept = del+c, kept+c
	}
	return tr
}

// mserCritical lists, by number of batches k, the value |Truncation.Z|
// exceeds with probability 0.001 on white noise: the 99.9% quantile of
// |Z| over 100,000 series of k independent normal batch means per k
// (40,000 from k = 500), simulated with this package's MSER (the selection
// of the kept stretch by MSER makes the null distribution no textbook
// one). It falls towards 3.7 as k grows; odd and even k differ because the
// search covers d ≤ ⌊k/2⌋.
var mserCritical = [...]struct {
	k int
	z float64
}{
	{10, 9.11}, {11, 7.40}, {12, 7.59}, {14, 6.38}, {16, 5.77}, {20, 5.21},
	{25, 4.86}, {30, 4.71}, {40, 4.36}, {50, 4.18}, {70, 4.00}, {100, 3.82},
	{150, 3.77}, {200, 3.76}, {300, 3.74}, {500, 3.75}, {1000, 3.74}, {2000, 3.72},
}

// MSERMinBatches is the fewest batches MSERCritical covers.
const MSERMinBatches = 10

// MSERCritical returns the critical value of |Truncation.Z| at a false
// alarm rate of 0.1% on a stationary series of k independent batch means
// (see mserCritical), interpolated linearly between the simulated k; +Inf
// below MSERMinBatches batches (no transient is claimed), the value at
// 2,000 batches beyond.
func MSERCritical(k int) float64 {
	t := mserCritical[:]
	switch {
	case k < t[0].k:
		return math.Inf(1)
	case k >= t[len(t)-1].k:
		return t[len(t)-1].z
	}
	i := 1
	for t[i].k < k {
		i++
	}
	a, b := t[i-1], t[i]
	return a.z + (b.z-a.z)*float64(k-a.k)/float64(b.k-a.k)
}

// MSER5 is MSER with batches of 5.
func MSER5(x []float64) Truncation { return MSER(x, MSERBatch) }
