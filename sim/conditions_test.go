package sim_test

import (
	"math"
	"testing"

	"hoplore/sim"
)

// A bandwidth step halves the service rate from its time on: before it the
// link is M/D/1 at ρ = 0.4, after it at ρ = 0.8, and the mean sojourn of
// packets generated in each stretch (away from the step) is T = ρ/(2μ(1−ρ))
// + 1/μ (Pollaczek–Khinchine; Kleinrock, Queueing Systems Vol. 1, 1975,
// ch. 5): 0.26667 + 0.8 = 1.06667 ms before, 3.2 + 1.6 = 4.8 ms after.
func TestConditionBandwidthStep(t *testing.T) {
	const bw, bytes, lambda = 10e6, 1000, 500.0
	step := 100 * sim.Second
	mk := func(seed uint64) *sim.Config {
		net := sim.Compile(lineGraph([]float64{bw}, []sim.Time{0}, 1<<30))
		return &sim.Config{Net: net, Agent: shortest(t, net), Seed: seed,
			Duration: 300 * sim.Second, Warmup: 0, Bin: 20 * sim.Second,
			Traffic:    sim.Traffic{Rates: oneFlow(2, 0, 1, lambda), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: bytes}},
			Conditions: []sim.LinkCondition{{At: step, Link: 0, Bandwidth: bw / 2}}}
	}
	window := func(r *sim.Result, from, to sim.Time) float64 {
		var sum float64
		var n int64
		for _, b := range r.Series {
			if b.Start >= from && b.End <= to {
				sum += b.DelaySum
				n += b.Delivered
			}
		}
		return sum / float64(n)
	}
	// Bins next to the step are left out: packets generated just before it
	// are served after it.
	res := runReps(t, mk, func(r *sim.Result) []float64 {
		return []float64{window(r, 20*sim.Second, 80*sim.Second), window(r, 120*sim.Second, 300*sim.Second)}
	})
	md1 := func(bw float64) float64 {
		mu := bw / (8 * bytes)
		rho := lambda / mu
		return rho/(2*mu*(1-rho)) + 1/mu
	}
	// Planned widths from the M/D/1 run lengths (±2% at 95% needs about 14k
	// packets at ρ = 0.5 and 249k at ρ = 0.8): 30k and 90k packets per seed
	// over 10 seeds give 99.9% intervals of about ±1% and ±4%.
	assertWithin(t, "M/D/1 before the step", across(res[0]), md1(bw), 0, 0.03)
	assertWithin(t, "M/D/1 after the step", across(res[1]), md1(bw/2), 0, 0.05)
}

