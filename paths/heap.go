package paths

// Heap is a typed 4-ary min-heap of nodes keyed by float64, ordered by
// (key, node): equal keys pop lowest node first, so the pop order is a pure
// function of the pushes. It holds duplicates (Dijkstra's lazy deletion:
// push again on a decrease, skip stale entries on pop). The zero value is an
// empty heap; its storage is reused after Reset. Push and Pop cost
// O(log₄ n) and allocate only when the heap outgrows its largest size so far.
type Heap struct {
	items []heapItem
}

type heapItem struct {
	key  float64
	node int32
}

func (x heapItem) less(y heapItem) bool {
	return x.key < y.key || (x.key == y.key && x.node < y.node)
}

// Len returns the number of entries.
func (h *Heap) Len() int { return len(h.items) }

// Reset empties the heap, keeping its storage.
func (h *Heap) Reset() { h.items = h.items[:0] }

// Push adds node with key.
func (h *Heap) Push(key float64, node int32) {
	x := heapItem{key, node}
	h.items = append(h.items, x)
	it := h.items
	i := len(it) - 1
	for i > 0 {
		p := (i - 1) / 4
		if !x.less(it[p]) {
			break
		}
		it[i] = it[p]
		i = p
	}
	it[i] = x
}

// Min returns the least entry without removing it. The heap must not be empty.
func (h *Heap) Min() (key float64, node int32) {
	x := h.items[0]
	return x.key, x.node
}

// Pop removes and returns the least entry, moving a hole down the tree
// instead of swapping at each level. The heap must not be empty.
func (h *Heap) Pop() (key float64, node int32) {
	it := h.items
	top := it[0]
	n := len(it) - 1
	x := it[n]
	it = it[:n]
	h.items = it
	if n == 0 {
		return top.key, top.node
	}
	i := 0
	for {
		c := 4*i + 1
		if c >= n {
			break
		}
		m := c
		end := min(c+4, n)
		for j := c + 1; j < end; j++ {
			if it[j].less(it[m]) {
				m = j
			}
		}
		if !it[m].less(x) {
			break
		}
		it[i] = it[m]
		i = m
	}
	it[i] = x
	return top.key, top.node
}
