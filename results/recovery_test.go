package results_test

import (
	"math"
	"testing"

	"hoplore/results"
	"hoplore/sim"
)

// bin is a compact hand-made time bin: generated, dropped (the rest
// delivered) and the mean delivery time of the delivered ones.
type bin struct {
	gen, drop int64
	mean      float64
}

// series builds 10 s bins from specs.
func series(specs ...bin) []sim.Bin {
	out := make([]sim.Bin, len(specs))
	for i, s := range specs {
		del := s.gen - s.drop
		out[i] = sim.Bin{
			Start: sim.Time(i) * 10 * sim.Second, End: sim.Time(i+1) * 10 * sim.Second,
			Generated: s.gen, Delivered: del, Dropped: s.drop, DelaySum: float64(del) * s.mean,
		}
	}
	return out
}

func rep(b bin, n int) []bin {
	out := make([]bin, n)
	for i := range out {
		out[i] = b
	}
	return out
}

func cat(parts ...[]bin) []bin {
	var out []bin
	for _, p := range parts {
		out = append(out, p...)
	}
	return out
}

func down(at sim.Time) sim.FailureEvent { return sim.FailureEvent{At: at, Node: -1, Element: "x"} }
func up(at sim.Time) sim.FailureEvent {
	return sim.FailureEvent{At: at, Node: -1, Up: true, Element: "x"}
}

const s = sim.Second

