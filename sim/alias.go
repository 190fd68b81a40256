package sim

import "math/rand/v2"

// alias is Walker's alias table for O(1) draws from a discrete distribution
// (Walker 1977; Vose's construction, 1991).
type alias struct {
	prob  []float64
	alias []int32
	items []int32
}

func newAlias(items []int32, weights []float64) alias {
	n := len(items)
	a := alias{prob: make([]float64, n), alias: make([]int32, n), items: items}
	var sum float64
	for _, w := range weights {
		sum += w
	}
	scaled := make([]float64, n)
	var small, large []int
	for i, w := range weights {
		scaled[i] = w * float64(n) / sum
		if scaled[i] < 1 {
			small = append(small, i)
		} else {
			large = append(large, i)
		}
	}
	for len(small) > 0 && len(large) > 0 {
		s, l := small[len(small)-1], large[len(large)-1]
		small = small[:len(small)-1]
		a.prob[s] = scaled[s]
		a.alias[s] = int32(l)
		scaled[l] += scaled[s] - 1
		if scaled[l] < 1 {
			large = large[:len(large)-1]
			small = append(small, l)
		}
	}
	for _, i := range large {
		a.prob[i] = 1
	}
	for _, i := range small {
		a.prob[i] = 1
	}
	return a
}

func (a *alias) draw(r *rand.Rand) int32 {
	if len(a.items) == 1 {
		return a.items[0]
	}
	i := r.IntN(len(a.items))
	if r.Float64() < a.prob[i] {
		return a.items[i]
	}
	return a.items[a.alias[i]]
}
