package sim

import (
	"math/rand/v2"
	"testing"
)

// The heap returns events in (time, sequence) order whatever the push order.
func TestEventHeapOrder(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	var h eventHeap
	seq := uint64(0)
	for i := 0; i < 5000; i++ {
		seq++
		h.push(event{at: Time(r.IntN(100)), seq: seq})
		if i%3 == 0 {
			h.pop()
		}
	}
	prev := event{at: -1}
	for h.len() > 0 {
		e := h.pop()
		if e.before(&prev) {
			t.Fatalf("popped %+v after %+v", e, prev)
		}
		prev = e
	}
}

// Replacing the top by an event that does not come before it leaves the
// heap popping exactly what a pop followed by a push leaves.
func TestEventHeapReplaceTop(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	var a, b eventHeap
	seq := uint64(0)
	for i := 0; i < 200; i++ {
		seq++
		e := event{at: Time(r.IntN(1000)), seq: seq}
		a.push(e)
		b.push(e)
	}
	for i := 0; i < 5000; i++ {
		top := a.ev[0]
		seq++
		e := event{at: top.at + Time(r.IntN(50)), seq: seq}
		a.replaceTop(e)
		if got := b.pop(); got != top {
			t.Fatalf("step %d: popped %+v, top was %+v", i, got, top)
		}
		b.push(e)
	}
	for a.len() > 0 {
		if x, y := a.pop(), b.pop(); x != y {
			t.Fatalf("drained %+v and %+v", x, y)
		}
	}
}

// BenchmarkEventHeap measures a push and a pop at a steady heap size.
func BenchmarkEventHeap(b *testing.B) {
	for _, size := range []int{64, 1024, 16384} {
		b.Run(itoa(size), func(b *testing.B) {
			r := rand.New(rand.NewPCG(1, 2))
			var h eventHeap
			var seq uint64
			for i := 0; i < size; i++ {
				seq++
				h.push(event{at: Time(r.IntN(1 << 30)), seq: seq})
			}
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				e := h.pop()
				seq++
				h.push(event{at: e.at + Time(r.IntN(1<<20)), seq: seq})
			}
		})
	}
}

func itoa(n int) string {
	s := ""
	for n > 0 {
		s = string(rune('0'+n%10)) + s
		n /= 10
	}
	return s
}
