package results_test

import (
	"math"
	"testing"

	"hoplore/agents"
	"hoplore/results"
	"hoplore/results/resultstest"
	"hoplore/sim"
)

// The settle time, new level and peak are hoplore's own definitions (see
// Recover); every expected value below is worked by hand from them.
func TestSettle(t *testing.T) {
	calm := bin{100, 0, 0.010}
	tests := []struct {
		name     string
		bins     []bin
		at       sim.Time
		settled  bool
		settleS  float64
		newOK    bool
		newD     float64
		ratio    float64
		peak     float64
		recovers bool
	}{
		{
			// Level 10 ms before the event at 100 s. Window bins 10..19 (n =
			// 10), second half 15..19 at 15 ms: D1 = 15 ms, s.d. 0, band ±3.75
			// ms. Backwards from bin 19 all are within it down to bin 11 (16
			// ms); bin 10 (30 ms) is not: settled at bin 11, 110 − 100 = 10 s
			// (≤ the half-way bin 15). delay_ratio 1.5, peak 30 ms; recovery_s
			// never (15 ms > 12.5 ms, the old band): the longer path stays.
			name:    "step to a higher level",
			bins:    cat(rep(calm, 10), []bin{{100, 0, 0.030}, {100, 0, 0.016}}, rep(bin{100, 0, 0.015}, 8)),
			at:      100 * s,
			settled: true, settleS: 10, newOK: true, newD: 0.015, ratio: 1.5, peak: 0.030,
		},
		{
			// The event's own bin already at the new level: settle_s 0 even
			// though the event is 5 s into the bin.
			name:    "immediate",
			bins:    cat(rep(calm, 10), rep(bin{100, 0, 0.020}, 10)),
			at:      105 * s,
			settled: true, settleS: 0, newOK: true, newD: 0.020, ratio: 2, peak: 0.020,
		},
		{
			// Only 5 window bins (< SettleMinBins = 6): no new level, no
			// settle time, but a peak.
			name:  "window too short",
			bins:  cat(rep(calm, 10), rep(bin{100, 0, 0.020}, 5)),
			at:    100 * s,
			peak:  0.020,
			newOK: false,
		},
		{
			// The last bin delivers nothing of what it generated: no in-band
			// run reaches the end, so the settle bin would lie past the
			// half-way bin: not settled; the level (bins 15..19) is 15 ms.
			name:  "not settled",
			bins:  cat(rep(calm, 10), rep(bin{100, 0, 0.015}, 9), []bin{{100, 100, 0}}),
			at:    100 * s,
			newOK: true, newD: 0.015, ratio: 1.5, peak: 0.015,
		},
		{
			// Back at the old level after one slow bin: settles and recovers
			// at bin 11 alike; ratio 1.
			name:    "back to the old level",
			bins:    cat(rep(calm, 10), []bin{{100, 0, 0.050}}, rep(calm, 9)),
			at:      100 * s,
			settled: true, settleS: 10, newOK: true, newD: 0.010, ratio: 1, peak: 0.050, recovers: true,
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := results.Recover(series(tc.bins...), []sim.FailureEvent{down(tc.at)}, 0, 0)
			if got.Settled != tc.settled || got.NewOK != tc.newOK || !got.PeakOK || got.Recovered != tc.recovers {
				t.Fatalf("settled %v, new level %v, peak %v, recovered %v; want %v, %v, true, %v",
					got.Settled, got.NewOK, got.PeakOK, got.Recovered, tc.settled, tc.newOK, tc.recovers)
			}
			if tc.settled && math.Abs(got.SettleS-tc.settleS) > 1e-9 {
				t.Errorf("settle_s %g, want %g", got.SettleS, tc.settleS)
			}
			if math.Abs(got.PeakDeliveryMean-tc.peak) > 1e-12 {
				t.Errorf("peak %g, want %g", got.PeakDeliveryMean, tc.peak)
			}
			if !tc.newOK {
				if _, ok := got.DelayRatio(); ok {
					t.Errorf("a delay ratio without a new level")
				}
				return
			}
			r, ok := got.DelayRatio()
			if math.Abs(got.NewDeliveryMean-tc.newD) > 1e-12 || !ok || math.Abs(r-tc.ratio) > 1e-9 {
				t.Errorf("new level %g, ratio %g (%v); want %g, %g", got.NewDeliveryMean, r, ok, tc.newD, tc.ratio)
			}
		})
	}
}

