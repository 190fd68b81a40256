package experiments

import (
	"errors"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

var update = flag.Bool("update", false, "rewrite golden files")

// TestBadFiles checks that every malformed file in testdata/bad is refused
// with an error at the right FILE:LINE:COL naming the problem. The full
// messages are kept in testdata/bad.golden (go test -update rewrites it).
func TestBadFiles(t *testing.T) {
	tests := []struct {
		file string
		at   string // FILE:LINE:COL prefix; FILE defaults to the bad file
		want string // substring of the message
	}{
		{"unknown-field", "3:1", `unknown field "warmpu"`},
		{"bad-duration", "2:11", `"10 minutes" is not a duration`},
		{"negative-bandwidth", "8:35", "bandwidth: must be positive"},
		{"negative-size", "6:37", "traffic.packet_size.bytes: must be at least 1 byte, got -500"},
		{"negative-load", "6:16", "traffic.loads[1]: must be positive, got -0.2"},
		{"warmup-too-long", "3:9", "warmup: 10s must be shorter than duration 10s"},
		{"missing-topology-file", "5:12", `topologies[1]: file: cannot read "nowhere.yaml": no such file`},
		{"unknown-pair-node", "8:22", `traffic.pairs[1].to: topology "ring" has no node "n99"`},
		{"disconnected-inline", "7:7", `topology "islands" is not connected`},
		{"syntax-error", "4:1", "',' or ']' must be specified"},
		{"zero-replicates", "3:13", "replicates: must be at least 1, got 0"},
		{"unknown-agent-kind", "7:12", `agents[1].kind: unknown agent kind "q-routeing"`},
		{"field-not-for-kind", "6:55", "agents[0].hold_down: not a field of kind shortest-path"},
		{"failure-missing-link", "10:24", `failures[1].events[0].link: topology "ring" has no link n0-n4`},
		{"failure-missing-node", "9:24", `failures[0].events[0].node: topology "ring" has no node "n42"`},
		{"bad-learning-rate", "6:38", "agents[0].learning_rate: must be in (0, 1], got 1.5"},
		{"bad-cost-step", "6:41", "agents[0].cost_step: must be 0 (off) or in (0, 100] hop-equivalents, got -1"},
		{"bad-objective", "6:40", `agents[0].objective: unknown objective "fastest" (known: min-max-util, min-delay, utilisation, delay, loss, {mix: {...}})`},
		{"mix-unknown-term", "6:51", `unknown mix term "jitter" (known: delay, loss, utilisation)`},
		{"mix-negative-weight", "8:29", "loss: weight -2 is negative, want ≥ 0"},
		{"mix-all-zero", "6:40", "mix: needs a weight > 0 on at least one of delay, loss, utilisation"},
		{"mix-not-mapping", "6:40", "mix: is a mapping {delay: W, loss: W, utilisation: W}"},
		{"bad-split", "6:36", `agents[0].split: unknown split "random" (known: flow, packet)`},
		{"bad-epsilon", "6:38", "agents[0].epsilon: must be in (0, 0.5], got 0.7"},
		{"bad-max-shift", "6:40", "agents[0].max_shift: must be in (0, 1], got 0"},
		{"bad-consensus-weight", "9:15", "agents[0].consensus.weight: must be in (0, 1], got 2"},
		{"unknown-matrix", "4:19", `traffic.matrix: unknown matrix "gravitational"`},
		{"unknown-topology", "5:5", `topologies[1]: unknown topology "tworegion"`},
		{"bad-generator-param", "4:25", "topologies[0]: nodes: must be at least 3, got 2"},
		{"zero-bin", "3:6", "bin: must be positive, got 0s"},
		{"event-after-end", "10:14", "failures[0].events[1].at: 12s is outside the run [0s, 10s)"},
		{"unknown-group", "11:25", `failures[0].events[0].group: no group "ducts"`},
		{"mixed-pair-rates", "8:7", "traffic.pairs[1]: give a rate on every pair or on none"},
		{"duplicate-agent", "7:5", "agents[1]: same agent as agents[0] (shortest-path)"},
		{"missing-loads", "5:3", "traffic.loads: required"},
		{"double-down", "10:42", "failures[0].events[1]: link n1-n0 is already down at 3s"},
		{"size-field-for-other-dist", "6:60", "traffic.packet_size.bytes: not a field of dist exponential"},
		{"bad-fraction", "6:36", "traffic.hotspot.fraction: must be in [0, 1], got 1.5"},
		{"empty", "1:1", "name: required"},
		{"duplicate-topology", "5:5", `topologies[1]: topology "small-ring" is listed twice; give one a label:`},
		{"agent-unknown-field", "6:23", `unknown field "learning_rat"`},
		{"consensus-without-every", "6:34", "agents[0].consensus.every: required"},
		{"split-horizon-for-q-network", "6:34", "agents[0].consensus.split_horizon: applies to q-routing only"},
		{"split-horizon-not-bool", "6:61", `"maybe" is not true or false`},
		{"negative-control-delay", "7:20", "agents[0].control_delay: must not be negative"},
		{"unknown-generator-params", "3:33", `topologies[0]: zeta: unknown parameter of ring`},
		{"no-connected-waxman", "3:21", "topologies[0]: no connected waxman graph"},
		{"unknown-hotspot-node", "4:50", `traffic.hotspot.nodes[1]: topology "ring" has no node "n77"`},
		{"huge-ring", "3:20", "topologies[1]: 100000 nodes; at most 8000"},
		{"too-many-replicates", "3:13", "replicates: at most 100000 (runs in all), got 10000000"},
		{"too-many-runs", "3:13", "replicates: 6 cells (topologies × loads × failure schedules × agents) × 20000 replicates = 120000 runs; at most 100000"},
		{"tiny-bin", "3:6", "bin: 1ns makes 100000000000 bins of a 1m40s run; at most 10000000"},
		{"failure-storm", "8:13", "failures[0].random: about 8e+11 failure events per run"},
		{"huge-q-network", "5:25", `agents[1]: on topology "ring(nodes=2000)" its tables would take about 36.9 GB; at most 8 GB`},
		{"bad-topology-file", "testdata/topofiles/broken-topology.yaml:4:15", `unknown node "c"`},
		{"each-unknown-kind", "7:12", `failures[0].each: "edges" is not links, nodes or groups`},
		{"each-until-before-at", "7:34", "failures[0].until: 5s must be after at (5s)"},
		{"within-km-zero", "9:25", "failures[0].groups.zone.within_km: must be positive, got 0"},
		{"geo-group-no-coordinates", "11:33", `failures[0].groups.zone.of: node "n3" of topology "ring" has no coordinates`},
		{"optimum-epsilon", "6:20", "optimum: epsilon: 0.6 is outside (0, 0.5]"},
		{"optimum-compute", "6:20", `"maybe" is not true or false`},
	}
	files, err := filepath.Glob("testdata/bad/*.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != len(tests) {
		t.Errorf("testdata/bad holds %d files, the table %d", len(files), len(tests))
	}
	var golden strings.Builder
	for _, tt := range tests {
		t.Run(tt.file, func(t *testing.T) {
			path := filepath.Join("testdata", "bad", tt.file+".yaml")
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
	checkGolden(t, "testdata/bad.golden", golden.String())
}

func checkGolden(t *testing.T, path, got string) {
	t.Helper()
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if got != string(want) {
		t.Errorf("messages differ from %s (go test -update rewrites it):\ngot:\n%s\nwant:\n%s", path, got, want)
	}
}

// TestExamples checks that every shipped example parses and expands to the
// grid its file describes.
func TestExamples(t *testing.T) {
	tests := []struct {
		file                     string
		topologies, loads, fails int
		agents, replicates       int
	}{
		{"load-sweep", 2, 4, 1, 8, 3},
		{"link-failure", 1, 1, 3, 4, 3},
		{"single-queue", 1, 1, 1, 1, 4},
		{"measured-day", 1, 2, 1, 2, 2},
		{"every-failure", 1, 1, 14 + 10 + 1, 4, 2},
	}
	for _, tt := range tests {
		t.Run(tt.file, func(t *testing.T) {
			e, err := Load(filepath.Join("..", "examples", tt.file+".yaml"))
			if err != nil {
				t.Fatal(err)
			}
			cells := tt.topologies * tt.loads * tt.fails * tt.agents
			if got := e.Cells(); got != cells {
				t.Errorf("Cells() = %d, want %d", got, cells)
			}
			if got := len(e.Runs()); got != cells*tt.replicates {
				t.Errorf("len(Runs()) = %d, want %d", got, cells*tt.replicates)
			}
			ids := map[string]bool{}
			for i, r := range e.Runs() {
				if r.Index != i || r.Dims.Index != i {
					t.Fatalf("run %d has Index %d, Dims.Index %d", i, r.Index, r.Dims.Index)
				}
				if !regexp.MustCompile(`^[0-9a-f]{12}$`).MatchString(r.Dims.RunID) || ids[r.Dims.RunID] {
					t.Fatalf("run %d: run id %q is malformed or repeated", i, r.Dims.RunID)
				}
				ids[r.Dims.RunID] = true
			}
		})
	}
	// load-sweep: 2 topologies × 8 agents × 4 loads × 1 failure = 64 cells, 192 runs.
	e, err := Load("../examples/load-sweep.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if e.Cells() != 64 || len(e.Runs()) != 192 {
		t.Errorf("load-sweep: %d cells, %d runs; want 64, 192", e.Cells(), len(e.Runs()))
	}
}

// TestBundled checks that the bundled experiments parse and that load-sweep
// and link-failure match the shipped examples.
func TestBundled(t *testing.T) {
	want := []string{"demo", "link-failure", "load-sweep", "single-queue"}
	if got := Bundled(); !slices.Equal(got, want) {
		t.Fatalf("Bundled() = %v, want %v", got, want)
	}
	for _, name := range want {
		e, err := Resolve(name)
		if err != nil {
			t.Fatalf("Resolve(%q): %v", name, err)
		}
		if e.Name != name {
			t.Errorf("bundled %s is named %q", name, e.Name)
		}
		if e.Description == "" {
			t.Errorf("bundled %s has no description", name)
		}
		if ex, err := Load(filepath.Join("..", "examples", name+".yaml")); err == nil {
			if len(ex.Runs()) != len(e.Runs()) {
				t.Errorf("bundled %s has %d runs, the example %d", name, len(e.Runs()), len(ex.Runs()))
			}
			for i := range ex.Runs() {
				if ex.Runs()[i].Dims != e.Runs()[i].Dims {
					t.Fatalf("bundled %s run %d: %+v, example %+v", name, i, e.Runs()[i].Dims, ex.Runs()[i].Dims)
				}
			}
		}
	}
	// The demo must stay quick (under two minutes on two cores): at the
	// engine speed measured on it (6.1e6 events per CPU second on a 2-vCPU
	// VM), 2e8 events take about 16 s of wall time on two cores.
	demo, _ := Resolve("demo")
	if ev := demo.EstimateEvents(); ev > 2e8 {
		t.Errorf("demo is estimated at %.3g events, over the 2e8 budget", ev)
	}
	if _, err := Resolve("no-such-experiment"); err == nil || !strings.Contains(err.Error(), "demo, link-failure") {
		t.Errorf("Resolve(unknown) = %v, want an error listing the bundled names", err)
	}
	if _, err := BundledYAML("mesh-10"); err == nil {
		t.Errorf("BundledYAML(mesh-10) succeeded; mesh-10 is a topology, not an experiment")
	}
}

const seedBase = `
name: seeds
duration: 10s
replicates: 3
seed: 99
topologies: [ring, {name: grid, rows: 2, cols: 3}]
traffic: {matrix: uniform, loads: [0.2, 0.6]}
agents:
  - shortest-path
  - {kind: q-routing, explore: 0.1}
failures:
  - none
  - name: cut
    events: [{at: 5s, link: [n0, n1], action: down}]
`

// TestSeedsStable checks that adding cells (a load, an agent, a topology, a
// failure schedule) leaves every existing run's seeds and id unchanged, and
// that agents of one cell and replicate share the run seed.
func TestSeedsStable(t *testing.T) {
	base, err := Parse("seeds.yaml", []byte(seedBase))
	if err != nil {
		t.Fatal(err)
	}
	grown := strings.NewReplacer(
		"loads: [0.2, 0.6]", "loads: [0.2, 0.4, 0.6, 1.0]",
		"  - shortest-path\n", "  - shortest-path\n  - {kind: central-adaptive, every: 1s}\n",
		"topologies: [ring,", "topologies: [torus, ring,",
		"  - none\n", "  - none\n  - {name: flaky, random: {scope: links, mtbf: 5s, mttr: 1s}}\n",
	).Replace(seedBase)
	more, err := Parse("seeds.yaml", []byte(grown))
	if err != nil {
		t.Fatal(err)
	}
	if len(more.Runs()) <= len(base.Runs()) {
		t.Fatalf("grown grid has %d runs, base %d", len(more.Runs()), len(base.Runs()))
	}
	type key struct {
		topo, agent, failure string
		load                 float64
		rep                  int
	}
	k := func(r *Run) key {
		return key{r.Dims.Topology, r.Dims.Agent, r.Dims.Failure, r.Dims.Load, r.Dims.Replicate}
	}
	byKey := map[key]*Run{}
	for _, r := range more.Runs() {
		byKey[k(r)] = r
	}
	for _, r := range base.Runs() {
		m, ok := byKey[k(r)]
		if !ok {
			t.Fatalf("run %+v missing from the grown grid", r.Dims)
		}
		if m.Dims.Seed != r.Dims.Seed || m.Dims.RunID != r.Dims.RunID || m.AgentSeed != r.AgentSeed {
			t.Errorf("run %+v: grown grid has seed %d id %s agent seed %d, base seed %d id %s agent seed %d",
				r.Dims, m.Dims.Seed, m.Dims.RunID, m.AgentSeed, r.Dims.Seed, r.Dims.RunID, r.AgentSeed)
		}
	}
	// Common random numbers: one seed per (topology, load, failure, replicate).
	type cellRep struct {
		topo, failure string
		load          float64
		rep           int
	}
	seeds := map[cellRep]uint64{}
	agentSeeds := map[uint64]bool{}
	distinct := map[uint64]bool{}
	for _, r := range base.Runs() {
		c := cellRep{r.Dims.Topology, r.Dims.Failure, r.Dims.Load, r.Dims.Replicate}
		if s, ok := seeds[c]; ok && s != r.Dims.Seed {
			t.Errorf("%+v: agent %s has seed %d, another agent %d", c, r.Dims.Agent, r.Dims.Seed, s)
		}
		seeds[c] = r.Dims.Seed
		distinct[r.Dims.Seed] = true
		if agentSeeds[r.AgentSeed] {
			t.Errorf("agent seed %d repeats", r.AgentSeed)
		}
		agentSeeds[r.AgentSeed] = true
	}
	if len(distinct) != len(seeds) {
		t.Errorf("%d distinct run seeds for %d (cell, replicate) pairs", len(distinct), len(seeds))
	}
	// The experiment seed moves every run seed.
	other, err := Parse("seeds.yaml", []byte(strings.Replace(seedBase, "seed: 99", "seed: 100", 1)))
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range other.Runs() {
		if r.Dims.Seed == base.Runs()[i].Dims.Seed {
			t.Errorf("run %d keeps seed %d under another experiment seed", i, r.Dims.Seed)
		}
	}
}

// TestConfig checks what Config builds: rates scaled to the requested
// normalised load, failures resolved to indices, absolute rates kept.
func TestConfig(t *testing.T) {
	e, err := Load("../examples/link-failure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range e.Runs() {
		if r.Dims.Failure != "ring-cut" || r.Dims.Replicate != 0 || r.Agent.Kind != "central-adaptive" {
			continue
		}
		cfg, err := r.Config()
		if err != nil {
			t.Fatal(err)
		}
		// Normalised load (README, The model): the busiest channel under hop-count
		// shortest path carries load × its bandwidth.
		got := sim.NormalisedLoad(cfg.Net, cfg.Traffic.Rates, cfg.Traffic.Size.Mean())
		if math.Abs(got-0.6) > 1e-9 {
			t.Errorf("normalised load of the rates = %g, want 0.6", got)
		}
		if cfg.Traffic.Size.Mean() != 0.5*64+0.5*1500 {
			t.Errorf("mean size %g, want 782", cfg.Traffic.Size.Mean())
		}
		if cfg.ControlDelay != 50*sim.Millisecond || cfg.Failures.Detection != DefaultDetection {
			t.Errorf("control delay %v detection %v", cfg.ControlDelay, cfg.Failures.Detection)
		}
		evs := cfg.Failures.Events
		if len(evs) != 2 || evs[0].At != 150*sim.Second || evs[0].Up || !evs[1].Up || evs[0].Element != "c-d" {
			t.Fatalf("events %+v", evs)
		}
		l := cfg.Net.Graph.Links[evs[0].Links[0]]
		if cfg.Net.Name(l.A) != "c" || cfg.Net.Name(l.B) != "d" {
			t.Errorf("event link joins %s and %s, want c and d", cfg.Net.Name(l.A), cfg.Net.Name(l.B))
		}
	}
	q, err := Load("../examples/single-queue.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r := q.Runs()[0]
	cfg, err := r.Config()
	if err != nil {
		t.Fatal(err)
	}
	if cfg.Traffic.Rates[0][1] != 80 || cfg.Traffic.Rates[1][0] != 0 {
		t.Errorf("rates %v, want 80/s from src to dst only", cfg.Traffic.Rates)
	}
	// 80 packets/s × 1250 bytes × 8 bit on a 1 Mbit/s channel: load 0.8.
	if math.Abs(r.Dims.Load-0.8) > 1e-12 {
		t.Errorf("load column %g, want 0.8", r.Dims.Load)
	}
}

// TestRandomFailures checks that random failure schedules alternate down and
// up per element within the run, differ between replicates and are the same
// for every agent of a cell.
func TestRandomFailures(t *testing.T) {
	src := strings.Replace(seedBase, "  - none\n", "  - {name: flaky, random: {scope: links, mtbf: 3s, mttr: 1s}}\n", 1)
	e, err := Parse("random.yaml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	schedules := map[uint64]string{}
	for _, r := range e.Runs() {
		if r.Dims.Failure != "flaky" {
			continue
		}
		f := r.Failures()
		if len(f.Events) == 0 {
			t.Fatalf("run %s: no random events with mtbf 3s over 10s", r.Dims.RunID)
		}
		down := map[int]bool{}
		for _, ev := range f.Events {
			if ev.At <= 0 || ev.At >= e.Duration || len(ev.Links) != 1 {
				t.Fatalf("event %+v outside the run or not one link", ev)
			}
			if down[ev.Links[0]] == !ev.Up {
				t.Fatalf("event %+v repeats the element's state", ev)
			}
			down[ev.Links[0]] = !ev.Up
		}
		s := fmt.Sprint(f.Events)
		if prev, ok := schedules[r.Dims.Seed]; ok && prev != s {
			t.Errorf("agents of one cell see different random failures")
		}
		schedules[r.Dims.Seed] = s
	}
	distinct := map[string]bool{}
	for _, s := range schedules {
		distinct[s] = true
	}
	if len(distinct) < 2 {
		t.Errorf("every replicate draws the same random failures")
	}
}

// TestEstimateEvents compares the estimate with the engine's count on the
// single-queue example: 80 packets/s over one hop for 2000 s. The count of
// packets is Poisson (sd 0.25% of 160000), so 2% is a wide margin for the
// estimate's own error.
func TestEstimateEvents(t *testing.T) {
	e, err := Load("../examples/single-queue.yaml")
	if err != nil {
		t.Fatal(err)
	}
	r := e.Runs()[0]
	cfg, err := r.Config()
	if err != nil {
		t.Fatal(err)
	}
	res, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	got, est := float64(res.Events), r.EstimateEvents()
	if math.Abs(est-got) > 0.02*got {
		t.Errorf("EstimateEvents() = %g, engine processed %g events", est, got)
	}
}

// TestEstimateEventsPerCell: the experiment's estimate, taken once per cell
// and counted per replicate, is the sum of every run's estimate (the
// bundled experiments and the examples, random failures included).
func TestEstimateEventsPerCell(t *testing.T) {
	for _, name := range []string{"demo", "link-failure", "load-sweep", "../examples/every-failure.yaml", "../examples/measured-day.yaml", "../testdata/tiny.yaml"} {
		e, err := Resolve(name)
		if err != nil {
			t.Fatal(err)
		}
		var sum float64
		for _, r := range e.Runs() {
			sum += r.EstimateEvents()
		}
		if got := e.EstimateEvents(); math.Abs(got-sum) > 1e-12*sum {
			t.Errorf("%s: EstimateEvents() = %g, sum over the runs %g", name, got, sum)
		}
	}
}

func FuzzParse(f *testing.F) {
	for _, glob := range []string{"testdata/bad/*.yaml", "../examples/*.yaml"} {
		files, _ := filepath.Glob(glob)
		for _, p := range files {
			data, err := os.ReadFile(p)
			if err != nil {
				f.Fatal(err)
			}
			f.Add(data)
		}
	}
	f.Add([]byte(seedBase))
	big := regexp.MustCompile(`[0-9]{3,}|e[0-9]`)
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) > 4096 || big.Match(data) {
			t.Skip("large sizes cost time, not coverage")
		}
		e, err := Parse("../examples/fuzz.yaml", data)
		if err != nil {
			var ye *yamlx.Error
			if !errors.As(err, &ye) {
				t.Fatalf("error %v (%T) is not a *yamlx.Error", err, err)
			}
			return
		}
		if e.Cells()*e.Replicates > 10000 {
			return
		}
		if got := len(e.Runs()); got != e.Cells()*e.Replicates {
			t.Fatalf("%d runs, want %d", got, e.Cells()*e.Replicates)
		}
	})
}

const features = `
name: features
duration: 50s
topologies:
  - {name: ring, nodes: 5, label: little-ring}
  - inline:
      nodes: [hub, a, b, c]
      links:
        - {a: hub, b: a, bandwidth: 2Mbps}
        - {a: hub, b: b, bandwidth: 2Mbps}
        - {a: hub, b: c, bandwidth: 2Mbps}
        - {a: a, b: b, bandwidth: 1Mbps}
traffic:
  matrix: hotspot
  hotspot: {fraction: 0.8}
  packet_size: {dist: bimodal, small_bytes: 100, large_bytes: 1500, large_fraction: 0.25, redraw: per-hop}
  loads: [0.5]
  flows: 4
hop_limit: 12
agents: [q-routing]
optimum: {epsilon: 0.05}
`

// TestDefaultsAndExtras checks the documented defaults and the optional
// fields: topology labels, unnamed inline topologies, the hotspot's default
// node, size distributions, flows and hop limit.
func TestDefaultsAndExtras(t *testing.T) {
	e, err := Parse("features.yaml", []byte(features))
	if err != nil {
		t.Fatal(err)
	}
	if e.Replicates != DefaultReplicates || e.Seed != DefaultSeed || e.Bin != e.Duration/DefaultBins || e.Warmup != 0 {
		t.Errorf("replicates %d seed %d bin %v warmup %v: not the defaults", e.Replicates, e.Seed, e.Bin, e.Warmup)
	}
	if e.HopLimit != 12 || e.Traffic.Flows != 4 || !e.Traffic.Redraw {
		t.Errorf("hop limit %d flows %d redraw %v", e.HopLimit, e.Traffic.Flows, e.Traffic.Redraw)
	}
	if len(e.Failures) != 1 || e.Failures[0].Name != "none" {
		t.Errorf("failures %v, want [none] by default", e.Failures)
	}
	if e.Optimum != (Optimum{Compute: true, Always: false, Epsilon: 0.05}) {
		t.Errorf("optimum %+v, want computed at epsilon 0.05", e.Optimum)
	}
	if d, _ := Parse("d.yaml", []byte(strings.Replace(features, "optimum: {epsilon: 0.05}\n", "", 1))); d == nil || d.Optimum != (Optimum{Compute: true, Epsilon: 0.01}) {
		t.Errorf("default optimum section wrong: %+v", d)
	}
	if got := []string{e.Topologies[0].Label, e.Topologies[1].Label}; got[0] != "little-ring" || got[1] != "inline-1" {
		t.Errorf("labels %v, want [little-ring inline-1]", got)
	}
	// The hub has 6 Mbit/s attached, more than any other node.
	star := e.Topologies[1]
	if len(star.hot) != 1 || star.Graph.Nodes[star.hot[0]].Name != "hub" {
		t.Errorf("default hot node %v, want hub", star.hot)
	}
	if m := e.Traffic.Size.Mean(); m != 0.75*100+0.25*1500 {
		t.Errorf("mean size %g, want 450", m)
	}
	r := e.Runs()[len(e.Runs())-1]
	cfg, err := r.Config()
	if err != nil {
		t.Fatal(err)
	}
	// From a: 80% of its packets to the hub, the rest split over b and c.
	a, _ := star.Graph.NodeIndex("a")
	hub, _ := star.Graph.NodeIndex("hub")
	row := cfg.Traffic.Rates[a]
	var sum float64
	for _, v := range row {
		sum += v
	}
	if math.Abs(row[hub]/sum-0.8) > 1e-12 {
		t.Errorf("share of a's packets to the hub %g, want 0.8", row[hub]/sum)
	}
	if cfg.HopLimit != 12 || cfg.Traffic.Flows != 4 {
		t.Errorf("config hop limit %d flows %d", cfg.HopLimit, cfg.Traffic.Flows)
	}

	// Pairs with rates and loads: the rates give the shape only.
	pairs := strings.Replace(seedBase, "traffic: {matrix: uniform, loads: [0.2, 0.6]}",
		"traffic:\n  pairs: [{from: n0, to: n2, rate: 10/s}, {from: n1, to: n3, rate: 30/s}]\n  loads: [0.9]", 1)
	pairs = strings.Replace(pairs, "topologies: [ring, {name: grid, rows: 2, cols: 3}]", "topologies: [ring]", 1)
	p, err := Parse("pairs.yaml", []byte(pairs))
	if err != nil {
		t.Fatal(err)
	}
	if p.Traffic.Matrix != "pairs" || p.Traffic.Absolute {
		t.Fatalf("matrix %s absolute %v, want pairs scaled to loads", p.Traffic.Matrix, p.Traffic.Absolute)
	}
	cfg, err = p.Runs()[0].Config()
	if err != nil {
		t.Fatal(err)
	}
	rates := cfg.Traffic.Rates
	if math.Abs(rates[1][3]/rates[0][2]-3) > 1e-12 {
		t.Errorf("rate ratio %g, want 3", rates[1][3]/rates[0][2])
	}
	if got := sim.NormalisedLoad(cfg.Net, rates, cfg.Traffic.Size.Mean()); math.Abs(got-0.9) > 1e-12 {
		t.Errorf("normalised load %g, want 0.9", got)
	}

	// Shared-risk groups resolve to all their links in one event.
	groups := strings.Replace(seedBase, "    events: [{at: 5s, link: [n0, n1], action: down}]",
		"    groups: {duct: [[n0, n1], [n2, n3]]}\n    events: [{at: 5s, group: duct, action: down}]", 1)
	groups = strings.Replace(groups, "topologies: [ring, {name: grid, rows: 2, cols: 3}]", "topologies: [ring]", 1)
	gx, err := Parse("groups.yaml", []byte(groups))
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range gx.Runs() {
		if r.Dims.Failure != "cut" {
			continue
		}
		evs := r.Failures().Events
		if len(evs) != 1 || len(evs[0].Links) != 2 || evs[0].Element != "duct" || evs[0].Node != -1 {
			t.Fatalf("group event %+v, want one event cutting two links", evs)
		}
		break
	}
}

// TestGraphMLTopology checks that a GraphML topology file is read by its
// extension and gives the same grid as its YAML original: the same runs,
// so the same hash although the files differ.
func TestGraphMLTopology(t *testing.T) {
	src, err := os.ReadFile("../examples/link-failure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	yml, err := Parse("../examples/link-failure.yaml", src)
	if err != nil {
		t.Fatal(err)
	}
	gml, err := Parse("../examples/link-failure.yaml", []byte(strings.Replace(string(src), "{file: mesh-10.yaml}", "{file: ../experiments/testdata/topofiles/mesh-10.graphml}", 1)))
	if err != nil {
		t.Fatal(err)
	}
	a, b := yml.Topologies[0].Graph, gml.Topologies[0].Graph
	if fmt.Sprint(a.Nodes) != fmt.Sprint(b.Nodes) || fmt.Sprint(a.Links) != fmt.Sprint(b.Links) {
		t.Errorf("GraphML copy builds another graph:\n%v\n%v", a, b)
	}
	if len(gml.Runs()) != len(yml.Runs()) || gml.Hash != yml.Hash {
		t.Errorf("runs %d vs %d; hashes %s vs %s", len(gml.Runs()), len(yml.Runs()), gml.Hash, yml.Hash)
	}
}
