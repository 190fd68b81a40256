package agents

import "hoplore/sim"

// prefs tracks one node's preferred next hop per destination, to count the
// route changes of a per-node learner: the greedy choice (argmin of the
// node's value estimates over the channels it believes up; exploratory
// choices are not shown to it) for destination d is its preference, the
// first greedy decision for d sets it, and each later greedy decision that
// picks another channel than the previous greedy decision for d is one route
// change, reported with NodeView.CountRouteChanges. A change is therefore
// seen when a packet for d is routed: a preference that flips and flips back
// between two packets for d counts nothing, because no packet took the other
// route.
type prefs []int32

// newPrefs returns preferences for n destinations, none set.
func newPrefs(n int) prefs {
	p := make(prefs, n)
	for i := range p {
		p[i] = -1
	}
	return p
}

// saw records a greedy decision for d that picked Out index k (−1: no usable
// channel, which sets nothing). Cost: O(1), no allocation.
func (p prefs) saw(v *sim.NodeView, d, k int) {
	if k < 0 || p[d] == int32(k) {
		return
	}
	if p[d] >= 0 {
		v.CountRouteChanges(1)
	}
	p[d] = int32(k)
}