// Unreachable drops do not keep recovery_s from being reached: a destination
// that failed for good loses 10% of the traffic for ever, yet every
// reachable packet is delivered as fast as before.
func TestRecoverIgnoresUnreachable(t *testing.T) {
	b := series(cat(rep(bin{100, 0, 0.010}, 10), rep(bin{100, 10, 0.010}, 10))...)
	for i := 10; i < 20; i++ {
		b[i].Unreachable = 10
	}
	got := results.Recover(b, []sim.FailureEvent{down(100 * s)}, 0, 0)
	if !got.Recovered || got.RecoveryS != 0 || got.LostPackets != 10 {
		t.Errorf("recovered %v after %g s, lost %d; want true after 0 s, 10 (bin 10)", got.Recovered, got.RecoveryS, got.LostPackets)
	}
	// the same loss counted as reachable never recovers (10% > 1%)
	for i := range b {
		b[i].Unreachable = 0
	}
	if got := results.Recover(b, []sim.FailureEvent{down(100 * s)}, 0, 0); got.Recovered {
		t.Errorf("reachable loss of 10%% recovered")
	}
}

// End to end on a bridge with a longer bypass, link-state routing (worked in
// sim's TestReconnectHandWorked: 16 reachable losses, the last 146.5 ms
// after the cut). Paths a–x–y–b (3 hops) and a–x–p–q–y–b (5 hops), 9 ms a
// hop with no waiting: delivery 27 ms before, 45 ms after, so delay_ratio =
// 5/3 exactly; the cut's own 500 ms bin already delivers at 45 ms only, so
// settle_s = 0, and recovery_s is null (45 ms is above the old band).
func TestRecoveryRowBridgeBypass(t *testing.T) {
	const ms = sim.Millisecond
	link := func(a, b int) sim.Link { return sim.Link{A: a, B: b, Bandwidth: 1e6, Delay: ms, Buffer: 50} }
	g := &sim.Graph{Name: "bridge-bypass", Links: []sim.Link{link(0, 1), link(1, 2), link(2, 3), link(1, 4), link(4, 5), link(5, 2)}}
	for _, n := range []string{"a", "x", "y", "b", "p", "q"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	net := sim.Compile(g)
	p := agents.Defaults(agents.ShortestPathKind)
	p.SPFDelay = 100 * ms
	a, err := agents.New(p, net)
	if err != nil {
		t.Fatal(err)
	}
	rates := make([][]float64, 6)
	for i := range rates {
		rates[i] = make([]float64, 6)
	}
	rates[0][3] = 100
	F := 5*sim.Second + 12500*sim.Microsecond
	cfg := &sim.Config{Net: net, Agent: a, Seed: 1, Duration: 12 * sim.Second, Warmup: sim.Second, Bin: 500 * ms,
		Traffic:  sim.Traffic{Rates: rates, Periodic: true, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
		Failures: sim.Failures{Detection: 50 * ms, Events: []sim.FailureEvent{{At: F, Links: []int{1}, Node: -1, Element: "x-y"}}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	tb := results.FromRun(resultstest.Dims("shortest-path", 0.1, 0), net, cfg, r, 0, "v-test")
	row := tb.Recoveries[0]
	if row.LostReachable != 16 || row.LostUnreachable != 0 || row.LostQueueFull != 0 {
		t.Errorf("lost reachable %d, unreachable %d, queue_full %d; want 16, 0, 0", row.LostReachable, row.LostUnreachable, row.LostQueueFull)
	}
	if math.Abs(row.ReconnectS-0.1465) > 1e-12 {
		t.Errorf("reconnect_s %.15g, want 0.1465", row.ReconnectS)
	}
	if row.SettleS == nil || *row.SettleS != 0 {
		t.Errorf("settle_s %v, want 0", row.SettleS)
	}
	if row.DelayRatio == nil || math.Abs(*row.DelayRatio-5.0/3) > 1e-9 {
		t.Errorf("delay_ratio %v, want 5/3", row.DelayRatio)
	}
	if row.PeakDelayS == nil || math.Abs(*row.PeakDelayS-0.045) > 1e-9 {
		t.Errorf("peak_delay_s %v, want 0.045", row.PeakDelayS)
	}
	if row.RecoveryS != nil {
		t.Errorf("recovery_s %v, want null (never back to 27 ms)", *row.RecoveryS)
	}
	if tb.Run.DroppedUnreachable != 0 || tb.Run.LossRateReachable == nil || *tb.Run.LossRateReachable != *tb.Run.LossRate {
		t.Errorf("dropped_unreachable %d, loss_rate_reachable %v, loss_rate %v", tb.Run.DroppedUnreachable, tb.Run.LossRateReachable, tb.Run.LossRate)
	}
}

// A destination fails for good (triangle a–b–c, a→b and c→a, 1000 B every
// 10 ms at 1 Mbit/s, link-state routing; worked in sim's
// TestReconnectHandWorked): every packet for b from 5.010 s to the end at
// 12 s is unreachable (700, exact), none reachable is lost, and since c→a
// is delivered as before, the reachable traffic has recovered at once:
// recovery_s = 0, where counting b's packets as loss would make it null.
func TestRecoveryRowDestinationDown(t *testing.T) {
	const ms = sim.Millisecond
	link := func(a, b int) sim.Link { return sim.Link{A: a, B: b, Bandwidth: 1e6, Delay: ms, Buffer: 50} }
	g := &sim.Graph{Name: "triangle", Links: []sim.Link{link(0, 1), link(0, 2), link(1, 2)}}
	for _, n := range []string{"a", "b", "c"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	net := sim.Compile(g)
	p := agents.Defaults(agents.ShortestPathKind)
	p.SPFDelay = 100 * ms
	a, err := agents.New(p, net)
	if err != nil {
		t.Fatal(err)
	}
	cfg := &sim.Config{Net: net, Agent: a, Seed: 1, Duration: 12 * sim.Second, Warmup: sim.Second, Bin: 500 * ms,
		Traffic: sim.Traffic{Rates: [][]float64{{0, 100, 0}, {0, 0, 0}, {100, 0, 0}}, Periodic: true, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
		Failures: sim.Failures{Detection: 50 * ms, Events: []sim.FailureEvent{
			{At: 5*sim.Second + 9500*sim.Microsecond, Node: 1, Element: "b"}}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	tb := results.FromRun(resultstest.Dims("shortest-path", 0.1, 0), net, cfg, r, 0, "v-test")
	row := tb.Recoveries[0]
	if row.LostUnreachable != 700 || row.LostReachable != 0 || row.ReconnectS != 0 {
		t.Errorf("lost unreachable %d, reachable %d, reconnect_s %g; want 700, 0, 0", row.LostUnreachable, row.LostReachable, row.ReconnectS)
	}
	if row.RecoveryS == nil || *row.RecoveryS != 0 {
		t.Errorf("recovery_s %v, want 0", row.RecoveryS)
	}
	if tb.Run.DroppedUnreachable != 700 || tb.Run.LossRateReachable == nil || *tb.Run.LossRateReachable != 0 {
		t.Errorf("dropped_unreachable %d, loss_rate_reachable %v; want 700, 0", tb.Run.DroppedUnreachable, tb.Run.LossRateReachable)
	}
}
