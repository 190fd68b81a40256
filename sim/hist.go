package sim

import (
	"fmt"
	"math"
)

func nan() float64 { return math.NaN() }

// Histogram is a mergeable quantile sketch of non-negative values (seconds)
// with relative error at most HistRelErr = 0.1%.
//
// Buckets are log-spaced: bucket k holds [HistMin·γ^k, HistMin·γ^(k+1)) with
// γ = HistRatio = 1.001, on one grid shared by every Histogram, so two
// histograms merge by adding counts. Counts are stored densely over the
// range of buckets actually used, grown when a value falls outside it (with
// slack, so growth is rare and Add allocates nothing once the range is
// known). Values below HistMin share the first bucket and values above
// HistMax the last; the exact minimum and maximum are kept as well.
//
// Quantile interpolates within the bucket by rank, so the reported value
// lies in the same bucket as the exact order statistic: its relative error is
// below γ−1 = 0.1% for values in [HistMin, HistMax], and two sets of values
// whose quantiles fall into one bucket still report different values unless
// their counts agree too.
//
// Memory: 4 bytes per bucket between the smallest and the largest bucket
// used, plus growth slack of at most half as many again and 64 buckets:
// HistogramBytes(span) for values spanning a factor span (about 14 KB per
// decade), HistogramMaxBytes at most. This is the same scheme as the
// logarithmic sketches of Masson, Rim & Lee, "DDSketch: a fast and
// fully-mergeable quantile sketch with relative-error guarantees" (VLDB
// 2019), with interpolation inside the bucket instead of its midpoint.
type Histogram struct {
	counts   []uint32 // counts[i] is bucket off+i
	off      int      // grid index of counts[0]
	n        int64
	min, max float64
}

// Histogram bucket grid.
const (
	HistMin    = 1e-9  // seconds: the clock's resolution
	HistMax    = 1e6   // seconds
	HistRatio  = 1.001 // ratio of consecutive bucket edges
	HistRelErr = HistRatio - 1
)

var (
	histLogRatio = math.Log(HistRatio)
	histInvLog   = 1 / histLogRatio
	histLogMin   = math.Log(HistMin)
	histBuckets  = int(math.Ceil(math.Log(HistMax/HistMin)*histInvLog)) + 1
)

// histSlack is the least number of spare buckets a histogram grows by.
const histSlack = 64

// HistogramMaxBytes is the most memory a Histogram's counts can take, bytes.
var HistogramMaxBytes = float64(histBuckets * 4)

// HistogramBytes returns an upper bound on the memory a Histogram's counts
// take when its values span a factor span (largest / smallest), bytes.
func HistogramBytes(span float64) float64 {
	k := math.Ceil(math.Log(math.Max(span, 1))*histInvLog) + 1
	return math.Min(4*(1.5*k+histSlack), HistogramMaxBytes)
}

// NewHistogram returns an empty histogram. It allocates nothing until the
// first value.
func NewHistogram() *Histogram {
	return &Histogram{min: math.Inf(1), max: math.Inf(-1)}
}

// histIndex returns the grid index of v's bucket.
func histIndex(v float64) int {
	if !(v > HistMin) { // also NaN
		return 0
	}
	i := int((math.Log(v) - histLogMin) * histInvLog)
	if i >= histBuckets {
		i = histBuckets - 1
	}
	return i
}

// histEdge returns the lower edge of grid bucket k, seconds.
func histEdge(k int) float64 {
	return math.Exp(histLogMin + float64(k)*histLogRatio)
}

// Add records v (seconds). It allocates only when v falls outside the range
// of buckets used so far.
func (h *Histogram) Add(v float64) {
	i := histIndex(v) - h.off
	if uint(i) >= uint(len(h.counts)) {
		h.grow(i + h.off)
		i = histIndex(v) - h.off
	}
	h.counts[i]++
	if h.counts[i] == 0 {
		panic("sim: histogram bucket count overflows 32 bits")
	}
	h.n++
	if v < h.min {
		h.min = v
	}
	if v > h.max {
		h.max = v
	}
}

