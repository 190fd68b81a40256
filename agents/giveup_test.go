package agents_test

import (
	"fmt"
	"testing"

	"hoplore/agents"
	"hoplore/agents/agenttest"
	"hoplore/sim"
)

// A destination that fails: per-node learners without give_up_after keep
// forwarding its packets until the hop limit (their estimates only count up
// in time), which fills queues on the way and costs the reachable traffic
// delay and loss; with it, they drop those packets where the estimates pass
// the bound. When the destination returns, the probes bring its estimates
// back down and its traffic is delivered again. q-routing under objectives
// loss and mix bounds its delivery-time table, which it keeps under every
// objective, and behaves alike.
func TestGiveUpAfterSiteLoss(t *testing.T) {
	type outcome struct {
		hopLimit, reachableLost int64
		mean                    float64
	}
	type config struct {
		kind      string
		objective agents.Objective
	}
	configs := []config{
		{agents.QRoutingKind, agents.Objective{Name: agents.ObjectiveDelay}},
		{agents.QRoutingKind, agents.Objective{Name: agents.ObjectiveLoss}},
		{agents.QRoutingKind, agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: 5}}},
		{agents.QNetworkKind, agents.Objective{}},
	}
	if testing.Short() {
		configs = configs[:1] // q-network takes seconds
	}
	for _, cf := range configs {
		kind := cf.kind
		var got [2]outcome
		for i, bound := range []sim.Time{0, 500 * sim.Millisecond} {
			t.Run(fmt.Sprintf("%s/%s/give_up_after=%v", kind, cf.objective, bound), func(t *testing.T) {
				p := agents.Defaults(kind)
				p.GiveUpAfter = bound
				if cf.objective.Name != "" {
					p.Objective = cf.objective
				}
				sc := agenttest.Scenario{Graph: agenttest.Grid(3, 3), Load: 0.5, Duration: 60 * sim.Second, Warmup: 5 * sim.Second, Seed: 3,
					Failures: sim.Failures{Detection: 50 * sim.Millisecond, Events: []sim.FailureEvent{
						{At: 10 * sim.Second, Node: 8, Element: "n8"},
						{At: 30 * sim.Second, Node: 8, Up: true, Element: "n8"}}}}
				r := agenttest.RunScenario(t, sc, p)
				un := r.DroppedUnreachable()
				got[i] = outcome{r.Unreachable[sim.HopLimit], r.DroppedTotal() - un, r.DeliverySum / float64(r.Delivered)}
				t.Logf("unreachable %d (hop_limit %d, no_route %d, queue_full %d); reachable lost %d; mean delivery %.2f ms",
					un, r.Unreachable[sim.HopLimit], r.Unreachable[sim.NoRouteDrop], r.Unreachable[sim.QueueFull],
					r.DroppedTotal()-un, 1e3*got[i].mean)
				if bound == 0 {
					return
				}
				// back to normal once n8 is up again: the last 20 s lose
				// under 1% (common practice for "no loss" at half load)
				var gen, drop int64
				for _, b := range r.Series {
					if b.Start >= 40*sim.Second {
						gen += b.Generated
						drop += b.Dropped
					}
				}
				if float64(drop) > 0.01*float64(gen) {
					t.Errorf("after the destination returned, %d of %d packets lost", drop, gen)
				}
			})
		}
		// Reachable loss is not compared: giving up also drops reachable
		// packets for a while after the destination returns, until the
		// probes have brought the estimates down (q-network generalises
		// more slowly than a table).
		if !(got[1].hopLimit < got[0].hopLimit && got[1].mean < got[0].mean) {
			t.Errorf("%s %s: give_up_after did not help: without %+v, with %+v", kind, cf.objective, got[0], got[1])
		}
	}
}
