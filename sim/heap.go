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

// eventHeap is a typed 4-ary min-heap of events (no interface boxing).
type eventHeap struct {
	ev []event
}

func (h *eventHeap) len() int { return len(h.ev) }

func (h *eventHeap) push(e event) {
	h.ev = append(h.ev, e)
	i := len(h.ev) - 1
	for i > 0 {
		p := (i - 1) / 4
		if !h.ev[i].before(&h.ev[p]) {
			break
		}
		h.ev[i], h.ev[p] = h.ev[p], h.ev[i]
		i = p
	}
}

func (h *eventHeap) pop() event {
	top := h.ev[0]
	last := len(h.ev) - 1
	h.ev[0] = h.ev[last]
	h.ev = h.ev[:last]
	n := last
	i := 0
	for {
		c := 4*i + 1
		if c >= n {
			break
		}
		m := c
		end := c + 4
		if end > n {
			end = n
		}
		for j := c + 1; j < end; j++ {
			if h.ev[j].before(&h.ev[m]) {
				m = j
			}
		}
		if !h.ev[m].before(&h.ev[i]) {
			break
		}
		h.ev[i], h.ev[m] = h.ev[m], h.ev[i]
		i = m
	}
	return top
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