// grow extends the counts to cover grid index k and every bucket used so
// far, with slack of a quarter of the used span (at least histSlack/2
// buckets) on each side.
func (h *Histogram) grow(k int) {
	lo, hi := k, k
	if h.n > 0 {
		lo, hi = min(lo, histIndex(h.min)), max(hi, histIndex(h.max))
	}
	s := max(histSlack/2, (hi-lo+1)/4)
	lo, hi = max(lo-s, 0), min(hi+1+s, histBuckets)
	if len(h.counts) > 0 {
		lo, hi = min(lo, h.off), max(hi, h.off+len(h.counts))
	}
	h.resize(lo, hi)
}

// resize makes the counts cover grid indices [lo, hi) ⊇ the current range.
func (h *Histogram) resize(lo, hi int) {
	c := make([]uint32, hi-lo)
	if len(h.counts) > 0 {
		copy(c[h.off-lo:], h.counts)
	}
	h.counts, h.off = c, lo
}

// Count returns the number of values recorded.
func (h *Histogram) Count() int64 { return h.n }

// Min returns the smallest value recorded, +Inf when empty.
func (h *Histogram) Min() float64 { return h.min }

// Max returns the largest value recorded, −Inf when empty.
func (h *Histogram) Max() float64 { return h.max }

// Bytes returns the memory held by the counts, bytes.
func (h *Histogram) Bytes() int { return 4 * cap(h.counts) }

// Merge adds o's values to h, as if each had been recorded in h. It panics
// if a bucket count would overflow 32 bits.
func (h *Histogram) Merge(o *Histogram) {
	if o.n == 0 {
		return
	}
	if len(h.counts) == 0 {
		h.counts = append([]uint32(nil), o.counts...)
		h.off, h.n, h.min, h.max = o.off, o.n, o.min, o.max
		return
	}
	if lo, hi := min(h.off, o.off), max(h.off+len(h.counts), o.off+len(o.counts)); lo < h.off || hi > h.off+len(h.counts) {
		h.resize(lo, hi)
	}
	for i, c := range o.counts {
		j := o.off + i - h.off
		s := h.counts[j] + c
		if s < c {
			panic(fmt.Sprintf("sim: merged histogram bucket %d overflows 32 bits", o.off+i))
		}
		h.counts[j] = s
	}
	h.n += o.n
	h.min = math.Min(h.min, o.min)
	h.max = math.Max(h.max, o.max)
}

// Quantile returns the p-quantile (0 < p ≤ 1): the ceil(p·n)-th smallest
// recorded value within relative error HistRelErr (exact for the smallest
// and the largest); NaN when empty. Inside
// its bucket, clipped to the observed range [Min, Max], the value is
// interpolated by rank in log scale. Cost: O(buckets used).
func (h *Histogram) Quantile(p float64) float64 {
	if h.n == 0 {
		return math.NaN()
	}
	rank := int64(math.Ceil(p * float64(h.n)))
	rank = min(max(rank, 1), h.n)
	switch rank {
	case 1:
		return h.min
	case h.n:
		return h.max
	}
	var cum int64
	for i, c := range h.counts {
		if c == 0 {
			continue
		}
		if cum+int64(c) < rank {
			cum += int64(c)
			continue
		}
		k := h.off + i
		lo, hi := math.Max(histEdge(k), h.min), math.Min(histEdge(k+1), h.max)
		if k == 0 {
			lo = h.min // values below HistMin share bucket 0
		}
		if lo <= 0 || hi <= lo {
			return math.Min(math.Max(lo, h.min), h.max)
		}
		f := (float64(rank-cum) - 0.5) / float64(c)
		return lo * math.Pow(hi/lo, f)
	}
	return h.max
}
