package sweep

import (
	"context"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"hoplore/experiments"
	"hoplore/results"
)

const testVersion = "test"

// tiny is the small grid in testdata: 32 runs of 6 simulated seconds.
func tiny(t testing.TB) *experiments.Experiment {
	t.Helper()
	e, err := experiments.Load(filepath.Join("..", "testdata", "tiny.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	return e
}

// sweepInto runs e into dir and fails the test on error.
func sweepInto(t testing.TB, e *experiments.Experiment, dir string, opts Options) *Outcome {
	t.Helper()
	opts.Out = dir
	opts.Version = testVersion
	oc, err := Execute(context.Background(), e, opts)
	if err != nil {
		t.Fatalf("sweep into %s: %v", dir, err)
	}
	return oc
}

var (
	localOnce sync.Once
	localDir  string
	localErr  error
)

// local returns a folder holding the uninterrupted, unsharded sweep of tiny
// with one worker: the reference the other tests compare against.
func local(t *testing.T) string {
	t.Helper()
	localOnce.Do(func() {
		localDir, localErr = os.MkdirTemp("", "hoplore-sweep-local-")
		if localErr != nil {
			return
		}
		var e *experiments.Experiment
		if e, localErr = experiments.Load(filepath.Join("..", "testdata", "tiny.yaml")); localErr != nil {
			return
		}
		_, localErr = Execute(context.Background(), e, Options{Out: localDir, Workers: 1, Version: testVersion})
	})
	if localErr != nil {
		t.Fatal(localErr)
	}
	return localDir
}

func TestMain(m *testing.M) {
	flag.Parse()
	code := m.Run()
	if localDir != "" {
		os.RemoveAll(localDir)
	}
	os.Exit(code)
}

func TestWorkersGiveIdenticalTables(t *testing.T) {
	ref := local(t)
	e := tiny(t)
	workers := []int{2, 4}
	if testing.Short() {
		workers = workers[1:]
	}
	for _, w := range workers {
		dir := t.TempDir()
		oc := sweepInto(t, e, dir, Options{Workers: w})
		if !oc.Complete || oc.Ran != 32 || len(oc.Summary) != 16 {
			t.Errorf("workers %d: outcome %+v; want 32 runs, complete, 16 cells", w, oc)
		}
		if err := CompareDirs(ref, dir); err != nil {
			t.Errorf("workers %d against 1: %v", w, err)
		}
	}
}

func TestShardsMergeToLocalSweep(t *testing.T) {
	ref := local(t)
	e := tiny(t)
	base := t.TempDir()
	var dirs []string
	total := 0
	for i := 0; i < 3; i++ {
		dir := filepath.Join(base, fmt.Sprint(i))
		oc := sweepInto(t, e, dir, Options{Workers: 2, Shard: i, Shards: 3})
		if oc.Complete || oc.Runs == 0 || oc.Ran != oc.Runs || oc.Missing != 32-oc.Runs {
			t.Errorf("shard %d/3: outcome %+v; want only its share, not finalized", i, oc)
		}
		if _, err := os.Stat(filepath.Join(dir, results.RunsFile)); err == nil {
			t.Errorf("shard %d/3 wrote runs.parquet though it holds part of the runs", i)
		}
		total += oc.Runs
		dirs = append(dirs, dir)
	}
	if total != 32 {
		t.Errorf("shares hold %d runs, want 32", total)
	}
	out := filepath.Join(base, "merged")
	// Merge in an order other than the shards', to show order does not matter.
	if err := results.Merge(out, []string{dirs[2], dirs[0], dirs[1]}); err != nil {
		t.Fatal(err)
	}
	if err := CompareDirs(ref, out); err != nil {
		t.Errorf("merged shards against a local sweep: %v", err)
	}
	// the optimum per cell and topology state comes with the merge, from
	// the shards' parts (CompareDirs compares it when both folders have it)
	for _, d := range []string{ref, out} {
		if rows, err := results.ReadOptimum(filepath.Join(d, results.OptimumFile)); err != nil || len(rows) != 8 {
			t.Errorf("%s: %d optimum rows, %v; want 8 (one per cell without the agent)", d, len(rows), err)
		}
	}
}

func TestResumeAfterPartialSweep(t *testing.T) {
	ref := local(t)
	e := tiny(t)
	dir := t.TempDir()
	// A shard's worth of runs first, as if a sweep had been killed ...
	first := sweepInto(t, e, dir, Options{Workers: 2, Shard: 1, Shards: 4})
	// ... then the whole sweep into the same folder.
	oc := sweepInto(t, e, dir, Options{Workers: 2})
	if oc.Skipped != first.Ran || oc.Ran != 32-first.Ran || !oc.Complete {
		t.Errorf("resumed: outcome %+v; want %d kept and %d run", oc, first.Ran, 32-first.Ran)
	}
	if err := CompareDirs(ref, dir); err != nil {
		t.Errorf("resumed sweep against an uninterrupted one: %v", err)
	}
	again := sweepInto(t, e, dir, Options{Workers: 2})
	if again.Ran != 0 || again.Skipped != 32 || !again.Complete {
		t.Errorf("rerun of a finished sweep: %+v; want nothing run", again)
	}
}

func TestOtherExperimentRefused(t *testing.T) {
	dir := local(t)
	other, err := experiments.Resolve("single-queue")
	if err != nil {
		t.Fatal(err)
	}
	before, _ := results.ListParts(dir)
	_, err = Execute(context.Background(), other, Options{Out: dir, Workers: 1, Version: testVersion})
	if err == nil || !strings.Contains(err.Error(), "another experiment") {
		t.Fatalf("err = %v, want results of another experiment refused", err)
	}
	after, _ := results.ListParts(dir)
	if len(after) != len(before) {
		t.Errorf("%d parts before, %d after a refused sweep", len(before), len(after))
	}
}

// TestCompareDirs compares two result folders given after -args (used by
// .ci/slurm-test.sh: go test ./sweep -run TestCompareDirs -args A B), or else
// checks that CompareDirs ignores wall_s and catches any other change.
func TestCompareDirs(t *testing.T) {
	if args := flag.Args(); len(args) == 2 {
		if err := CompareDirs(args[0], args[1]); err != nil {
			t.Fatal(err)
		}
		t.Logf("%s and %s hold the same tables (wall_s aside)", args[0], args[1])
		return
	}
	ref := local(t)
	ids, err := results.ListParts(ref)
	if err != nil {
		t.Fatal(err)
	}
	e := tiny(t)
	victim := e.Runs()[5].Dims.RunID
	if !ids[victim] {
		t.Fatalf("reference lacks run %s", victim)
	}
	meta := results.Meta{Version: testVersion, Experiment: e.Name, ExperimentHash: e.Hash}
	order := make([]string, len(e.Runs()))
	for i, r := range e.Runs() {
		order[i] = r.Dims.RunID
	}
	// One copy of the reference whose victim run is rewritten, finalized and
	// compared for each change, then restored.
	dir := t.TempDir()
	if err := results.Merge(dir, []string{ref}); err != nil {
		t.Fatal(err)
	}
	orig, err := results.ReadPart(dir, victim)
	if err != nil {
		t.Fatal(err)
	}
	rewrite := func(change func(*results.RunTables)) error {
		p, err := results.ReadPart(dir, victim)
		if err != nil {
			t.Fatal(err)
		}
		change(p)
		if err := results.WritePart(dir, p); err != nil {
			t.Fatal(err)
		}
		if err := results.Finalize(dir, order, meta); err != nil {
			t.Fatal(err)
		}
		cmpErr := CompareDirs(ref, dir)
		if err := results.WritePart(dir, orig); err != nil {
			t.Fatal(err)
		}
		return cmpErr
	}
	if err := rewrite(func(p *results.RunTables) { p.Run.WallS += 12.5 }); err != nil {
		t.Errorf("a different wall_s: %v; want no difference", err)
	}
	tests := []struct {
		name   string
		change func(*results.RunTables)
		want   string
	}{
		{"runs", func(p *results.RunTables) { p.Run.Delivered++ }, "runs.parquet: row 5 column delivered"},
		{"series", func(p *results.RunTables) { p.Series[2].Generated++ }, "series.parquet"},
		{"links", func(p *results.RunTables) { p.Links[0].Util *= 1.0000001 }, "links.parquet"},
		{"rows", func(p *results.RunTables) { p.Series = p.Series[1:] }, "series.parquet"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := rewrite(tt.change)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("got %v, want a difference in %s", err, tt.want)
			}
		})
	}
}

