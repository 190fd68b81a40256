package report

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"hoplore/stats"
)

// sleepDiffs are the differences in additional hours of sleep between the
// two drugs for ten patients (Cushny & Peebles), as tabulated in Student,
// "The probable error of a mean", Biometrika 6(1), 1908, p. 20.
var sleepDiffs = []float64{1.2, 2.4, 1.3, 1.3, 0, 1.0, 1.8, 0.8, 4.6, 1.4}

func TestPairedTStudentSleep(t *testing.T) {
	r := PairedTTest(sleepDiffs)
	// Student (1908) reports mean 1.58 and standard deviation 1.17 (his
	// divisor is n, not n − 1).
	if got := math.Round(r.MeanDiff*100) / 100; got != 1.58 {
		t.Errorf("mean difference: got %v, want 1.58 (Student 1908)", r.MeanDiff)
	}
	sdN := r.SD * math.Sqrt(float64(r.N-1)/float64(r.N))
	if got := math.Round(sdN*100) / 100; got != 1.17 {
		t.Errorf("sd (divisor n): got %v, want 1.17 (Student 1908)", sdN)
	}
	// Student's z = 1.58/1.17 = 1.35; the modern t = z·√(n−1) = 4.06 with
	// 9 degrees of freedom, two-sided p = 0.0028 (common practice: the
	// paired t test on these data, the textbook example of it).
	if got := math.Round(r.T*100) / 100; got != 4.06 {
		t.Errorf("t: got %v, want 4.06", r.T)
	}
	if r.DF != 9 {
		t.Errorf("df: got %v, want 9", r.DF)
	}
	if got := math.Round(r.P*1e4) / 1e4; got != 0.0028 {
		t.Errorf("two-sided p: got %v, want 0.0028", r.P)
	}
	// Against gonum's distributions directly: p = 2·(1 − F(|t|)), and the
	// half-width uses t(0.975, 9) = 2.262 (Fisher & Yates, Statistical
	// Tables, table III).
	tdist := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: 9}
	if want := 2 * (1 - tdist.CDF(r.T)); math.Abs(r.P-want) > 1e-12 {
		t.Errorf("p: got %v, want 2(1−CDF(t)) = %v", r.P, want)
	}
	q := tdist.Quantile(0.975)
	if math.Round(q*1000)/1000 != 2.262 {
		t.Errorf("t(0.975, 9): got %v, want 2.262 (Fisher & Yates)", q)
	}
	if want := q * r.SD / math.Sqrt(10); math.Abs(r.CI95-want) > 1e-12 {
		t.Errorf("ci95: got %v, want %v", r.CI95, want)
	}
	// 95% CI [0.70, 2.46] (common practice: mean ± t·s/√n on these data).
	if lo, hi := math.Round((r.MeanDiff-r.CI95)*100)/100, math.Round((r.MeanDiff+r.CI95)*100)/100; lo != 0.70 || hi != 2.46 {
		t.Errorf("95%% CI: got [%v, %v], want [0.70, 2.46]", lo, hi)
	}
}

func TestPairedTEdgeCases(t *testing.T) {
	tests := []struct {
		name  string
		d     []float64
		wantT float64 // NaN: undefined
		wantP float64
	}{
		{"empty", nil, math.NaN(), math.NaN()},
		{"one pair", []float64{2}, math.NaN(), math.NaN()},
		{"all zero", []float64{0, 0, 0}, math.NaN(), math.NaN()},
		{"constant positive", []float64{1, 1, 1}, math.Inf(1), 0},
		{"constant negative", []float64{-2, -2}, math.Inf(-1), 0},
		// symmetric about zero: mean 0, t = 0, p = 1 (by definition)
		{"symmetric", []float64{-1, 1, -2, 2}, 0, 1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r := PairedTTest(tc.d)
			if !sameFloat(r.T, tc.wantT) || !sameFloat(r.P, tc.wantP) {
				t.Errorf("got t=%v p=%v, want t=%v p=%v", r.T, r.P, tc.wantT, tc.wantP)
			}
		})
	}
}

func sameFloat(a, b float64) bool {
	return (math.IsNaN(a) && math.IsNaN(b)) || a == b || math.Abs(a-b) < 1e-12
}

func TestWilcoxonHandWorked(t *testing.T) {
	// Computed by hand: d = +0.8, +1.9, −0.3, +2.7, +1.1. Ranks of |d|:
	// 0.3→1, 0.8→2, 1.1→3, 1.9→4, 2.7→5, so W+ = 2+3+4+5 = 14. Of the
	// 2⁵ = 32 equally likely sign patterns, W+ ≥ 14 for {1..5} (15) and
	// {2,3,4,5} (14) only: one-sided 2/32, two-sided p = 4/32 = 0.125.
	w := WilcoxonSignedRank([]float64{0.8, 1.9, -0.3, 2.7, 1.1})
	if w.N != 5 || w.WPlus != 14 || w.P != 0.125 || !w.Exact {
		t.Errorf("got N=%d W+=%v p=%v exact=%v, want N=5 W+=14 p=0.125 exact", w.N, w.WPlus, w.P, w.Exact)
	}
	// Student's sleep differences: the zero is dropped (Wilcoxon 1945),
	// leaving 9 positive differences; W+ = 45 is the maximum, reached by one
	// sign pattern in 2⁹: two-sided p = 2/512 (computed by hand).
	w = WilcoxonSignedRank(sleepDiffs)
	if w.N != 9 || w.WPlus != 45 || w.P != 2.0/512 {
		t.Errorf("sleep: got N=%d W+=%v p=%v, want N=9 W+=45 p=%v", w.N, w.WPlus, w.P, 2.0/512)
	}
}