// loss: 0.1 drops each packet that crosses the link with probability 0.1,
// independently: the number lost of n is Binomial(n, 0.1), checked at
// z = 3.29 against its standard deviation √(n·0.1·0.9). Nothing else drops
// (unlimited buffer), and conservation holds.
func TestConditionLoss(t *testing.T) {
	net := sim.Compile(lineGraph([]float64{10e6, 10e6}, []sim.Time{sim.Millisecond, sim.Millisecond}, 1<<30))
	cfg := &sim.Config{Net: net, Agent: shortest(t, net), Seed: 5,
		Duration: 200 * sim.Second, Warmup: 10 * sim.Second, Bin: 10 * sim.Second,
		Traffic:    sim.Traffic{Rates: oneFlow(3, 0, 2, 500), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
		Conditions: []sim.LinkCondition{{At: 0, Link: 1, Loss: 0.1, SetLoss: true}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	checkConservation(t, r)
	// Packets lost are those of the measured window that reached the second
	// link: delivered + lost, less those still in flight.
	n := float64(r.Delivered + r.Dropped[sim.LinkLoss])
	lost := float64(r.Dropped[sim.LinkLoss])
	if tol := 3.29 * math.Sqrt(n*0.1*0.9); math.Abs(lost-0.1*n) > tol {
		t.Errorf("lost %g of %g, want %g ± %.0f", lost, n, 0.1*n, tol)
	}
	if r.DroppedTotal() != r.Dropped[sim.LinkLoss] {
		t.Errorf("drops %v, want link_loss only", r.Dropped)
	}
	// Losses are counted on the channel b→c (channel 2 of link 1).
	if got := r.Channels[2].DroppedLinkLoss; got != r.Dropped[sim.LinkLoss] {
		t.Errorf("channel b→c lost %d, run %d", got, r.Dropped[sim.LinkLoss])
	}
	if sim.LinkLoss.String() != "link_loss" {
		t.Errorf("name %q", sim.LinkLoss.String())
	}
}

// A delay change applies to packets sent after it: at zero load (one
// packet every 10 s) a packet's delivery time is its transmission plus the
// link's delay at the end of its transmission (sum of transmission and
// propagation, common practice).
func TestConditionDelay(t *testing.T) {
	net := sim.Compile(lineGraph([]float64{8e6}, []sim.Time{sim.Millisecond}, 10))
	cfg := &sim.Config{Net: net, Agent: shortest(t, net), Seed: 1,
		Duration: 100 * sim.Second, Warmup: 0, Bin: 50 * sim.Second,
		Traffic:    sim.Traffic{Rates: oneFlow(2, 0, 1, 0.1), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}, Periodic: true},
		Conditions: []sim.LinkCondition{{At: 50 * sim.Second, Link: 0, Delay: 5 * sim.Millisecond, SetDelay: true}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	// 1000 B at 8 Mbit/s = 1 ms; periodic packets at 10, 20, …, 100 s.
	before, after := r.Series[0], r.Series[1]
	if before.Delivered != 4 || math.Abs(before.DeliveryMean()-0.002) > 1e-9 {
		t.Errorf("before: %d delivered, mean %g s, want 4 at 2 ms", before.Delivered, before.DeliveryMean())
	}
	if after.Delivered != 5 || math.Abs(after.DeliveryMean()-0.006) > 1e-9 {
		t.Errorf("after: %d delivered, mean %g s, want 5 at 6 ms", after.Delivered, after.DeliveryMean())
	}
}

// A two-period replay: 0→1 at 200/s for 50 s, then 1→0 at 80/s for 50 s.
// Packets generated in each period and direction are Poisson with mean
// rate × 50 s, checked at z = 3.29 against √mean.
func TestTrafficPeriods(t *testing.T) {
	net := sim.Compile(lineGraph([]float64{10e6}, []sim.Time{0}, 1<<30))
	cfg := &sim.Config{Net: net, Agent: shortest(t, net), Seed: 9,
		Duration: 100 * sim.Second, Warmup: 0, Bin: 50 * sim.Second,
		Traffic: sim.Traffic{Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 500}, Periods: []sim.RatePeriod{
			{At: 0, Rates: oneFlow(2, 0, 1, 200)},
			{At: 50 * sim.Second, Rates: oneFlow(2, 1, 0, 80)},
		}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	checkConservation(t, r)
	for i, want := range []float64{200 * 50, 80 * 50} {
		if got := float64(r.Series[i].Generated); math.Abs(got-want) > 3.29*math.Sqrt(want) {
			t.Errorf("period %d: %g generated, want %g ± %.0f", i, got, want, 3.29*math.Sqrt(want))
		}
	}
	// Direction: channel 0 (0→1) carries only the first period, channel 1
	// only the second; a packet generated near the boundary may still be in
	// flight (at most one per direction at this load and 0.4 ms per packet).
	if d := r.Channels[0].Packets - r.Series[0].Generated; d < -1 || d > 0 {
		t.Errorf("0→1 sent %d, first period generated %d", r.Channels[0].Packets, r.Series[0].Generated)
	}
	if d := r.Channels[1].Packets - r.Series[1].Generated; d < -1 || d > 0 {
		t.Errorf("1→0 sent %d, second period generated %d", r.Channels[1].Packets, r.Series[1].Generated)
	}
}
