package results_test

import (
	"math"
	"slices"
	"testing"

	"hoplore/results"
	"hoplore/results/resultstest"
	"hoplore/sim"
)

func fixture(t testing.TB, agent string, load float64, rep int, empty bool) *results.RunTables {
	t.Helper()
	net := resultstest.Net()
	cfg := resultstest.Config(net)
	r := resultstest.Run(net, rep, empty)
	return results.FromRun(resultstest.Dims(agent, load, rep), net, cfg, r, 1.5+float64(rep), "v-test")
}

func approx(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Abs(want)
}

func TestFromRunRun(t *testing.T) {
	tb := fixture(t, "shortest-path", 0.5, 0, false)
	r := tb.Run
	// Hand computation from resultstest.Run(rep 0): generated 1000; drops
	// 20+15+5+1+2 = 43; in flight 7; delivered 950.
	ints := []struct {
		name      string
		got, want int64
	}{
		{"nodes", int64(r.Nodes), 4},
		{"links", int64(r.Links), 5},
		{"generated", r.Generated, 1000},
		{"delivered", r.Delivered, 950},
		{"dropped", r.Dropped, 43},
		{"in_flight", r.InFlight, 7},
		{"dropped_queue_full", r.DroppedQueueFull, 20},
		{"dropped_link_down", r.DroppedLinkDown, 15},
		{"dropped_no_route", r.DroppedNoRoute, 5},
		{"dropped_hop_limit", r.DroppedHopLimit, 1},
		{"dropped_node_down", r.DroppedNodeDown, 2},
		{"control_packets", r.ControlPackets, 40},
		{"control_bytes", r.ControlBytes, 2560},
		{"control_dropped", r.ControlDropped, 3},
		{"route_changes", r.RouteChanges, 0},
		{"failure_events", int64(r.FailureEvents), 2},
		{"events", r.Events, 123456},
		{"conservation", r.Generated, r.Delivered + r.Dropped + r.InFlight},
	}
	for _, c := range ints {
		if c.got != c.want {
			t.Errorf("%s: got %d, want %d", c.name, c.got, c.want)
		}
	}
	// Exact delivery statistics of the values 0.010 + 0.0001·(i mod 97),
	// i = 0..949, recomputed here; hops 1 + i mod 3 sum to 950 + 949 = 1899
	// (316 full cycles of 0+1+2, then 0 and 1).
	var vals []float64
	var sum, mx, stretch float64
	for i := 0; i < 950; i++ {
		v := 0.010 + 0.0001*float64(i%97)
		vals = append(vals, v)
		sum += v
		mx = max(mx, v)
		stretch += 1 + float64(i%4)/8
	}
	slices.Sort(vals)
	floats := []struct {
		name      string
		got       *float64
		want, rel float64
	}{
		{"loss_rate", r.LossRate, 43.0 / 1000, 1e-15},
		{"delivery_mean_s", r.DeliveryMeanS, sum / 950, 1e-15},
		{"delivery_max_s", r.DeliveryMaxS, mx, 0},
		{"hops_mean", r.HopsMean, 1899.0 / 950, 1e-15},
		{"stretch_mean", r.StretchMean, stretch / 950, 1e-15},
		// Histogram percentiles: relative error at most sim.HistRelErr
		// (0.1%), against the ceil(p·n)-th smallest value.
		{"delivery_p50_s", r.DeliveryP50S, vals[475-1], sim.HistRelErr},
		{"delivery_p95_s", r.DeliveryP95S, vals[903-1], sim.HistRelErr},
		{"delivery_p99_s", r.DeliveryP99S, vals[941-1], sim.HistRelErr},
	}
	for _, c := range floats {
		if c.got == nil {
			t.Errorf("%s: got null, want %g", c.name, c.want)
			continue
		}
		if !approx(*c.got, c.want, c.rel) {
			t.Errorf("%s: got %.17g, want %.17g (rel %g)", c.name, *c.got, c.want, c.rel)
		}
	}
	plain := []struct {
		name      string
		got, want float64
	}{
		{"duration_s", r.DurationS, 120},
		{"warmup_s", r.WarmupS, 20},
		{"bin_s", r.BinS, 10},
		// 950 packets of 8000 bits over the 100 s measured window.
		{"throughput_bps", r.ThroughputBps, 950 * 8000 / 100.0},
		// channel utilisations 0.05·i, i = 0..9: mean 0.05·4.5, max 0.45.
		{"util_mean", r.UtilMean, 0.225},
		{"util_max", r.UtilMax, 0.45},
		{"wall_s", r.WallS, 1.5},
	}
	for _, c := range plain {
		if !approx(c.got, c.want, 1e-12) {
			t.Errorf("%s: got %.17g, want %.17g", c.name, c.got, c.want)
		}
	}
	if r.Version != "v-test" || r.RunID != "shortest-path/0.5/r0" || r.Seed != 1<<63 {
		t.Errorf("version/run_id/seed: got %q %q %d", r.Version, r.RunID, r.Seed)
	}
}

