package stats

import (
	"math"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Estimate is a sample mean with the half-width of its 95% confidence
// interval.
type Estimate struct {
	N    int     // finite values used
	Mean float64 // NaN when N == 0
	CI95 float64 // Student t half-width; NaN when N < 2
}

// Low and High return the ends of the 95% confidence interval.
func (e Estimate) Low() float64  { return e.Mean - e.CI95 }
func (e Estimate) High() float64 { return e.Mean + e.CI95 }

// MeanCI95 returns the mean of the finite values in x and the half-width
// of its 95% confidence interval,
//
//	t(0.975, n−1) · s / √n,
//
// with s the unbiased sample standard deviation and t the Student t
// quantile (Student, The probable error of a mean, 1908; the usual
// replication interval: Law, Simulation Modeling and Analysis, 5th ed.
// 2015, §9.4.1). NaN and infinite values are left out, so n counts the
// finite ones. The mean is NaN when n = 0, the half-width NaN when n < 2:
// one replicate says nothing about the spread, and a NaN keeps a chart
// from drawing a spuriously certain band. It allocates only when x holds a
// non-finite value.
func MeanCI95(x []float64) Estimate {
	v := finite(x)
	e := Estimate{N: len(v), Mean: math.NaN(), CI95: math.NaN()}
	switch e.N {
	case 0:
		return e
	case 1:
		e.Mean = v[0]
		return e
	}
	m, sd := stat.MeanStdDev(v, nil)
	e.Mean = m
	e.CI95 = TQuantile975(e.N-1) * sd / math.Sqrt(float64(e.N))
	return e
}

// finite returns x itself when every value is finite, else a copy without
// the NaN and infinite values.
func finite(x []float64) []float64 {
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			out := make([]float64, i, len(x))
			copy(out, x[:i])
			for _, v := range x[i+1:] {
				if !math.IsNaN(v) && !math.IsInf(v, 0) {
					out = append(out, v)
				}
			}
			return out
		}
	}
	return x
}

// TQuantile975 returns the 0.975 quantile of Student's t distribution with
// df degrees of freedom: the factor of a two-sided 95% interval.
func TQuantile975(df int) float64 {
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(df)}.Quantile(0.975)
}
