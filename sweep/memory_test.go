package sweep

import (
	"context"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"testing"
	"time"

	"hoplore/experiments"
	"hoplore/results"
)

// The per-run term of the memory estimate (experiments.EstimateMemory) is
// an upper bound within 2× of what a sweep holds per run of its grid before
// and around the runs themselves: the runs' descriptions, the plan with its
// costs and run ids, and one runs row each for the final tables.
func TestPerRunMemoryBound(t *testing.T) {
	n := 20000
	if testing.Short() {
		n = 2000
	}
	b, err := os.ReadFile("../testdata/tiny.yaml")
	if err != nil {
		t.Fatal(err)
	}
	y := strings.Replace(string(b), "replicates: 2", "replicates: "+strconv.Itoa(n/16), 1)
	e, err := experiments.Parse("tiny.yaml", []byte(y))
	if err != nil {
		t.Fatal(err)
	}
	var m0, m1 runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&m0)
	runs := e.Runs()
	units := make([]unit[*results.RunTables], len(runs))
	for i, r := range runs {
		units[i] = &expUnit{r: r}
	}
	p, _, err := makePlan(units, Options{})
	if err != nil {
		t.Fatal(err)
	}
	p.withCosts()
	rows := make([]results.RunRow, len(runs))
	have := make(map[string]bool, len(runs))
	for i, r := range runs {
		rows[i].Dims = results.Dims{Experiment: r.Dims.Experiment, Topology: r.Dims.Topology, Agent: r.Dims.Agent,
			Failure: r.Dims.Failure, RunID: r.Dims.RunID}
		have[r.Dims.RunID] = true
	}
	runtime.GC()
	runtime.ReadMemStats(&m1)
	runtime.KeepAlive(p)
	runtime.KeepAlive(rows)
	runtime.KeepAlive(have)
	per := float64(m1.HeapAlloc-m0.HeapAlloc) / float64(len(runs))
	est := (e.EstimateMemory(1).Parts)
	var perRun float64
	for _, part := range est {
		if strings.HasPrefix(part.Setting, "replicates:") {
			perRun = part.Bytes / experiments.GCFactor / float64(len(runs))
		}
	}
	t.Logf("%d runs: %.0f bytes held per run; estimate %.0f", len(runs), per, perRun)
	if perRun < per || perRun > 2*per {
		t.Errorf("per-run estimate %.0f bytes, measured %.0f: want within [1×, 2×]", perRun, per)
	}
}

// peakHeap runs f while sampling the heap, and returns the largest heap in
// use above what it was before f, bytes. The garbage collector runs often
// meanwhile (GOGC 10), so that the figure is close to the live heap.
func peakHeap(f func()) float64 {
	defer debug.SetGCPercent(debug.SetGCPercent(10))
	runtime.GC()
	var m runtime.MemStats
	runtime.ReadMemStats(&m)
	base := m.HeapAlloc
	done := make(chan struct{})
	peak := make(chan uint64)
	go func() {
		var p uint64
		var s runtime.MemStats
		for {
			runtime.ReadMemStats(&s)
			p = max(p, s.HeapAlloc)
			select {
			case <-done:
				peak <- p
				return
			case <-time.After(2 * time.Millisecond):
			}
		}
	}()
	f()
	close(done)
	return float64(<-peak - base)
}

// A run with many small bins: the bin term of the estimate bounds the heap
// the run actually takes, within 2×.
func TestBinMemoryBound(t *testing.T) {
	y := `name: bins
duration: 100s
warmup: 1s
bin: 1ms
replicates: 1
seed: 1
topologies:
  - inline:
      name: one-link
      nodes: [a, b]
      links:
        - {a: a, b: b, bandwidth: 10Mbps, delay: 1ms, buffer: 10}
traffic:
  matrix: pairs
  pairs:
    - {from: a, to: b, rate: 200/s}
  packet_size: {dist: exponential, mean_bytes: 1000}
agents: [shortest-path]
failures: [none]
`
	e, err := experiments.Parse("bins.yaml", []byte(y))
	if err != nil {
		t.Fatal(err)
	}
	est := e.EstimateMemory(1)
	run := e.Runs()[0]
	got := peakHeap(func() {
		if _, _, err := (&expUnit{r: run}).Execute(context.Background()); err != nil {
			t.Fatal(err)
		}
	})
	want := (est.Total - 30e6) / experiments.GCFactor // live heap; the process allowance is not part of a run
	t.Logf("peak heap of the run %.1f MB, estimate %.1f MB (largest term %q)", got/1e6, want/1e6, est.Largest().Setting)
	if got > want || want > 2*got {
		t.Errorf("estimate %.1f MB, measured %.1f MB: want within [1×, 2×]", want/1e6, got/1e6)
	}
}

