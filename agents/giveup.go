package agents

import "hoplore/sim"

// giveUpField is the per-node learners' give_up_after: off (0) by default,
// which is the published behaviour of forwarding every packet.
func giveUpField() Field {
	return NewField("give_up_after", func(p *Params) *sim.Time { return &p.GiveUpAfter }, 0, nonNegativeTime)
}

// giveUp is one node's state for give_up_after (see Params.GiveUpAfter).
// A node gives up on destination d while its every estimate for d, over the
// channels it believes up, exceeds the bound B: it drops those packets
// (no_route) instead of forwarding them, except one every B (of simulated
// time), which it forwards greedily as a probe so that its estimates learn
// when d is reachable again. Per-node learners hear of a failed destination
// only through rising estimates (counting to infinity in time), so the bound
// is the delivery time beyond which a destination is taken for dead.
type giveUp struct {
	bound     float64    // seconds
	every     sim.Time   // probe interval
	lastProbe []sim.Time // per destination
}

// newGiveUp returns the state for bound b on n destinations, nil when off.
func newGiveUp(b sim.Time, n int) *giveUp {
	if b <= 0 {
		return nil
	}
	g := &giveUp{bound: b.Seconds(), every: b, lastProbe: make([]sim.Time, n)}
	for i := range g.lastProbe {
		g.lastProbe[i] = -b
	}
	return g
}

// drop reports whether a packet for d is to be dropped, given the least
// estimate best (seconds) over usable channels. No allocation.
func (g *giveUp) drop(d int, best float64, now sim.Time) bool {
	if best <= g.bound {
		return false
	}
	if now-g.lastProbe[d] >= g.every {
		g.lastProbe[d] = now
		return false
	}
	return true
}
