package report

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"

	"hoplore/stats"
)

// PairedT is the result of a paired t test of differences d = a − b.
type PairedT struct {
	N        int     // pairs
	MeanDiff float64 // mean of d
	SD       float64 // unbiased standard deviation of d
	CI95     float64 // half-width of the 95% CI of the mean difference
	T        float64 // MeanDiff / (SD/√N)
	DF       float64 // N − 1
	P        float64 // two-sided p-value
}

// PairedTTest runs Student's paired t test (Student 1908) on the
// differences d: t = mean(d)/(s_d/√n) with n−1 degrees of freedom, two-sided
// p = 2·P(T ≥ |t|). With fewer than two differences, or all differences
// equal to zero, the statistic and p-value are NaN; with all differences
// equal and non-zero, t is ±Inf and p is 0.
func PairedTTest(d []float64) PairedT {
	r := PairedT{N: len(d), MeanDiff: math.NaN(), SD: math.NaN(), CI95: math.NaN(), T: math.NaN(), DF: float64(len(d) - 1), P: math.NaN()}
	if r.N == 0 {
		r.DF = math.NaN()
		return r
	}
	if r.N == 1 {
		r.MeanDiff = d[0]
		return r
	}
	r.MeanDiff, r.SD = stat.MeanStdDev(d, nil)
	se := r.SD / math.Sqrt(float64(r.N))
	r.CI95 = stats.TQuantile975(r.N-1) * se
	switch {
	case se == 0 && r.MeanDiff == 0:
		return r
	case se == 0:
		r.T = math.Copysign(math.Inf(1), r.MeanDiff)
		r.P = 0
		return r
	}
	r.T = r.MeanDiff / se
	r.P = 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: r.DF}.Survival(math.Abs(r.T))
	return r
}

// Wilcoxon is the result of a Wilcoxon signed-rank test.
type Wilcoxon struct {
	N     int     // non-zero differences ranked
	WPlus float64 // sum of the ranks of the positive differences
	P     float64 // two-sided p-value; NaN when N == 0
	Exact bool    // p from the exact permutation distribution
}

// WilcoxonExactMax is the largest number of non-zero differences for which
// WilcoxonSignedRank computes the exact distribution; above it, the normal
// approximation is used.
const WilcoxonExactMax = 50

// WilcoxonSignedRank runs the Wilcoxon (1945) signed-rank test on the
// differences d. Zero differences are dropped (Wilcoxon's convention); tied
// absolute values get their mid-rank. For up to WilcoxonExactMax non-zero
// differences the p-value is exact: the statistic's distribution under the
// null hypothesis (each sign + or − with probability 1/2, given the ranks)
// is counted by dynamic programming over the doubled ranks, so ties are
// handled exactly too. Two-sided p = min(1, 2·min(P(W+ ≤ w), P(W+ ≥ w))).
// Above the limit, the normal approximation with tie correction and a
// continuity correction of 1/2 is used.
func WilcoxonSignedRank(d []float64) Wilcoxon {
	var nz []float64
	for _, v := range d {
		if v != 0 && !math.IsNaN(v) {
			nz = append(nz, v)
		}
	}
	w := Wilcoxon{N: len(nz), P: math.NaN()}
	if w.N == 0 {
		return w
	}
	ranks2 := doubledRanks(nz) // 2·rank, integers even with mid-ranks
	var wp2 int
	for i, v := range nz {
		if v > 0 {
			wp2 += ranks2[i]
		}
	}
	w.WPlus = float64(wp2) / 2
	if w.N <= WilcoxonExactMax {
		w.Exact = true
		total := 0
		for _, r := range ranks2 {
			total += r
		}
		counts := make([]float64, total+1) // counts[s]: sign patterns with 2·W+ = s
		counts[0] = 1
		top := 0
		for _, r := range ranks2 {
			for s := top; s >= 0; s-- {
				if counts[s] != 0 {
					counts[s+r] += counts[s]
				}
			}
			top += r
		}
		all := math.Ldexp(1, w.N)
		var le, ge float64
		for s, c := range counts {
			if s <= wp2 {
				le += c
			}
			if s >= wp2 {
				ge += c
			}
		}
		w.P = math.Min(1, 2*math.Min(le, ge)/all)
		return w
	}
	n := float64(w.N)
	mean := n * (n + 1) / 4
	v := n * (n + 1) * (2*n + 1) / 24
	// tie correction: Σ(t³ − t)/48 over groups of tied absolute values
	abs := make([]float64, len(nz))
	for i, x := range nz {
		abs[i] = math.Abs(x)
	}
	slices.Sort(abs)
	for i := 0; i < len(abs); {
		j := i
		for j < len(abs) && abs[j] == abs[i] {
			j++
		}
		t := float64(j - i)
		v -= (t*t*t - t) / 48
		i = j
	}
	z := w.WPlus - mean
	z = math.Copysign(math.Max(math.Abs(z)-0.5, 0), z) / math.Sqrt(v)
	w.P = math.Min(1, 2*distuv.UnitNormal.Survival(math.Abs(z)))
	return w
}

// doubledRanks returns twice the mid-rank of |x[i]| among |x|.
func doubledRanks(x []float64) []int {
	idx := make([]int, len(x))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int {
		fa, fb := math.Abs(x[a]), math.Abs(x[b])
		switch {
		case fa < fb:
			return -1
		case fa > fb:
			return 1
		}
		return 0
	})
	r := make([]int, len(x))
	for i := 0; i < len(idx); {
		j := i
		for j < len(idx) && math.Abs(x[idx[j]]) == math.Abs(x[idx[i]]) {
			j++
		}
		// positions i..j-1 hold ranks i+1..j; mid-rank (i+1+j)/2, doubled i+1+j
		for k := i; k < j; k++ {
			r[idx[k]] = i + 1 + j
		}
		i = j
	}
	return r
}
