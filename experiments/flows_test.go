package experiments

import (
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

// TestBadFlowFiles checks that malformed flow traffic is refused at the
// right FILE:LINE:COL, the flow-size CDF file's own position for its
// faults. The full messages are kept in testdata/badflows.golden.
func TestBadFlowFiles(t *testing.T) {
	tests := []struct {
		file string
		at   string // FILE:LINE:COL prefix; FILE defaults to the bad file
		want string
	}{
		{"pareto-shape", "6:51", "traffic.flows.size.shape: must exceed 1"},
		{"negative-size", "6:106", "traffic.flows.size.classes[1].bytes: must be at least 1 byte, got -5"},
		{"negative-fraction", "6:65", "traffic.flows.size.classes[0].fraction: must be in [0, 1], got -0.1"},
		{"mix-not-one", "6:53", "traffic.flows.size.classes: fractions add up to 0.9, not 1"},
		{"cdf-not-increasing", "testdata/flows/decreasing.csv:3:1", "size cdf: bytes: must increase from line to line (800 after 1000)"},
		{"cdf-not-ending-at-one", "testdata/flows/short.csv:4:8", "size cdf: probability: the last line must reach 1, got 0.95"},
		{"unknown-dist", "6:36", `traffic.flows.size.dist: unknown distribution "weibull"`},
		{"share-and-arrivals", "6:33", "give arrivals (flows per second per source) or share (of each cell's load), not both"},
		{"share-too-big", "6:18", "traffic.flows.share: must be in (0, 1], got 1.5"},
		{"negative-sigma", "6:61", "traffic.flows.size.sigma: must be in [0, 10], got -1"},
		{"unknown-field", "6:65", `unknown field "rate_limt"`},
		{"zero-size", "6:50", "traffic.flows.size.bytes: must be a whole number of bytes, at least 1, got 0"},
		{"negative-sample", "6:34", "traffic.flows.sample: must be in 0..16777216 (flows recorded per run; 0 records none), got -1"},
	}
	files, err := filepath.Glob("testdata/badflows/*.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != len(tests) {
		t.Errorf("testdata/badflows holds %d files, the table %d", len(files), len(tests))
	}
	var golden strings.Builder
	for _, tt := range tests {
		t.Run(tt.file, func(t *testing.T) {
			path := filepath.Join("testdata", "badflows", tt.file+".yaml")
			e, err := Load(path)
			if err == nil {
				t.Fatalf("Load(%s) = %q, want an error", path, e.Name)
			}
			var ye *yamlx.Error
			if !errors.As(err, &ye) {
				t.Fatalf("error %v (%T) is not a *yamlx.Error", err, err)
			}
			prefix := tt.at
			if strings.Count(prefix, ":") == 1 {
				prefix = path + ":" + prefix
			}
			msg := err.Error()
			if !strings.HasPrefix(msg, prefix+": ") {
				t.Errorf("got %q, want prefix %q", msg, prefix+": ")
			}
			if !strings.Contains(msg, tt.want) {
				t.Errorf("got %q, want it to contain %q", msg, tt.want)
			}
			fmt.Fprintf(&golden, "%s\n", msg)
		})
	}
	checkGolden(t, "testdata/badflows.golden", golden.String())
}

// A share of the load goes to flows: the packets and the flows together
// offer the cell's normalised load (sim.NormalisedLoad of their byte rates
// is the load, to rounding), and a run of the file completes flows of
// every class.
func TestFlowShareLoad(t *testing.T) {
	e, err := Load("testdata/flows/mixed.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range e.Runs() {
		cfg, err := r.Config()
		if err != nil {
			t.Fatal(err)
		}
		g := cfg.Traffic.FlowGen
		bytes := make([][]float64, len(cfg.Traffic.Rates))
		for s, row := range cfg.Traffic.Rates {
			bytes[s] = make([]float64, len(row))
			for d, v := range row {
				bytes[s][d] = v*e.Traffic.Size.Mean() + g.Rates[s][d]*g.Size.Mean()
			}
		}
		if got := sim.NormalisedLoad(cfg.Net, bytes, 1); math.Abs(got-r.Dims.Load) > 1e-9 {
			t.Errorf("load %g: packets and flows offer %g", r.Dims.Load, got)
		}
		if got := sim.NormalisedLoad(cfg.Net, g.Rates, g.Size.Mean()); math.Abs(got-0.5*r.Dims.Load) > 1e-9 {
			t.Errorf("load %g: flows alone offer %g, want half", r.Dims.Load, got)
		}
	}
	cfg, err := e.Runs()[len(e.Runs())-1].Config()
	if err != nil {
		t.Fatal(err)
	}
	res, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	f := res.Flows
	if f == nil || f.Classes[sim.Mice].Completed == 0 || f.Classes[sim.Elephant].Started == 0 {
		t.Fatalf("flows %+v", f)
	}
	if f.Classes[sim.Medium].Started != 0 {
		t.Errorf("%d medium flows between 20 kB and 500 kB, but sizes are 10 kB and 1 MB", f.Classes[sim.Medium].Started)
	}
}

// Arrivals are flows per second per source, spread over the destinations
// in the matrix's proportions; the CDF file's points become the size
// distribution.
func TestFlowArrivalsAndCDF(t *testing.T) {
	e, err := Load("testdata/flows/cdf.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r := e.Runs()[0]
	for s, row := range r.FlowRates() {
		var sum float64
		for _, v := range row {
			sum += v
		}
		if math.Abs(sum-5) > 1e-12 {
			t.Errorf("source %d starts %g flows/s, want 5", s, sum)
		}
	}
	want := []sim.CDFPoint{{Bytes: 1000, P: 0.4}, {Bytes: 10000, P: 0.8}, {Bytes: 1e6, P: 0.98}, {Bytes: 2e7, P: 1}}
	got := e.Traffic.FlowGen.Size
	if got.Kind != sim.Empirical || fmt.Sprint(got.CDF) != fmt.Sprint(want) {
		t.Errorf("size %+v, want the CDF %v", got, want)
	}
	if e.Traffic.FlowGen.RateLimit != 5e6 {
		t.Errorf("rate limit %g, want 5e6", e.Traffic.FlowGen.RateLimit)
	}
	if e.Traffic.FlowGen.Sample != DefaultFlowSample {
		t.Errorf("flow sample %d without the field, want the default %d", e.Traffic.FlowGen.Sample, DefaultFlowSample)
	}
}

// traffic.flows.sample reaches the run's flow traffic; 0 is allowed (none).
func TestFlowSampleField(t *testing.T) {
	for _, n := range []int{0, 25} {
		e := mustParse(t, fmt.Sprintf(`name: sampled
duration: 2s
topologies: [ring]
traffic:
  loads: [0.4]
  flows: {arrivals: 5/s, sample: %d, size: {dist: fixed, bytes: 1000}}
agents: [shortest-path]
`, n))
		cfg, err := e.Runs()[0].Config()
		if err != nil {
			t.Fatal(err)
		}
		if got := cfg.Traffic.FlowGen.Sample; got != n {
			t.Errorf("sample: %d gave %d", n, got)
		}
	}
}

// The agents' mean packet size weighs the packets and the flows' packets
// by their rates: a mix of 10 kB flows (7 packets of at most 1500 bytes)
// and 1 MB flows (667 packets) averages 0.9·7 + 0.1·667 = 73 packets of
// 109,000/73 bytes.
func TestFlowMeanPacketBytes(t *testing.T) {
	e, err := Load("testdata/flows/mixed.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r := e.Runs()[0]
	if got := e.Traffic.FlowGen.packetsPerFlow(); math.Abs(got-73) > 1e-9 {
		t.Fatalf("packets per flow %g, want 73", got)
	}
	pr, fr := sumRates(r.Rates()), sumRates(r.FlowRates())*73
	want := (pr*1000 + fr*109_000/73) / (pr + fr)
	if got := r.meanPacketBytes(); math.Abs(got-want) > 1e-9*want || got <= 1000 || got >= 1500 {
		t.Errorf("mean packet bytes %g, want %g", got, want)
	}
	// Their size variability: the fixed 1000-byte packets and the flows'
	// packets at their mean size form a two-point mix (gonum's weighted
	// population variance).
	m, v := stat.PopMeanVariance([]float64{1000, 109_000.0 / 73}, []float64{pr, fr})
	if got := r.packetSizeSCV(); math.Abs(got-v/(m*m)) > 1e-9 || got <= 0 {
		t.Errorf("packet size cs² %g, want %g", got, v/(m*m))
	}
}

// A flow experiment's memory estimate counts the candidate paths of the
// idle-network completion times: every node of the uniform matrix is a
// destination; a packet-only experiment has no such term.
func TestFlowMemoryTerm(t *testing.T) {
	e, err := Load("testdata/flows/mixed.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r := e.Runs()[0]
	n, m := len(r.Topology.Graph.Nodes), len(r.Topology.Net.Channels)
	want := sim.IdleRoutesBytes(n, m, n)
	var found bool
	for _, p := range r.memoryParts() {
		if strings.HasPrefix(p.Setting, "traffic.flows: idle-network paths") {
			found = true
			if p.Bytes != want || !strings.Contains(p.Setting, fmt.Sprintf("towards %d destinations", n)) {
				t.Errorf("%q: %g bytes, want %d destinations, %g bytes", p.Setting, p.Bytes, n, want)
			}
		}
	}
	if !found {
		t.Error("no memory term for the flows' idle-network paths")
	}
	e.Traffic.FlowGen = nil
	for _, p := range e.Runs()[0].memoryParts() {
		if strings.HasPrefix(p.Setting, "traffic.flows") {
			t.Errorf("packet traffic alone: term %q", p.Setting)
		}
	}
}
