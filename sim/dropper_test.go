package sim_test

import (
	"testing"

	"hoplore/sim"
)

// forwardRight sends every packet to the neighbour of higher index and
// counts, per node, the drops the engine reports on the node's own channels.
type forwardRight struct {
	net  *sim.Net
	seen map[[2]int]int64 // (channel, reason) → reports
	bad  int              // reports about a channel that does not leave the node
}

func (f *forwardRight) Name() string { return "forward-right" }
func (f *forwardRight) Node(v *sim.NodeView) sim.Router {
	return &rightNode{f: f, v: v}
}

type rightNode struct {
	f *forwardRight
	v *sim.NodeView
}

func (r *rightNode) Route(p *sim.Packet) int {
	for _, c := range r.v.Out() {
		if r.f.net.Channels[c].To > r.v.ID() {
			return c
		}
	}
	return sim.NoRoute
}

func (r *rightNode) Dropped(p *sim.Packet, out int, reason sim.DropReason) {
	if r.f.net.Channels[out].From != r.v.ID() {
		r.f.bad++
	}
	r.f.seen[[2]int{out, int(reason)}]++
}

// The engine reports each data packet lost on a channel, refused by its
// full queue or lost on its link, to the channel's sending node and to no
// other: on a line a→b→c at 1.6 times the first link's capacity with a
// 4-packet buffer (queue-full drops at a) and the second link losing 30%
// (link-loss drops at b), the reports equal the per-channel drop counts
// exactly (common practice: a sender knows what it could not send).
func TestDropperSeesOwnChannel(t *testing.T) {
	net := sim.Compile(lineGraph([]float64{1e6, 1e6}, []sim.Time{sim.Millisecond, sim.Millisecond}, 4))
	ag := &forwardRight{net: net, seen: map[[2]int]int64{}}
	r, err := sim.Run(&sim.Config{Net: net, Agent: ag, Seed: 2, Duration: 20 * sim.Second, Bin: sim.Second,
		Traffic:    sim.Traffic{Rates: oneFlow(3, 0, 2, 200), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
		Conditions: []sim.LinkCondition{{Link: 1, Loss: 0.3, SetLoss: true}}})
	if err != nil {
		t.Fatal(err)
	}
	if ag.bad > 0 {
		t.Errorf("%d drops reported to a node about a channel that does not leave it", ag.bad)
	}
	var total int64
	for c, ch := range r.Channels {
		qf, ll := ag.seen[[2]int{c, int(sim.QueueFull)}], ag.seen[[2]int{c, int(sim.LinkLoss)}]
		total += qf + ll
		if qf != ch.DroppedQueueFull || ll != ch.DroppedLinkLoss {
			t.Errorf("channel %d: reported queue_full %d, link_loss %d; counted %d, %d", c, qf, ll, ch.DroppedQueueFull, ch.DroppedLinkLoss)
		}
	}
	if r.Channels[0].DroppedQueueFull == 0 || r.Channels[2].DroppedLinkLoss == 0 {
		t.Errorf("no drops of both kinds (queue_full on a→b %d, link_loss on b→c %d): the scenario tests nothing",
			r.Channels[0].DroppedQueueFull, r.Channels[2].DroppedLinkLoss)
	}
	if total != r.DroppedTotal() {
		t.Errorf("reported %d drops, the run dropped %d", total, r.DroppedTotal())
	}
}