// A run with frequent random failures: the failures term of the estimate
// bounds what the failure events add to the run's heap, within 2×.
func TestFailureMemoryBound(t *testing.T) {
	y := func(fail string) string {
		return `name: flaps
duration: 50s
warmup: 1s
bin: 1s
replicates: 1
seed: 1
topologies: [{name: ring, nodes: 8}]
traffic:
  matrix: uniform
  loads: [0.3]
  packet_size: {dist: fixed, bytes: 1000}
agents: [shortest-path]
failures: [` + fail + `]
`
	}
	heap := func(fail string) (float64, experiments.MemoryEstimate) {
		e, err := experiments.Parse("flaps.yaml", []byte(y(fail)))
		if err != nil {
			t.Fatal(err)
		}
		run := e.Runs()[0]
		return peakHeap(func() {
			if _, _, err := (&expUnit{r: run}).Execute(context.Background()); err != nil {
				t.Fatal(err)
			}
		}), e.EstimateMemory(1)
	}
	base, _ := heap("none")
	flapping, est := heap("{name: flaps, random: {scope: links, mtbf: 4ms, mttr: 4ms}}")
	var term float64
	for _, p := range est.Parts {
		if strings.HasPrefix(p.Setting, "failures flaps") {
			term = p.Bytes / experiments.GCFactor
		}
	}
	got := flapping - base
	t.Logf("failure events add %.1f MB to the run's heap; estimated %.1f MB", got/1e6, term/1e6)
	if got > term || term > 2*got {
		t.Errorf("estimate %.1f MB, measured %.1f MB: want within [1×, 2×]", term/1e6, got/1e6)
	}
}

// replayYAML writes, into dir, a replay of periods matrices of 50 demands
// each on a ring of nodes nodes (each period lasts 100 ms of the run) and
// returns the experiment file's path.
func replayYAML(t testing.TB, dir string, nodes, periods int) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("t,source,target,rate_pps\n")
	for k := range periods {
		for j := range 50 {
			s := (k + 7*j) % nodes
			d := (s + 1 + j%(nodes-1)) % nodes
			b.WriteString(strconv.Itoa(k) + "s,n" + strconv.Itoa(s) + ",n" + strconv.Itoa(d) + ",2\n")
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "day.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	y := `name: replay
duration: ` + strconv.Itoa(periods/10) + `s
warmup: 0s
bin: 1s
topologies: [{name: ring, nodes: ` + strconv.Itoa(nodes) + `}]
traffic:
  matrix: {file: day.csv, period: 1s, speedup: 10}
  packet_size: {dist: fixed, bytes: 1000}
agents: [shortest-path]
optimum: {compute: false}
`
	p := filepath.Join(dir, "replay.yaml")
	if err := os.WriteFile(p, []byte(y), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// A traffic-matrix replay is held as dense matrices, once from validation
// on (with the demands as read) and once more by each run: the replay and
// demand terms of the estimate bound the heap that validation keeps, and
// the whole estimate the heap a run takes, each within 2× (100 periods of
// 50 demands on a ring of 150 nodes: about 20 MB a copy).
func TestReplayMemoryBound(t *testing.T) {
	nodes, periods := 150, 100
	path := replayYAML(t, t.TempDir(), nodes, periods)
	// what validation keeps (the topology's tables and the replay)
	var m0, m1 runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&m0)
	e, err := experiments.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	runtime.GC()
	runtime.ReadMemStats(&m1)
	validation := float64(m1.HeapAlloc) - float64(m0.HeapAlloc)
	est := e.EstimateMemory(1)
	var shared, perRun float64
	for _, p := range est.Parts {
		if strings.HasPrefix(p.Setting, "traffic.matrix: a replay of "+strconv.Itoa(periods+1)+" periods") {
			// the shared and the run's terms carry the same name: added
			shared = experiments.ReplayBytes(periods+1, nodes) // the periods and the end
			perRun = p.Bytes/experiments.GCFactor - shared
		}
	}
	if shared == 0 {
		t.Fatalf("no replay term in %+v", est.Parts)
	}
	for _, p := range est.Parts {
		if p.Setting == "traffic.matrix: "+strconv.Itoa(50*periods)+" demands read" {
			shared += p.Bytes / experiments.GCFactor
		}
	}
	run := e.Runs()[0]
	running := peakHeap(func() {
		if _, _, err := (&expUnit{r: run}).Execute(context.Background()); err != nil {
			t.Fatal(err)
		}
	})
	want := (est.Total - 30e6) / experiments.GCFactor // the run and the validation's matrices it finds
	runtime.KeepAlive(e)
	t.Logf("validation keeps %.1f MB (replay term %.1f MB); run %.1f MB (run's replay term %.1f MB, whole estimate but the process %.1f MB)",
		validation/1e6, shared/1e6, running/1e6, perRun/1e6, (want-shared)/1e6)
	if validation > shared || shared > 2*validation {
		t.Errorf("validation: estimate %.1f MB, measured %.1f MB: want within [1×, 2×]", shared/1e6, validation/1e6)
	}
	if running > want-shared || want-shared > 2*running {
		t.Errorf("run: estimate %.1f MB, measured %.1f MB: want within [1×, 2×]", (want-shared)/1e6, running/1e6)
	}
}
