package sim_test

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"

	"hoplore/sim"
)

// TestSizeDistSCV checks Var[X]/E[X]² of every size distribution against
// gonum's moments: its distributions' Mean and Variance, and the weighted
// population variance of a discrete mix (stat.PopMeanVariance). The
// empirical CDF is a point mass at its first size plus a uniform piece per
// segment, so its second moment is that mixture's.
func TestSizeDistSCV(t *testing.T) {
	scv := func(mean, variance float64) float64 { return variance / (mean * mean) }
	exp := distuv.Exponential{Rate: 1.0 / 700}
	par := distuv.Pareto{Xm: 1000 * 3.5 / 4.5, Alpha: 4.5}
	ln := distuv.LogNormal{Mu: 6.5, Sigma: 0.6}
	bm, bv := stat.PopMeanVariance([]float64{64, 1500}, []float64{0.7, 0.3})
	cm, cv := stat.PopMeanVariance([]float64{10_000, 1e6, 3e4}, []float64{0.85, 0.1, 0.05})
	// Empirical: P(X = 100) = 0.2, then uniform on [100, 1000] with 0.5 and on
	// [1000, 50000] with 0.3.
	u1, u2 := distuv.Uniform{Min: 100, Max: 1000}, distuv.Uniform{Min: 1000, Max: 50_000}
	em := 0.2*100 + 0.5*u1.Mean() + 0.3*u2.Mean()
	em2 := 0.2*100*100 + 0.5*(u1.Variance()+u1.Mean()*u1.Mean()) + 0.3*(u2.Variance()+u2.Mean()*u2.Mean())
	for _, tc := range []struct {
		name string
		d    sim.SizeDist
		want float64
	}{
		{"fixed", sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}, 0},
		{"exponential", sim.SizeDist{Kind: sim.Exponential, MeanBytes: 700}, scv(exp.Mean(), exp.Variance())},
		{"bimodal", sim.SizeDist{Kind: sim.Bimodal, SmallBytes: 64, LargeBytes: 1500, LargeFraction: 0.3}, scv(bm, bv)},
		{"bimodal all small", sim.SizeDist{Kind: sim.Bimodal, SmallBytes: 64, LargeBytes: 1500}, 0},
		{"pareto 4.5", sim.SizeDist{Kind: sim.Pareto, Shape: 4.5, MeanBytes: 1000}, scv(par.Mean(), par.Variance())},
		{"pareto 2", sim.SizeDist{Kind: sim.Pareto, Shape: 2, MeanBytes: 1000}, math.Inf(1)},
		{"lognormal", sim.SizeDist{Kind: sim.Lognormal, Mu: 6.5, Sigma: 0.6}, scv(ln.Mean(), ln.Variance())},
		{"classes", sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 0.85, Bytes: 10_000}, {Fraction: 0.1, Bytes: 1e6}, {Fraction: 0.05, Bytes: 3e4}}}, scv(cm, cv)},
		{"empirical", sim.SizeDist{Kind: sim.Empirical, CDF: []sim.CDFPoint{{Bytes: 100, P: 0.2}, {Bytes: 1000, P: 0.7}, {Bytes: 50_000, P: 1}}}, em2/(em*em) - 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got := tc.d.SCV()
			if math.IsInf(tc.want, 1) {
				if !math.IsInf(got, 1) {
					t.Errorf("SCV %v, want +Inf", got)
				}
				return
			}
			if math.Abs(got-tc.want) > 1e-12*(1+tc.want) {
				t.Errorf("SCV %.15g, want %.15g", got, tc.want)
			}
		})
	}
}
