package sim

// BatchSlots is the number of batch sums a Batches holds.
const BatchSlots = 60

// Batches accumulates a series of values, in the order they come, into
// equal consecutive batches without knowing the series' length: it keeps
// up to BatchSlots batch sums and, when they are full, merges neighbours
// pairwise into BatchSlots/2 batches of twice the size. After n values it
// holds between BatchSlots/2 and BatchSlots full batches (fewer while n <
// BatchSlots), each of a power-of-two size, plus a partial batch. Fixed
// size (about 500 bytes); Add allocates nothing. The batch means feed the
// non-overlapping batch means interval of a run's mean (package stats).
type Batches struct {
	sum   [BatchSlots]float64
	full  int
	size  int64 // values per full batch; 0 means 1
	part  float64
	partN int64
}

// Add appends v to the series.
func (b *Batches) Add(v float64) {
	if b.size == 0 {
		b.size = 1
	}
	b.part += v
	b.partN++
	if b.partN < b.size {
		return
	}
	b.sum[b.full] = b.part
	b.full++
	b.part, b.partN = 0, 0
	if b.full == BatchSlots {
		for i := 0; i < BatchSlots/2; i++ {
			b.sum[i] = b.sum[2*i] + b.sum[2*i+1]
		}
		b.full = BatchSlots / 2
		b.size *= 2
	}
}

// Means returns the means of the full batches, in order, and the number of
// values in each. The values of the partial last batch are left out.
func (b *Batches) Means() (means []float64, size int64) {
	size = max(b.size, 1)
	means = make([]float64, b.full)
	for i := range means {
		means[i] = b.sum[i] / float64(size)
	}
	return means, size
}
