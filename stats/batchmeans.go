package stats

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Batch counts. Non-overlapping batch means need batches long enough to be
// nearly independent and numerous enough for a stable variance estimate;
// the texts recommend between 10 and 30 batches (Law & Kelton, Simulation
// Modeling and Analysis, 3rd ed. 2000, §9.5.3; Schmeiser, "Batch size
// effects in the analysis of simulation output", Operations Research 30,
// 1982: little is gained beyond 30, and fewer than 10 widens the interval).
// hoplore uses 20 for a raw series, and between 15 and 30 when it regroups
// the equal batches a run accumulated (BatchCount).
const (
	MinBatches     = 10
	MaxBatches     = 30
	DefaultBatches = 20
)

// Interval is a confidence interval for a steady-state mean from one run.
type Interval struct {
	Mean    float64 // mean of the values used
	Half    float64 // half-width
	Batches int     // number of batches, k
	Size    int     // values per batch, m
	Dropped int     // values left out at the start (n − k·m)
	// Lag1 is the lag-1 autocorrelation of the batch means: near zero when
	// batches are long enough to be nearly independent. A value above
	// Lag1Limit says the interval is likely too narrow (Law & Kelton 2000,
	// §9.5.3).
	Lag1 float64
}

// BatchMeans returns the non-overlapping batch means confidence interval
// for the steady-state mean of the series x at the given level (0.95 for a
// 95% interval): x is cut into k batches of m = ⌊n/k⌋ consecutive values,
// after dropping the first n − k·m values (the ones nearest the start, as a
// tiny extra warm-up); with Ȳ the mean and s the standard deviation of the
// k batch means, the interval is
//
//	Ȳ ± t(1−(1−level)/2, k−1) · s/√k
//
// (Law & Kelton, Simulation Modeling and Analysis, 3rd ed. 2000, §9.5.3).
// x should be free of the initial transient (see MSER). It returns an error
// when k < 2, when there are fewer than k values or when a value is not
// finite. Cost: O(n).
func BatchMeans(x []float64, k int, level float64) (Interval, error) {
	if k < 2 {
		return Interval{}, fmt.Errorf("stats: batch means need at least 2 batches, got %d", k)
	}
	if !(level > 0 && level < 1) {
		return Interval{}, fmt.Errorf("stats: confidence level %g is not in (0, 1)", level)
	}
	m := len(x) / k
	if m < 1 {
		return Interval{}, fmt.Errorf("stats: %d values are too few for %d batches", len(x), k)
	}
	drop := len(x) - k*m
	means := make([]float64, k)
	for b := range means {
		s := 0.0
		for _, v := range x[drop+b*m : drop+(b+1)*m] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return Interval{}, errors.New("stats: batch means of a series with a non-finite value")
			}
			s += v
		}
		means[b] = s / float64(m)
	}
	mean, sd := stat.MeanStdDev(means, nil)
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(k - 1)}.Quantile(1 - (1-level)/2)
	return Interval{Mean: mean, Half: t * sd / math.Sqrt(float64(k)), Batches: k, Size: m, Dropped: drop, Lag1: lag1(means, mean)}, nil
}

// BatchCount returns the number of batches, in [MinBatches, MaxBatches]
// when n ≥ MinBatches, that groups n equal batches of a run into as many
// equal larger ones as possible: n / ⌈n/MaxBatches⌉, which leaves out fewer
// than ⌈n/MaxBatches⌉ of them. It returns 0 when n < MinBatches (too few
// for an interval).
func BatchCount(n int) int {
	if n < MinBatches {
		return 0
	}
	g := (n + MaxBatches - 1) / MaxBatches
	return n / g
}

// lag1 returns the lag-1 sample autocorrelation of x around mean, NaN when
// undefined.
func lag1(x []float64, mean float64) float64 {
	var num, den float64
	for i, v := range x {
		d := v - mean
		den += d * d
		if i > 0 {
			num += d * (x[i-1] - mean)
		}
	}
	if den == 0 {
		return math.NaN()
	}
	return num / den
}

// Lag1Limit returns the largest lag-1 autocorrelation of k batch means
// that RunInterval accepts before making batches longer: 1.645/√k, a
// one-sided 5% test of zero autocorrelation with Bartlett's standard error
// 1/√k of a sample autocorrelation of independent values (Bartlett, "On
// the theoretical specification and sampling properties of autocorrelated
// time-series", J. Royal Statistical Society B 8, 1946; Box & Jenkins, Time
// Series Analysis, 1970, §2.1.6). Law & Kelton (2000, §9.5.3) ask for
// batches long enough that the batch means' correlation is near zero; a
// fixed limit such as 0.2 would refuse a fifth of the intervals of
// independent batch means at k = 15 by chance alone.
func Lag1Limit(k int) float64 { return 1.645 / math.Sqrt(float64(k)) }

// RunInterval returns a steady-state confidence interval at the given
// level for the mean of a run's series, from means, the means of n equal
// consecutive batches of it (as sim.Batches keeps them): BatchMeans over
// BatchCount(n) batches, halving the number of batches (doubling their
// length) while the lag-1 autocorrelation of the batch means exceeds
// Lag1Limit and at least MinBatches would remain. It returns an error when n
// < MinBatches or the batch means stay correlated at MinBatches batches:
// then the run is too short for an interval of its own.
func RunInterval(means []float64, level float64) (Interval, error) {
	k := BatchCount(len(means))
	if k == 0 {
		return Interval{}, fmt.Errorf("stats: %d batches are too few for an interval (at least %d)", len(means), MinBatches)
	}
	for {
		iv, err := BatchMeans(means, k, level)
		if err != nil {
			return Interval{}, err
		}
		if !(iv.Lag1 > Lag1Limit(k)) {
			return iv, nil
		}
		if k/2 < MinBatches {
			return Interval{}, fmt.Errorf("stats: batch means remain correlated (lag-1 %.2f with %d batches): the run is too short for an interval", iv.Lag1, k)
		}
		k /= 2
	}
}