// The recovery band is hoplore's own definition (see Recover); every expected
// value below is worked by hand from that definition.
func TestRecover(t *testing.T) {
	calm := bin{100, 0, 0.010}
	warm := bin{100, 50, 1.0} // warm-up bins, far off: must not enter the level
	tests := []struct {
		name      string
		bins      []bin
		events    []sim.FailureEvent
		k         int
		warmup    sim.Time
		recovered bool
		recS      float64
		lost      int64
		pre       bool
		preD      float64
		preL      float64
		maxD      float64
		maxL      float64
		windowEnd sim.Time
	}{
		{
			// Level over bins 2..9 (after the 20 s warm-up): D0 = 10 ms, L0 = 0,
			// s.d. 0, so the band is D ≤ 12.5 ms, loss ≤ 1%. Event at 105 s in
			// bin 10. Bin 10 out (loss 20%), 11 out (loss 5%), 12 in, 13 out
			// (20 ms), 14–16 in (12.4 ≤ 12.5 ms): recovery at bin 14, 140 − 105
			// = 35 s; lost = 20 + 5 + 0 + 0 = 25 (bins 10..13).
			name: "step down then back",
			bins: cat(rep(warm, 2), rep(calm, 8),
				[]bin{{100, 20, 0.030}, {100, 5, 0.011}, {100, 0, 0.012}, {100, 0, 0.020},
					{100, 0, 0.0124}, {100, 1, 0.011}, {100, 0, 0.010}, {100, 7, 0.010}}),
			events: []sim.FailureEvent{down(105 * s)}, warmup: 20 * s,
			recovered: true, recS: 35, lost: 25,
			pre: true, preD: 0.010, preL: 0, maxD: 0.0125, maxL: 0.01, windowEnd: 180 * s,
		},
		{
			// Pre bins (2..9) alternate {100 generated, 10 ms} and {102
			// generated, 2 dropped, 20 ms}: 100 delivered each, so D0 = 15 ms,
			// s.d. = sqrt(8·0.005²/7) = 5.34522 ms, 3 s.d. = 16.0357 ms >
			// 25%·15 ms, maxD = 31.0357 ms. Loss: L0 = 8/808; per-bin rates 0
			// and q = 2/102, s.d. = (q/2)·sqrt(8/7) = 0.0104812, 3 s.d. =
			// 0.0314437 > 1%, maxL = 0.0413447. After the event at 100 s (bin
			// 10 starts there): bin 10 at 30 ms / 4% loss is in, bin 11 (35
			// ms) out, 12–14 in (31 ms ≤ 31.0357 ms) → recovery at bin 12:
			// 120 − 100 = 20 s; lost = 4 + 0 = 4 (bins 10, 11).
			name: "noisy baseline widens the band",
			bins: cat(rep(warm, 2),
				[]bin{{100, 0, 0.010}, {102, 2, 0.020}, {100, 0, 0.010}, {102, 2, 0.020},
					{100, 0, 0.010}, {102, 2, 0.020}, {100, 0, 0.010}, {102, 2, 0.020}},
				[]bin{{100, 4, 0.030}, {100, 0, 0.035}, {100, 4, 0.031}, {100, 0, 0.010}, {100, 2, 0.020}}),
			events: []sim.FailureEvent{up(100 * s)}, warmup: 20 * s,
			recovered: true, recS: 20, lost: 4,
			pre: true, preD: 0.015, preL: 8.0 / 808,
			maxD: 0.015 + 3*math.Sqrt(8*0.005*0.005/7), maxL: 8.0/808 + 3*(1.0/102)*math.Sqrt(8.0/7),
			windowEnd: 150 * s,
		},
		{
			// Same level as the first case; never back within 1% loss: no
			// recovery, lost = every window bin's drops = 10·5 = 50.
			name:   "never recovers",
			bins:   cat(rep(calm, 10), rep(bin{100, 5, 0.010}, 10)),
			events: []sim.FailureEvent{down(100 * s)}, warmup: 0,
			recovered: false, lost: 50,
			pre: true, preD: 0.010, maxD: 0.0125, maxL: 0.01, windowEnd: 200 * s,
		},
		{
			// Down at 105 s, up at 135 s: the first event's window holds only
			// bins ending by 135 s (10, 11, 12); bin 10 is out, so no three
			// bins in a row: no recovery, lost = 20 + 0 + 0.
			name:   "next event cuts the window",
			bins:   cat(rep(calm, 10), []bin{{100, 20, 0.010}}, rep(calm, 9)),
			events: []sim.FailureEvent{down(105 * s), up(135 * s)}, k: 0,
			recovered: false, lost: 20,
			pre: true, preD: 0.010, maxD: 0.0125, maxL: 0.01, windowEnd: 135 * s,
		},
		{
			// The up event at 135 s (bin 13): its level comes only from bins
			// starting at or after the previous event (105 s): bins 11 and 12
			// (10 ms, 20 ms → D0 15 ms, s.d. 7.0711 ms, 3 s.d. 21.2132 ms).
			// Bins 13.. are calm: recovery at bin 13, start 130 s before the
			// event → 0 s; lost = bin 13's 0.
			name:   "level after the previous event",
			bins:   cat(rep(calm, 10), []bin{{100, 20, 0.010}, {100, 0, 0.010}, {100, 0, 0.020}}, rep(calm, 7)),
			events: []sim.FailureEvent{down(105 * s), up(135 * s)}, k: 1,
			recovered: true, recS: 0, lost: 0,
			pre: true, preD: 0.015, preL: 0, maxD: 0.015 + 3*math.Sqrt(2*0.005*0.005), maxL: 0.01, windowEnd: 200 * s,
		},
		{
			// Event at 15 s, inside a 20 s warm-up: no pre bin after the
			// warm-up, so the level falls back to bin 0 (10 ms). Bin 1 holds
			// the event and is in the band, as are 2 and 3: recovery at bin 1,
			// which started 5 s before the event → 0; lost = bin 1's 0.
			name:   "event in the warm-up",
			bins:   rep(calm, 6),
			events: []sim.FailureEvent{down(15 * s)}, warmup: 20 * s,
			recovered: true, recS: 0, lost: 0,
			pre: true, preD: 0.010, maxD: 0.0125, maxL: 0.01, windowEnd: 60 * s,
		},
		{
			// No delivered packet before the event: no level, no recovery;
			// lost still counts the window (bins 2, 3: 0 + 3).
			name:   "no level",
			bins:   []bin{{10, 10, 0}, {10, 10, 0}, {10, 0, 0.01}, {10, 3, 0.01}},
			events: []sim.FailureEvent{down(20 * s)},
			lost:   3, windowEnd: 40 * s,
		},
		{
			// Bins with no traffic count as within the band; a bin with traffic
			// and no delivery does not. Event at 50 s: bin 5 empty (in), bin
			// 6 all dropped (out), 7 empty, 8 and 9 calm → recovery at bin 7:
			// 70 − 50 = 20 s; lost = bins 5, 6: 0 + 100.
			name:      "empty bins",
			bins:      cat(rep(calm, 5), []bin{{0, 0, 0}, {100, 100, 0}, {0, 0, 0}}, rep(calm, 2)),
			events:    []sim.FailureEvent{down(50 * s)},
			recovered: true, recS: 20, lost: 100,
			pre: true, preD: 0.010, maxD: 0.0125, maxL: 0.01, windowEnd: 100 * s,
		},
		{
			// Only PreBins = 10 bins before the event form the level: bins 0..4
			// (2 s delivery) are more than 10 bins back and ignored.
			name:      "level window is ten bins",
			bins:      cat(rep(bin{100, 0, 2}, 5), rep(calm, 10), rep(calm, 3)),
			events:    []sim.FailureEvent{down(150 * s)},
			recovered: true, recS: 0, lost: 0,
			pre: true, preD: 0.010, maxD: 0.0125, maxL: 0.01, windowEnd: 180 * s,
		},
		{
			// The event after the last bin: nothing to measure.
			name:      "event after the series",
			bins:      rep(calm, 3),
			events:    []sim.FailureEvent{down(45 * s)},
			windowEnd: 45 * s,
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := results.Recover(series(tc.bins...), tc.events, tc.k, tc.warmup)
			if got.Recovered != tc.recovered || got.LostPackets != tc.lost || got.PreOK != tc.pre || got.WindowEnd != tc.windowEnd {
				t.Errorf("got recovered %v lost %d pre %v window end %v, want %v %d %v %v",
					got.Recovered, got.LostPackets, got.PreOK, got.WindowEnd, tc.recovered, tc.lost, tc.pre, tc.windowEnd)
			}
			if tc.recovered && math.Abs(got.RecoveryS-tc.recS) > 1e-9 {
				t.Errorf("recovery_s: got %g, want %g", got.RecoveryS, tc.recS)
			}
			if !tc.pre {
				return
			}
			for _, c := range []struct {
				name      string
				got, want float64
			}{
				{"pre delivery", got.PreDeliveryMean, tc.preD},
				{"pre loss", got.PreLossRate, tc.preL},
				{"max delivery", got.MaxDeliveryMean, tc.maxD},
				{"max loss", got.MaxLossRate, tc.maxL},
			} {
				if math.Abs(c.got-c.want) > 1e-12 {
					t.Errorf("%s: got %.15g, want %.15g", c.name, c.got, c.want)
				}
			}
		})
	}
}

