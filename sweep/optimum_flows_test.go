package sweep

import (
	"fmt"
	"math"
	"testing"

	"hoplore/experiments"
)

// flowRing returns the one run of a ring of 6 under uniform demand at load
// 0.6 with the given traffic lines (indented under traffic:).
func flowRing(t *testing.T, traffic string) *experiments.Run {
	t.Helper()
	e, err := experiments.Parse("flows.yaml", []byte(`
name: flows
duration: 2s
topologies: [{name: ring, nodes: 6}]
traffic:
  matrix: uniform
  loads: [0.6]
`+traffic+`
agents: [shortest-path]
`))
	if err != nil {
		t.Fatal(err)
	}
	return e.Runs()[0]
}

// The model optimum counts flow traffic as its mean bit rate. On a ring of
// 6 with uniform demand the least maximum utilisation is 0.75 × the
// normalised load (the 3-hop pairs split evenly over both directions:
// 1 + 2 + 1.5 pair rates on every channel against 6 under shortest path; a
// counting argument, README The model optimum's worked example), whether
// the bytes come as packets or as flows: flows alone (share 1) and half
// flows (share 0.5) of 1500-byte packets give the packet-only values of
// fixed 1500-byte packets at the same load, to the solver's tolerance.
func TestOptimumCountsFlows(t *testing.T) {
	packets := flowRing(t, "  packet_size: {dist: fixed, bytes: 1500}")
	want, err := computeOptimum(packets)
	if err != nil {
		t.Fatal(err)
	}
	eps := packets.Exp.Optimum.Epsilon
	if want.utilMax == nil || *want.utilMax < 0.45*(1-1e-9) || *want.utilMax > 0.45*(1+eps) {
		t.Fatalf("packets alone: opt_util_max %v, want 0.45 within ε", deref(want.utilMax))
	}
	for _, share := range []float64{1, 0.5} {
		r := flowRing(t, fmt.Sprintf("  packet_size: {dist: fixed, bytes: 1500}\n"+
			"  flows: {share: %g, size: {dist: fixed, bytes: 15000}, packet_bytes: 1500}", share))
		got, err := computeOptimum(r)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			name      string
			got, want *float64
		}{
			{"opt_util_max", got.utilMax, want.utilMax},
			{"opt_load_limit", got.loadLimit, want.loadLimit},
			{"opt_delay_mean_s", got.delayMean, want.delayMean},
		} {
			if c.got == nil {
				t.Errorf("share %g: %s null", share, c.name)
				continue
			}
			t.Logf("share %g: %s %.9g, packets alone %.9g", share, c.name, *c.got, *c.want)
			if math.Abs(*c.got-*c.want) > eps**c.want {
				t.Errorf("share %g: %s %v, packets alone %v: want equal within ε %v", share, c.name, *c.got, *c.want, eps)
			}
		}
	}
}

// With flow arrivals the cell's load counts the packets alone; the optimum
// routes the flows' bytes as well: opt_util_max is 0.75 × the busiest
// channel's share of the whole demand under shortest path, that is
// 4.5 pair bit rates over the channel bandwidth (counting argument as
// above), and opt_load_limit 4/3 of the whole traffic's normalised load.
func TestOptimumCountsFlowArrivals(t *testing.T) {
	r := flowRing(t, "  packet_size: {dist: fixed, bytes: 1500}\n"+
		"  flows: {arrivals: 20/s, size: {dist: fixed, bytes: 15000}, packet_bytes: 1500}")
	got, err := computeOptimum(r)
	if err != nil {
		t.Fatal(err)
	}
	c := r.Topology.Net.Channels[0].Bandwidth
	pair := r.Rates()[0][1]*1500*8 + 20.0/5*15000*8 // bit/s of one pair: packets and flows
	want := 4.5 * pair / c
	eps := r.Exp.Optimum.Epsilon
	if got.utilMax == nil || *got.utilMax < want*(1-1e-9) || *got.utilMax > want*(1+eps) {
		t.Errorf("opt_util_max %v, want %v within ε (packets alone would give 0.45)", deref(got.utilMax), want)
	}
	if got.loadLimit == nil || math.Abs(*got.loadLimit-4.0/3) > 4.0/3*eps {
		t.Errorf("opt_load_limit %v, want 4/3 within ε", deref(got.loadLimit))
	}
	if got.utilMax != nil && got.loadLimit != nil {
		t.Logf("opt_util_max %.6g (hand %.6g), opt_load_limit %.6g", *got.utilMax, want, *got.loadLimit)
	}
}

// deref returns *p, NaN for nil (a null column).
func deref(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}
