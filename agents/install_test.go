package agents_test

import (
	"fmt"
	"testing"

	"hoplore/agents"
	"hoplore/sim"
)

// With install_every, q-routing forwards by a snapshot of its tables taken
// at multiples of the interval, and q-network by the channels installed
// from a snapshot of its parameters at those instants, so its route changes (counted in the bin of
// the instant they happen) fall only in bins that start at an install:
// exactly, with 100 ms bins and installs every 500 ms. The same runs
// without install_every change routes in other bins too, so the check has
// teeth. A 3×3 grid of 10 Mbit/s links at load 0.8 under uniform traffic,
// no failures (a detected failure may still change a route at once). The
// run ends 50 ms before 10 s: an event at the end instant is counted in the
// last bin (start 9.9 s), which would hide an install at 10 s.
func TestInstallEveryChangesOnlyAtInstants(t *testing.T) {
	g := &sim.Graph{Name: "grid3x3"}
	for i := 0; i < 9; i++ {
		g.Nodes = append(g.Nodes, sim.Node{Name: fmt.Sprintf("n%d", i)})
	}
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			v := i*3 + j
			if j < 2 {
				g.Links = append(g.Links, sim.Link{A: v, B: v + 1, Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64})
			}
			if i < 2 {
				g.Links = append(g.Links, sim.Link{A: v, B: v + 3, Bandwidth: 10e6, Delay: sim.Millisecond, Buffer: 64})
			}
		}
	}
	net := sim.Compile(g)
	m := sim.UniformMatrix(net)
	scale := sim.SaturationScale(net, m, 1000) * 0.8
	for s := range m {
		for d := range m[s] {
			m[s][d] *= scale
		}
	}
	const every = 500 * sim.Millisecond
	for _, tc := range []struct {
		kind    string
		install sim.Time
	}{
		{agents.QRoutingKind, every}, {agents.QRoutingKind, 0},
		{agents.QNetworkKind, every}, {agents.QNetworkKind, 0},
	} {
		install := tc.install
		p := agents.Defaults(tc.kind)
		p.InstallEvery = install
		p.Explore = 0
		a, err := agents.New(p, net)
		if err != nil {
			t.Fatal(err)
		}
		r, err := sim.Run(&sim.Config{Net: net, Agent: a, Seed: 5, Duration: 10*sim.Second - 50*sim.Millisecond, Bin: 100 * sim.Millisecond,
			Traffic: sim.Traffic{Rates: m, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}})
		if err != nil {
			t.Fatal(err)
		}
		var at, off int64
		for _, b := range r.Series {
			if b.Start%every == 0 {
				at += b.RouteChanges
			} else {
				off += b.RouteChanges
			}
		}
		switch {
		case install > 0 && (off != 0 || at == 0):
			t.Errorf("%s install_every %v: %d route changes at installs, %d between them; want some and none", tc.kind, install.Seconds(), at, off)
		case install == 0 && off == 0:
			t.Errorf("%s live: no route change outside the install instants (%d at them): the check cannot tell", tc.kind, at)
		}
		t.Logf("%s install_every %gs: %d route changes at multiples of 500 ms, %d elsewhere", tc.kind, install.Seconds(), at, off)
	}
}
