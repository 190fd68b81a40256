package sim_test

import (
	"context"
	"errors"
	"testing"

	"hoplore/sim"
)

// bouncer sends every packet to the lowest-index neighbour, so on a line
// a–b–c a packet for c starting at a bounces between a and b for ever.
type bouncer struct{ noRoute bool }

func (b *bouncer) Name() string { return "bouncer" }
func (b *bouncer) Node(v *sim.NodeView) sim.Router {
	return routerFunc(func(p *sim.Packet) int {
		if b.noRoute {
			return sim.NoRoute
		}
		return v.Out()[0]
	})
}

type routerFunc func(p *sim.Packet) int

func (f routerFunc) Route(p *sim.Packet) int { return f(p) }

// Drop reasons: a routing loop ends at the hop limit (default 64: README, The model)
// and a router with no answer drops with no_route; counts are exact.
func TestDropReasons(t *testing.T) {
	net := sim.Compile(lineGraph([]float64{1e9, 1e9}, []sim.Time{sim.Microsecond, sim.Microsecond}, 1000))
	for _, c := range []struct {
		name    string
		agent   *bouncer
		limit   int
		reason  sim.DropReason
		minHops int
	}{
		{"loop", &bouncer{}, 0, sim.HopLimit, 64},
		{"loop, limit 5", &bouncer{}, 5, sim.HopLimit, 5},
		{"no route", &bouncer{noRoute: true}, 0, sim.NoRouteDrop, 0},
	} {
		t.Run(c.name, func(t *testing.T) {
			cfg := &sim.Config{Net: net, Agent: c.agent, Seed: 1, Duration: 10*sim.Second + 450*sim.Millisecond, Warmup: 0, Bin: sim.Second, HopLimit: c.limit,
				Traffic: sim.Traffic{Rates: oneFlow(3, 0, 2, 10), Periodic: true, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 100}}}
			r, err := sim.Run(cfg)
			if err != nil {
				t.Fatal(err)
			}
			checkConservation(t, r)
			if r.Generated == 0 || r.InFlight != 0 || r.Dropped[c.reason] != r.Generated || r.Delivered != 0 {
				t.Errorf("generated %d, dropped %v, delivered %d, in flight %d: want all dropped as %v", r.Generated, r.Dropped, r.Delivered, r.InFlight, c.reason)
			}
			// a packet dropped at the hop limit made exactly limit hops: the
			// channels carried (limit) transmissions per packet
			if c.reason == sim.HopLimit {
				var tx int64
				for _, ch := range r.Channels {
					tx += ch.Packets
				}
				if per := float64(tx) / float64(r.Generated); per < float64(c.minHops)-0.5 || per > float64(c.minHops)+0.5 {
					t.Errorf("%.2f transmissions per packet, want %d", per, c.minHops)
				}
			}
		})
	}
}

// A full queue drops with queue_full, counted on the channel too.
func TestQueueFullCountedPerChannel(t *testing.T) {
	net := sim.Compile(lineGraph([]float64{1e6}, []sim.Time{0}, 2))
	cfg := &sim.Config{Net: net, Agent: shortest(t, net), Seed: 1, Duration: 60 * sim.Second, Warmup: 0, Bin: 10 * sim.Second,
		Traffic: sim.Traffic{Rates: oneFlow(2, 0, 1, 200), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	checkConservation(t, r)
	if r.Dropped[sim.QueueFull] == 0 || r.Dropped[sim.QueueFull] != r.Channels[0].DroppedQueueFull {
		t.Errorf("queue_full %d, on the channel %d", r.Dropped[sim.QueueFull], r.Channels[0].DroppedQueueFull)
	}
	// offered 1.6 × capacity: the channel is busy nearly all the time
	if r.Channels[0].Util < 0.95 {
		t.Errorf("utilisation %.3f at 160%% load", r.Channels[0].Util)
	}
}

// Bad configurations are errors, not panics.
func TestConfigErrors(t *testing.T) {
	net := sim.Compile(lineGraph([]float64{1e6}, []sim.Time{0}, 2))
	base := func() *sim.Config {
		return &sim.Config{Net: net, Agent: shortest(t, net), Duration: 10 * sim.Second, Warmup: sim.Second, Bin: sim.Second,
			Traffic: sim.Traffic{Rates: oneFlow(2, 0, 1, 1), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 100}}}
	}
	for name, mut := range map[string]func(c *sim.Config){
		"warmup after end": func(c *sim.Config) { c.Warmup = 20 * sim.Second },
		"zero bin":         func(c *sim.Config) { c.Bin = 0 },
		"negative rate":    func(c *sim.Config) { c.Traffic.Rates[0][1] = -1 },
		"zero size":        func(c *sim.Config) { c.Traffic.Size.Bytes = 0 },
		"no agent":         func(c *sim.Config) { c.Agent = nil },
		"bad failure link": func(c *sim.Config) { c.Failures.Events = []sim.FailureEvent{{Links: []int{9}, Node: -1}} },
	} {
		c := base()
		mut(c)
		if _, err := sim.Run(c); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}

// A cancelled context stops a run early with the context's error.
func TestRunContextCancel(t *testing.T) {
	net := sim.Compile(lineGraph([]float64{1e6}, []sim.Time{0}, 10))
	cfg := &sim.Config{Net: net, Agent: shortest(t, net), Duration: 1e6 * sim.Second, Bin: 1000 * sim.Second,
		Traffic: sim.Traffic{Rates: oneFlow(2, 0, 1, 50), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 100}}}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := sim.RunContext(ctx, cfg); !errors.Is(err, context.Canceled) {
		t.Errorf("error %v, want context.Canceled", err)
	}
}