func ExampleAssign() {
	// Six runs whose estimated costs differ, split into two shares.
	costs := []float64{40, 10, 30, 20, 25, 15}
	for i, share := range Assign(costs, 2) {
		sum := 0.0
		for _, r := range share {
			sum += costs[r]
		}
		fmt.Printf("shard %d/2: runs %v, cost %g\n", i, share, sum)
	}
	// Output:
	// shard 0/2: runs [0 1 3], cost 70
	// shard 1/2: runs [2 4 5], cost 70
}

func ExampleExecute() {
	e, err := experiments.Load("../testdata/tiny.yaml")
	if err != nil {
		panic(err)
	}
	dir, err := os.MkdirTemp("", "hoplore-example-")
	if err != nil {
		panic(err)
	}
	defer os.RemoveAll(dir)
	oc, err := Execute(context.Background(), e, Options{Out: dir, Workers: 2, Quiet: true, Version: "example"})
	if err != nil {
		panic(err)
	}
	fmt.Printf("%s: %d runs, %d run now, complete %v, %d cells\n", e.Name, oc.Runs, oc.Ran, oc.Complete, len(oc.Summary))
	s := oc.Summary[0]
	fmt.Printf("first cell: %s, %s, load %g, %s, %d replicates\n", s.Topology, s.Agent, s.Load, s.Failure, s.Replicates)
	// Output:
	// tiny: 32 runs, 32 run now, complete true, 16 cells
	// first cell: ring, shortest-path, load 0.3, none, 2 replicates
}

func ExampleWriteSummary() {
	rows := []results.SummaryRow{
		// seconds, seconds, fraction, bit/s
		results.NewSummaryRow(results.CellDims{Experiment: "x", Topology: "ring", Agent: "shortest-path", Load: 0.5, Failure: "none"}, 5,
			map[string]float64{
				"delivery_mean_s_mean": 0.0082213, "delivery_mean_s_ci95": 0.0000464,
				"delivery_p95_s_mean": 0.1573, "delivery_p95_s_ci95": 0.05887,
				"loss_rate_mean": 0.000402, "loss_rate_ci95": 0.000238,
				"throughput_bps_mean": 19.4e6, "throughput_bps_ci95": 0.107e6,
			}),
		results.NewSummaryRow(results.CellDims{Experiment: "x", Topology: "ring", Agent: "q-routing", Load: 0.5, Failure: "none"}, 1,
			map[string]float64{"throughput_bps_mean": 0}),
	}
	WriteSummary(os.Stdout, rows)
	// Output:
	// topology  agent          load  failure  reps  delivery mean ms  delivery p95 ms  loss %         throughput Mbit/s
	// ring      shortest-path  0.5   none     5     8.221 ± 0.046     157 ± 59         0.040 ± 0.024  19.40 ± 0.11
	// ring      q-routing      0.5   none     1     –                 –                –              0
}
