// Package resultstest builds synthetic simulation results for tests of the
// result tables, without running the engine.
package resultstest

import (
	"fmt"

	"hoplore/results"
	"hoplore/sim"
)

// Graph returns a small invented topology: a square of four sites with one
// diagonal, mixed bandwidths and delays.
func Graph() *sim.Graph {
	return &sim.Graph{
		Name: "square",
		Nodes: []sim.Node{
			{Name: "harbour"}, {Name: "mill"}, {Name: "quarry"}, {Name: "orchard"},
		},
		Links: []sim.Link{
			{A: 0, B: 1, Bandwidth: 10e6, Delay: 2 * sim.Millisecond, Buffer: 50},
			{A: 1, B: 2, Bandwidth: 5e6, Delay: 3 * sim.Millisecond, Buffer: 50},
			{A: 2, B: 3, Bandwidth: 10e6, Delay: 1500 * sim.Microsecond, Buffer: 20},
			{A: 3, B: 0, Bandwidth: 2e6, Delay: 4 * sim.Millisecond, Buffer: 20},
			{A: 0, B: 2, Bandwidth: 1e6, Delay: 7 * sim.Millisecond, Buffer: 10},
		},
	}
}

// Net returns the compiled Graph.
func Net() *sim.Net { return sim.Compile(Graph()) }

// Config returns a run configuration on net: 120 s, 20 s warm-up, 10 s bins.
func Config(net *sim.Net) *sim.Config {
	return &sim.Config{Net: net, Duration: 120 * sim.Second, Warmup: 20 * sim.Second, Bin: 10 * sim.Second}
}

// Run returns a hand-filled Result for replicate rep on net. Every value is
// a simple function of rep and the position, so tests can recompute them.
// With empty true nothing is delivered (every statistic of deliveries is
// then undefined); otherwise the series has one bin with traffic but no
// delivery, one with no traffic, a link cut at 60 s restored at 90 s, and
// the 90 s bin has generated packets but none delivered.
func Run(net *sim.Net, rep int, empty bool) *sim.Result {
	r := &sim.Result{Delivery: sim.NewHistogram()}
	r.Generated = 1000 + int64(rep)
	r.Dropped = [sim.NumDropReasons]int64{20 + int64(rep), 15, 5, 1, 2}
	r.InFlight = 7
	if empty {
		r.Dropped = [sim.NumDropReasons]int64{r.Generated - 7, 0, 0, 0, 0}
	} else {
		r.Delivered = r.Generated - r.DroppedTotal() - r.InFlight
		for i := int64(0); i < r.Delivered; i++ {
			v := 0.010 + 0.0001*float64(i%97) + 0.001*float64(rep)
			r.Delivery.Add(v)
			r.DeliverySum += v
			r.DeliveryMax = max(r.DeliveryMax, v)
			r.HopsSum += 1 + i%3
			r.StretchSum += 1 + float64(i%4)/8
			r.DeliveredBits += 8000
		}
	}
	r.ControlPackets = 40 + int64(rep)
	r.ControlBytes = 64 * r.ControlPackets
	r.ControlDropped = 3
	r.RouteChanges = int64(rep)
	r.Events = 123456 + int64(rep)
	r.Channels = make([]sim.ChannelResult, len(net.Channels))
	for i := range r.Channels {
		r.Channels[i] = sim.ChannelResult{
			Util:             0.05*float64(i) + 0.01*float64(rep),
			Packets:          int64(100*i + rep),
			DroppedQueueFull: int64(i % 3),
			DroppedLinkDown:  int64(i % 2),
		}
	}
	r.Channels[2].Down = 30 * sim.Second
	r.Channels[3].Down = 30 * sim.Second
	for b := 0; b < 12; b++ {
		bin := sim.Bin{
			Start:     sim.Time(b) * 10 * sim.Second,
			End:       sim.Time(b+1) * 10 * sim.Second,
			Generated: 100,
			Delivery:  sim.NewHistogram(),
			UtilMax:   0.3 + 0.01*float64(b),
		}
		switch {
		case b == 3: // no traffic at all
			bin.Generated = 0
		case b == 9 || empty: // nothing delivered
			bin.Dropped = bin.Generated
		default:
			bin.Dropped = int64(b % 2)
			if b == 6 || b == 7 {
				bin.Dropped = 30
			}
			bin.Delivered = bin.Generated - bin.Dropped
			for i := int64(0); i < bin.Delivered; i++ {
				v := 0.012 + 0.0002*float64(i%11) + 0.001*float64(rep)
				if b == 6 {
					v *= 3
				}
				bin.Delivery.Add(v)
				bin.DelaySum += v
			}
		}
		r.Series = append(r.Series, bin)
	}
	r.Failures = []sim.FailureEvent{
		{At: 60 * sim.Second, Links: []int{1}, Node: -1, Element: "mill-quarry"},
		{At: 90 * sim.Second, Links: []int{1}, Node: -1, Up: true, Element: "mill-quarry"},
	}
	return r
}

// Dims returns the dimensions of replicate rep of the cell (agent, load).
func Dims(agent string, load float64, rep int) results.Dims {
	return results.Dims{
		Experiment: "square-sweep",
		Topology:   "square",
		Agent:      agent,
		Load:       load,
		Failure:    "cut",
		Replicate:  rep,
		Seed:       1<<63 + uint64(rep)*7919,
		RunID:      fmt.Sprintf("%s/%g/r%d", agent, load, rep),
		Index:      rep,
	}
}