func TestFromRunNulls(t *testing.T) {
	r := fixture(t, "q-routing", 1, 2, true).Run
	if r.Delivered != 0 || r.LossRate == nil {
		t.Fatalf("fixture: delivered %d, loss %v", r.Delivered, r.LossRate)
	}
	for name, p := range map[string]*float64{
		"delivery_mean_s": r.DeliveryMeanS, "delivery_p50_s": r.DeliveryP50S,
		"delivery_p95_s": r.DeliveryP95S, "delivery_p99_s": r.DeliveryP99S,
		"delivery_max_s": r.DeliveryMaxS, "hops_mean": r.HopsMean, "stretch_mean": r.StretchMean,
	} {
		if p != nil {
			t.Errorf("%s: got %g, want null (nothing delivered)", name, *p)
		}
	}
	if r.ThroughputBps != 0 {
		t.Errorf("throughput_bps: got %g, want 0", r.ThroughputBps)
	}
}

func TestFromRunSeriesLinks(t *testing.T) {
	tb := fixture(t, "shortest-path", 0.5, 0, false)
	if len(tb.Series) != 12 {
		t.Fatalf("series rows: got %d, want 12", len(tb.Series))
	}
	for i, s := range tb.Series {
		if s.Bin != i || s.TStartS != float64(10*i) || s.TEndS != float64(10*i+10) || s.Dims != tb.Run.Dims {
			t.Errorf("bin %d: got bin %d [%g, %g) dims %+v", i, s.Bin, s.TStartS, s.TEndS, s.Dims)
		}
	}
	if s := tb.Series[3]; s.Generated != 0 || s.LossRate != nil || s.DeliveryMeanS != nil || s.DeliveryP95S != nil {
		t.Errorf("empty bin 3: got %+v, want nulls", s)
	}
	if s := tb.Series[9]; s.Generated != 100 || s.Delivered != 0 || *s.LossRate != 1 || s.DeliveryMeanS != nil {
		t.Errorf("bin 9 with no delivery: got %+v", s)
	}
	// bin 0: 100 packets, 0.012 + 0.0002·(i mod 11), i = 0..99: 9 full
	// cycles (sum of i mod 11 = 55 each) and 0..0 → 9·55 = 495.
	want := (100*0.012 + 0.0002*495) / 100
	if s := tb.Series[0]; !approx(*s.DeliveryMeanS, want, 1e-12) || *s.LossRate != 0 {
		t.Errorf("bin 0: got mean %g loss %g, want %g 0", *s.DeliveryMeanS, *s.LossRate, want)
	}

	if len(tb.Links) != 10 {
		t.Fatalf("links rows: got %d, want 10", len(tb.Links))
	}
	// channel 5 is link 2 (quarry–orchard) in the b→a direction.
	l := tb.Links[5]
	if l.Channel != 5 || l.Link != 2 || l.From != "orchard" || l.To != "quarry" || l.BandwidthBps != 10e6 ||
		l.DelayS != 0.0015 || l.Packets != 500 || l.DroppedQueueFull != 2 || l.DroppedLinkDown != 1 || l.DownS != 0 {
		t.Errorf("channel 5: got %+v", l)
	}
	if tb.Links[2].DownS != 30 || tb.Links[2].From != "mill" || tb.Links[2].To != "quarry" {
		t.Errorf("channel 2: got %+v", tb.Links[2])
	}
	if len(tb.Recoveries) != 2 || tb.Recoveries[0].Action != "down" || tb.Recoveries[1].Action != "up" ||
		tb.Recoveries[0].Element != "mill-quarry" || tb.Recoveries[0].AtS != 60 || tb.Recoveries[1].Event != 1 {
		t.Errorf("recoveries: got %+v", tb.Recoveries)
	}
}

func TestFromRunPanicsOnForeignResult(t *testing.T) {
	defer func() {
		if recover() == nil {
			t.Error("no panic for a result of another net")
		}
	}()
	net := resultstest.Net()
	r := resultstest.Run(net, 0, false)
	r.Channels = r.Channels[:3]
	results.FromRun(results.Dims{RunID: "x"}, net, resultstest.Config(net), r, 0, "")
}