func TestRecoveryRows(t *testing.T) {
	// The fixture: 10 s bins over 120 s, 20 s warm-up; link cut at 60 s
	// (bin 6: 30 drops, delivery ×3), up at 90 s. Level for the cut: bins
	// 2..5 with traffic (bin 3 empty): bin 2: 0 drops, bin 4: 0, bin 5: 1 →
	// L0 = 1/300. Bin 6 is out (30% loss), bin 7 too (30%), 8 in; window
	// ends at 90 s (bins 6, 7, 8): no recovery; lost = 30 + 30 + 0 = 60.
	// The up event at 90 s: level from bins 6..8; bin 9 has traffic but no
	// delivery (out), 10 and 11 in, then the series ends: no recovery;
	// lost = 100 + 0 + 1 = 101.
	tb := fixture(t, "shortest-path", 0.5, 0, false)
	r0, r1 := tb.Recoveries[0], tb.Recoveries[1]
	if r0.RecoveryS != nil || r0.LostPackets != 60 || r0.WindowEndS != 90 || *r0.PreLossRate != 1.0/300 {
		t.Errorf("cut: got %+v", r0)
	}
	if r1.RecoveryS != nil || r1.LostPackets != 101 || r1.WindowEndS != 120 || r1.PreDeliveryMeanS == nil {
		t.Errorf("restore: got %+v", r1)
	}
}
