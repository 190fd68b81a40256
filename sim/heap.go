package sim

// event kinds
const (
	evGen uint8 = iota
	evTxDone
	evArrive
	evForward
	evTimer
	evFail
	evDetect
	evLSA
	evSnapshot
	evCondition
	evFlowStart
	evFlowPacket
)

// event is one scheduled happening. Events are ordered by (at, seq): equal
// times run in the order they were scheduled.
type event struct {
	at   Time
	seq  uint64
	kind uint8
	a    int32
	b    int32
	c    uint32
}

func (x *event) before(y *event) bool {
	return x.at < y.at || (x.at == y.at && x.seq < y.seq)
}

// eventHeap is a typed 4-ary min-heap of events (no interface boxing). It
// is not package paths' Heap made generic: a type-parameterised heap calls
// its comparison through the instantiation's dictionary, uninlined, and
// measured about 1.8× slower per pop and push at the engine's heap size.
type eventHeap struct {
	ev []event
}

func (h *eventHeap) len() int { return len(h.ev) }

func (h *eventHeap) push(e event) {
	h.ev = append(h.ev, e)
	ev := h.ev
	i := len(ev) - 1
	for i > 0 {
		p := (i - 1) / 4
		if !e.before(&ev[p]) {
			break
		}
		ev[i] = ev[p]
		i = p
	}
	ev[i] = e
}

// pop removes and returns the earliest event, moving a hole down the tree
// instead of swapping at each level.
func (h *eventHeap) pop() event {
	ev := h.ev
	top := ev[0]
	n := len(ev) - 1
	x := ev[n]
	h.ev = ev[:n]
	if n == 0 {
		return top
	}
	h.down(x)
	return top
}

// replaceTop removes the earliest event and adds e, which must not come
// before it, in one pass down the tree: a pop and a push for the price of a
// pop.
func (h *eventHeap) replaceTop(e event) { h.down(e) }

// down places x by moving the hole at the root down the tree.
func (h *eventHeap) down(x event) {
	ev := h.ev
	n := len(ev)
	i := 0
	for {
		c := 4*i + 1
		if c >= n {
			break
		}
		m := c
		end := min(c+4, n)
		for j := c + 1; j < end; j++ {
			if ev[j].before(&ev[m]) {
				m = j
			}
		}
		if !ev[m].before(&x) {
			break
		}
		ev[i] = ev[m]
		i = m
	}
	ev[i] = x
}

// pktQueue is a growable ring buffer of packet indices.
type pktQueue struct {
	buf  []int32
	head int
	n    int
}

func (q *pktQueue) len() int { return q.n }

func (q *pktQueue) push(p int32) {
	if q.n == len(q.buf) {
		nb := make([]int32, max(8, 2*len(q.buf)))
		for i := 0; i < q.n; i++ {
			nb[i] = q.buf[(q.head+i)%len(q.buf)]
		}
		q.buf, q.head = nb, 0
	}
	q.buf[(q.head+q.n)%len(q.buf)] = p
	q.n++
}

func (q *pktQueue) pop() int32 {
	p := q.buf[q.head]
	q.head++
	if q.head == len(q.buf) {
		q.head = 0
	}
	q.n--
	return p
}