// bruteWilcoxon enumerates all 2^n sign patterns of the mid-ranks of the
// non-zero |d| and returns the two-sided p-value and W+.
func bruteWilcoxon(d []float64) (p, wplus float64) {
	var nz []float64
	for _, v := range d {
		if v != 0 {
			nz = append(nz, v)
		}
	}
	n := len(nz)
	rank := make([]float64, n)
	for i := range nz {
		less, eq := 0, 0
		for j := range nz {
			switch {
			case math.Abs(nz[j]) < math.Abs(nz[i]):
				less++
			case math.Abs(nz[j]) == math.Abs(nz[i]):
				eq++
			}
		}
		rank[i] = float64(less) + float64(eq+1)/2
		if nz[i] > 0 {
			wplus += rank[i]
		}
	}
	var le, ge int
	for mask := 0; mask < 1<<n; mask++ {
		s := 0.0
		for i := range n {
			if mask&(1<<i) != 0 {
				s += rank[i]
			}
		}
		if s <= wplus+1e-9 {
			le++
		}
		if s >= wplus-1e-9 {
			ge++
		}
	}
	return math.Min(1, 2*float64(min(le, ge))/float64(int(1)<<n)), wplus
}

func TestWilcoxonAgainstEnumeration(t *testing.T) {
	tests := [][]float64{
		{1, 2, 3},
		{-1, 2, -3, 4},
		{0.5, -0.5, 1, 1, -2, 3, 0}, // ties and a zero
		{3, 3, 3, -3, 1, -1, 2},     // heavy ties
		{-0.2, -0.4, -0.1, -0.9, 0.3, -1.2, -0.7, -0.6, 0.05, -1.5, -2.5, -0.8},
		{1.2, -0.7, 0.3, 0.3, -0.3, 2.2, 1.7, -1.1, 0.9, 0.4, -0.05, 1.3, 2.0, 0.6},
	}
	for _, d := range tests {
		want, wantW := bruteWilcoxon(d)
		got := WilcoxonSignedRank(d)
		if math.Abs(got.P-want) > 1e-12 || got.WPlus != wantW {
			t.Errorf("%v: got W+=%v p=%v, want W+=%v p=%v (enumeration)", d, got.WPlus, got.P, wantW, want)
		}
	}
}

func TestWilcoxonNormalApproximation(t *testing.T) {
	// 60 differences ±1..±60 with signs alternating +,−,−,+: W+ equals its
	// null mean n(n+1)/4 = 915, so z = 0 after the continuity correction and
	// p = 1 (computed by hand).
	d := make([]float64, 60)
	for i := range d {
		d[i] = float64(i + 1)
		if i%4 == 1 || i%4 == 2 {
			d[i] = -d[i]
		}
	}
	w := WilcoxonSignedRank(d)
	if w.Exact || w.WPlus != 915 || w.P != 1 {
		t.Errorf("got exact=%v W+=%v p=%v, want normal W+=915 p=1", w.Exact, w.WPlus, w.P)
	}
	// All 60 positive: W+ = 1830, z = (1830 − 915 − 0.5)/√(60·61·121/24)
	// (computed by hand from the normal approximation's formula).
	for i := range d {
		d[i] = math.Abs(d[i])
	}
	w = WilcoxonSignedRank(d)
	z := (1830 - 915 - 0.5) / math.Sqrt(60*61*121/24.0)
	if want := 2 * distuv.UnitNormal.Survival(z); math.Abs(w.P-want) > 1e-15 {
		t.Errorf("all positive: got p=%v, want %v", w.P, want)
	}
}

func TestMeanCI(t *testing.T) {
	// 1..10: mean 5.5, sd 3.0277, t(0.975, 9) = 2.2622, CI [3.3341, 7.6659]
	// (values 1..10: common practice; t from Fisher & Yates table III).
	x := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, math.NaN()}
	e := stats.MeanCI95(x)
	if e.N != 10 || e.Mean != 5.5 || math.Round(e.Low()*1e4)/1e4 != 3.3341 || math.Round(e.High()*1e4)/1e4 != 7.6659 {
		t.Errorf("got %+v [%v, %v], want n=10 mean 5.5 CI [3.3341, 7.6659]", e, e.Low(), e.High())
	}
	if e := stats.MeanCI95([]float64{4}); e.Mean != 4 || !math.IsNaN(e.CI95) {
		t.Errorf("one value: got %+v, want mean 4, CI NaN", e)
	}
}
