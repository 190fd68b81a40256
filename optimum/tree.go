package optimum

// towards computes cheapest paths from every node to destination k under
// channel lengths l (+Inf for absent channels) with the paths package's
// Dijkstra on the reversed channels: afterwards s.dist[v] is the length of a
// cheapest v→k path, s.next[v] its first channel (-1 at k and at nodes that
// cannot reach k), and s.order lists the nodes that reach k, k first, every
// node after the node its next channel leads to. Cost O((N + E) log N);
// allocation-free.
func (s *Solver) towards(k int, l []float64) {
	s.search.To(s.graph, k, l, nil)
	s.dist, s.next = s.search.Dist, s.search.Via
	N := s.net.Nodes
	// Depth of every node in the tree, by walking up to a node of known
	// depth (each node is visited a bounded number of times: O(N)).
	for v := range s.depth {
		s.depth[v] = -1
	}
	s.depth[k] = 0
	maxDepth := int32(0)
	for v := 0; v < N; v++ {
		if s.depth[v] >= 0 || s.next[v] < 0 {
			continue
		}
		stack := s.stack[:0]
		u := v
		for s.depth[u] < 0 && s.next[u] >= 0 {
			stack = append(stack, int32(u))
			u = s.net.Channels[s.next[u]].To
		}
		d := s.depth[u]
		for i := len(stack) - 1; i >= 0; i-- {
			d++
			s.depth[stack[i]] = d
		}
		maxDepth = max(maxDepth, d)
		s.stack = stack[:0]
	}
	// Counting sort by depth, stable in node index.
	cnt := s.count[:maxDepth+2]
	clear(cnt)
	n := 0
	for v := 0; v < N; v++ {
		if d := s.depth[v]; d >= 0 {
			cnt[d+1]++
			n++
		}
	}
	for d := 1; d < len(cnt); d++ {
		cnt[d] += cnt[d-1]
	}
	s.order = s.order[:n]
	for v := 0; v < N; v++ {
		if d := s.depth[v]; d >= 0 {
			s.order[cnt[d]] = v
			cnt[d]++
		}
	}
}

// treeLoads fills s.load with the flow each reached node sends on its next
// channel towards k when node v originates rem[v] packets/s for k, all on the
// tree of the last towards(k, ·). Cost O(N).
func (s *Solver) treeLoads(k int, rem []float64) {
	for _, v := range s.order {
		s.load[v] = rem[v]
	}
	for i := len(s.order) - 1; i > 0; i-- {
		v := s.order[i]
		c := s.next[v]
		s.load[s.net.Channels[c].To] += s.load[v]
	}
}
