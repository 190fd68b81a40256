package sim

import "math"

func nan() float64 { return math.NaN() }

// Histogram is a log-bucketed histogram of positive values (seconds). Bucket
// edges grow by HistRatio, and a quantile is reported at its bucket's
// geometric midpoint, so its relative error is at most sqrt(HistRatio)-1 <
// 1%. Values below HistMin share the first bucket (reported as the smallest
// value seen there); values above HistMax the last.
type Histogram struct {
	counts   []uint32
	n        int64
	min, max float64
}

// Histogram bucket layout.
const (
	HistMin   = 1e-7 // seconds
	HistMax   = 1e5  // seconds
	HistRatio = 1.0199
)

var (
	histLogRatio = math.Log(HistRatio)
	histBuckets  = int(math.Ceil(math.Log(HistMax/HistMin)/histLogRatio)) + 1
)

// NewHistogram returns an empty histogram.
func NewHistogram() *Histogram {
	return &Histogram{counts: make([]uint32, histBuckets), min: math.Inf(1), max: math.Inf(-1)}
}

func histIndex(v float64) int {
	if v <= HistMin {
		return 0
	}
	i := int(math.Log(v/HistMin)/histLogRatio) + 1
	if i >= histBuckets {
		i = histBuckets - 1
	}
	return i
}

// Add records v (seconds).
func (h *Histogram) Add(v float64) {
	h.counts[histIndex(v)]++
	h.n++
	if v < h.min {
		h.min = v
	}
	if v > h.max {
		h.max = v
	}
}

// Count returns the number of values recorded.
func (h *Histogram) Count() int64 { return h.n }

// Merge adds o's values to h.
func (h *Histogram) Merge(o *Histogram) {
	for i, c := range o.counts {
		h.counts[i] += c
	}
	h.n += o.n
	h.min = math.Min(h.min, o.min)
	h.max = math.Max(h.max, o.max)
}

// Quantile returns the p-quantile (0 < p <= 1) as the value of the
// ceil(p·n)-th smallest recorded value, within the histogram's relative
// error, clamped to the observed range; NaN when empty.
func (h *Histogram) Quantile(p float64) float64 {
	if h.n == 0 {
		return math.NaN()
	}
	rank := int64(math.Ceil(p * float64(h.n)))
	if rank < 1 {
		rank = 1
	}
	var cum int64
	for i, c := range h.counts {
		cum += int64(c)
		if cum >= rank {
			var v float64
			if i == 0 {
				v = h.min
			} else {
				lo := HistMin * math.Exp(float64(i-1)*histLogRatio)
				v = lo * math.Sqrt(HistRatio)
			}
			return math.Min(math.Max(v, h.min), h.max)
		}
	}
	return h.max
}
