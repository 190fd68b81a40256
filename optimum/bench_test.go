package optimum_test

import (
	"slices"
	"syscall"
	"testing"
	"time"

	"hoplore/optimum"
)

// benchCases: 50-node topologies with demand on every ordered pair (2,450
// commodities), at normalised loads where the least maximum utilisation is
// moderate and high.
var benchCases = []struct {
	name   string
	topo   string
	params map[string]float64
	load   float64
	fixed  bool // M/D/1 channels in BenchmarkMinDelay
}{
	{"waxman50/load1", "waxman", map[string]float64{"nodes": 50}, 1, false},
	{"waxman50/load2.5", "waxman", map[string]float64{"nodes": 50}, 2.5, false},
	{"torus7x7/load1", "torus", map[string]float64{"rows": 7, "cols": 7}, 1, false},
}

// BenchmarkMinMaxUtil times one least-maximum-utilisation solve at ε = 1%
// (demand set once) and reports the certified gap and the phases run.
func BenchmarkMinMaxUtil(b *testing.B) {
	for _, bc := range benchCases {
		b.Run(bc.name, func(b *testing.B) {
			s := uniformAt(b, bc.topo, bc.params, bc.load)
			b.ReportAllocs()
			var r optimum.MinMax
			cpu := cpuTime()
			for b.Loop() {
				var err error
				if r, err = s.MinMaxUtil(optimum.DefaultEpsilon); err != nil {
					b.Fatal(err)
				}
			}
			if r.Gap > optimum.DefaultEpsilon {
				b.Fatalf("gap %v above ε", r.Gap)
			}
			b.ReportMetric((cpuTime()-cpu).Seconds()/float64(b.N), "cpu-s/op")
			b.ReportMetric(r.Gap, "gap")
			b.ReportMetric(float64(r.Phases), "phases")
			b.ReportMetric(r.Util, "util")
		})
	}
}

// BenchmarkMinDelay times one least-mean-delay solve at ε = 1%, including
// the min–max solve it starts from, and reports the certified gap and the
// flow-deviation iterations: M/M/1 channels on every bench case, and M/D/1
// ones (fixed-size packets, cs² = 0) on the Waxman graph.
func BenchmarkMinDelay(b *testing.B) {
	cases := slices.Clone(benchCases)
	for _, bc := range benchCases[:2] {
		bc.name += "/fixed-size"
		bc.fixed = true
		cases = append(cases, bc)
	}
	for _, bc := range cases {
		b.Run(bc.name, func(b *testing.B) {
			s := uniformAt(b, bc.topo, bc.params, bc.load)
			if bc.fixed {
				if err := s.SetServiceSCV(0); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportAllocs()
			var r optimum.MinDelay
			cpu := cpuTime()
			for b.Loop() {
				var err error
				if r, err = s.MinDelay(optimum.DefaultEpsilon); err != nil {
					b.Fatal(err)
				}
			}
			if !r.Feasible || r.Gap > optimum.DefaultEpsilon {
				b.Fatalf("feasible %v gap %v", r.Feasible, r.Gap)
			}
			b.ReportMetric((cpuTime()-cpu).Seconds()/float64(b.N), "cpu-s/op")
			b.ReportMetric(r.Gap, "gap")
			b.ReportMetric(float64(r.Iterations), "iterations")
			b.ReportMetric(r.Mean*1e3, "mean_ms")
		})
	}
}

// BenchmarkMinMix times one solve of the least expected loss and of a mix
// (delay 1, loss 10, utilisation 1) at ε = 1% and at central-optimal's
// default ε = 5%, including the min–max solve
// it starts from, on the bench cases with the topologies' 64-packet
// buffers and a 1% link loss on every tenth channel, and reports the
// certified gap, the iterations and the terms of the routing found.
func BenchmarkMinMix(b *testing.B) {
	for _, w := range []struct {
		name string
		w    optimum.Weights
		eps  float64
	}{
		{"loss", optimum.Weights{Loss: 1}, optimum.DefaultEpsilon},
		{"mix", optimum.Weights{Delay: 1, Loss: 10, Utilisation: 1}, optimum.DefaultEpsilon},
		{"loss/eps5%", optimum.Weights{Loss: 1}, 0.05},
		{"mix/eps5%", optimum.Weights{Delay: 1, Loss: 10, Utilisation: 1}, 0.05},
	} {
		for _, bc := range benchCases {
			b.Run(w.name+"/"+bc.name, func(b *testing.B) {
				net, dem := uniformNet(b, bc.topo, bc.params, bc.load)
				for c := 0; c < len(net.Channels); c += 10 {
					net.Channels[c].Loss = 0.01
				}
				s, err := optimum.NewSolver(net)
				if err != nil {
					b.Fatal(err)
				}
				if err := s.SetDemand(dem); err != nil {
					b.Fatal(err)
				}
				b.ReportAllocs()
				var r optimum.MixResult
				cpu := cpuTime()
				for b.Loop() {
					if r, err = s.MinMix(w.w, w.eps); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric((cpuTime()-cpu).Seconds()/float64(b.N), "cpu-s/op")
				b.ReportMetric(r.Gap, "gap")
				b.ReportMetric(float64(r.Iterations), "iterations")
				b.ReportMetric(r.LossRate, "loss")
				b.ReportMetric(r.MaxUtil, "util")
				if r.Feasible {
					b.ReportMetric(r.DelayRatio, "delay_ratio")
				}
			})
		}
	}
}

// BenchmarkSplits times turning a min-delay solution into loop-free
// per-destination splits (cycle cancelling included).
func BenchmarkSplits(b *testing.B) {
	s := uniformAt(b, "waxman", map[string]float64{"nodes": 50}, 1)
	if _, err := s.MinDelay(optimum.DefaultEpsilon); err != nil {
		b.Fatal(err)
	}
	var sp optimum.Splits
	s.Splits(&sp)
	b.ReportAllocs()
	for b.Loop() {
		s.Splits(&sp)
	}
	if len(sp.At(1, 0)) == 0 {
		b.Fatal("no next hop")
	}
}

// cpuTime returns the process's user+system CPU time: on a shared machine
// the wall-clock ns/op counts time spent waiting for a core, this does not.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
