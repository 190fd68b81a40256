package stats

import (
	"math"
	"sort"
)

// Holm returns Holm's step-down adjusted p-values of the family p, in the
// order of p (Holm, "A simple sequentially rejective multiple test
// procedure", Scand. J. Statistics 6, 1979). With the m finite p-values
// sorted, p(1) ≤ … ≤ p(m), the adjusted value of the i-th is
//
//	max over j ≤ i of min(1, (m − j + 1)·p(j))
//
// (the adjusted p-value form of Holm's procedure: Wright, "Adjusted
// P-values for simultaneous inference", Biometrics 48, 1992). Rejecting
// every hypothesis whose adjusted value is at most α is Holm's test at
// family-wise level α. NaN entries stand for tests not made: they stay NaN
// and do not count in m. Ties keep their order, so equal p-values get equal
// adjusted values. Cost: O(m log m).
func Holm(p []float64) []float64 {
	adj := make([]float64, len(p))
	idx := make([]int, 0, len(p))
	for i, v := range p {
		adj[i] = math.NaN()
		if !math.IsNaN(v) {
			idx = append(idx, i)
		}
	}
	sort.SliceStable(idx, func(a, b int) bool { return p[idx[a]] < p[idx[b]] })
	m := len(idx)
	run := 0.0
	for j, i := range idx {
		run = math.Max(run, math.Min(1, float64(m-j)*p[i]))
		adj[i] = run
	}
	return adj
}
