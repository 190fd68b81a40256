package paths_test

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"hoplore/paths"
)

// geometricInstance is a connected sparse graph: a ring plus random chords,
// both directions of every link, weights uniform in (0, 10).
func geometricInstance(n, chords int) *instance {
	r := rand.New(rand.NewPCG(uint64(n), 3))
	in := &instance{n: n}
	add := func(a, b int) {
		w := 10 * (1 - r.Float64())
		in.tails, in.heads, in.w = append(in.tails, a, b), append(in.heads, b, a), append(in.w, w, w)
	}
	for v := 0; v < n; v++ {
		add(v, (v+1)%n)
	}
	for range chords {
		a, b := r.IntN(n), r.IntN(n)
		if a != b {
			add(a, b)
		}
	}
	in.g = paths.NewGraph(n, in.tails, in.heads)
	return in
}

var benchSizes = []int{50, 1000}

// BenchmarkFrom measures one full Dijkstra from a source (the optimum
// solvers' inner step) on ring-plus-chord graphs of mean degree 4.
func BenchmarkFrom(b *testing.B) {
	for _, n := range benchSizes {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			in := geometricInstance(n, n)
			var s paths.Search
			b.ReportAllocs()
			src := 0
			for b.Loop() {
				s.From(in.g, src, in.w, nil)
				src = (src + 1) % n
			}
			if s.Dist[0] < 0 {
				b.Fatal("negative distance")
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(in.g.NumArcs()), "ns/arc")
		})
	}
}

// BenchmarkTo measures one Dijkstra towards a destination.
func BenchmarkTo(b *testing.B) {
	for _, n := range benchSizes {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			in := geometricInstance(n, n)
			var s paths.Search
			b.ReportAllocs()
			dst := 0
			for b.Loop() {
				s.To(in.g, dst, in.w, nil)
				dst = (dst + 1) % n
			}
			if s.Dist[0] < 0 {
				b.Fatal("negative distance")
			}
		})
	}
}

// BenchmarkFirstHops measures a link-state recompute: Dijkstra with
// first-hop sets.
func BenchmarkFirstHops(b *testing.B) {
	for _, n := range benchSizes {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			in := geometricInstance(n, n)
			var f paths.FirstHops
			b.ReportAllocs()
			src := 0
			for b.Loop() {
				f.Compute(in.g, src, in.w, nil)
				src = (src + 1) % n
			}
			if f.First(1) < 0 && f.First(n-1) < 0 {
				b.Fatal("no first hop")
			}
		})
	}
}

// BenchmarkKShortest measures Yen's algorithm for k = 3 on 50 nodes.
func BenchmarkKShortest(b *testing.B) {
	in := geometricInstance(50, 50)
	var s paths.Search
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		if p := s.KShortest(in.g, i%50, (i*7+25)%50, 3, in.w); len(p) == 0 && i%50 != (i*7+25)%50 {
			b.Fatal("no path")
		}
		i++
	}
}

// BenchmarkHeap measures a pop and a push at a steady size.
func BenchmarkHeap(b *testing.B) {
	for _, size := range []int{64, 1024, 16384} {
		b.Run(fmt.Sprint(size), func(b *testing.B) {
			r := rand.New(rand.NewPCG(1, 2))
			var h paths.Heap
			for i := range size {
				h.Push(r.Float64(), int32(i))
			}
			b.ReportAllocs()
			for b.Loop() {
				k, v := h.Pop()
				h.Push(k+r.Float64(), v)
			}
			if h.Len() != size {
				b.Fatal("lost entries")
			}
		})
	}
}
