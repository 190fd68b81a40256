package sweep

import (
	"context"
	"fmt"
	"path/filepath"
	"runtime"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"hoplore/experiments"
	"hoplore/results"
)

// heapPeak samples the in-use heap every few milliseconds until stopped and
// returns its peak in bytes.
func heapPeak() (stop func() uint64) {
	var peak atomic.Uint64
	done := make(chan struct{})
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		var ms runtime.MemStats
		for {
			runtime.ReadMemStats(&ms)
			if ms.HeapInuse > peak.Load() {
				peak.Store(ms.HeapInuse)
			}
			select {
			case <-done:
				return
			case <-time.After(5 * time.Millisecond):
			}
		}
	}()
	return func() uint64 { close(done); wg.Wait(); return peak.Load() }
}

func benchExperiment(b *testing.B) *experiments.Experiment {
	e, err := experiments.Load(filepath.Join("testdata", "bench.yaml"))
	if err != nil {
		b.Fatal(err)
	}
	return e
}

// sweepOnce runs e into a fresh folder and returns the wall time, events
// and peak heap.
func sweepOnce(b *testing.B, e *experiments.Experiment, workers int) (time.Duration, int64, uint64) {
	dir := b.TempDir()
	runtime.GC()
	stop := heapPeak()
	start := time.Now()
	oc, err := Execute(context.Background(), e, Options{Out: dir, Workers: workers, Quiet: true, Version: testVersion})
	wall := time.Since(start)
	peak := stop()
	if err != nil || !oc.Complete {
		b.Fatalf("sweep: %v, %+v", err, oc)
	}
	return wall, oc.Events, peak
}

// BenchmarkSweep runs an eight-run grid with 1 and 2 workers, reporting
// events per second and the peak in-use heap per worker.
func BenchmarkSweep(b *testing.B) {
	e := benchExperiment(b)
	for _, w := range []int{1, 2} {
		b.Run(fmt.Sprintf("workers=%d", w), func(b *testing.B) {
			b.ReportAllocs()
			var wall time.Duration
			var events int64
			var peak uint64
			for i := 0; i < b.N; i++ {
				d, ev, p := sweepOnce(b, e, w)
				wall += d
				events += ev
				peak = max(peak, p)
			}
			b.ReportMetric(float64(events)/wall.Seconds(), "events/s")
			b.ReportMetric(float64(peak)/float64(w)/(1<<20), "peak-heap-MB/worker")
		})
	}
}

// BenchmarkSweepSpeedup reports the wall-time ratio of the same grid on 1
// worker and on 2 (2 at best on two idle cores).
func BenchmarkSweepSpeedup(b *testing.B) {
	e := benchExperiment(b)
	var one, two time.Duration
	for i := 0; i < b.N; i++ {
		d1, _, _ := sweepOnce(b, e, 1)
		d2, _, _ := sweepOnce(b, e, 2)
		b.Logf("1 worker %v, 2 workers %v", d1, d2)
		one += d1
		two += d2
	}
	b.ReportMetric(one.Seconds()/two.Seconds(), "speedup")
}

// stubUnit is a finished run: resuming must never execute it.
type stubUnit struct{ id string }

func (u stubUnit) ID() string    { return u.id }
func (u stubUnit) Cost() float64 { return 1 }
func (u stubUnit) Execute(context.Context) (*results.RunTables, int64, error) {
	panic("sweep: a finished run was executed again")
}

// finishedFolder writes n parts of copies of one real run into a folder and
// returns it with the units naming them.
func finishedFolder(b *testing.B, n int) (string, []unit[*results.RunTables], results.Meta) {
	e := tiny(b)
	r := e.Runs()[0]
	t, err := ExecuteRun(context.Background(), r, testVersion)
	if err != nil {
		b.Fatal(err)
	}
	dir := b.TempDir()
	meta := results.Meta{Version: testVersion, Experiment: "resume-bench", ExperimentHash: "resume-bench"}
	if err := results.MarkDir(dir, meta); err != nil {
		b.Fatal(err)
	}
	units := make([]unit[*results.RunTables], n)
	for i := range units {
		id := fmt.Sprintf("run%04d", i)
		c := *t
		c.Run.RunID, c.Run.Index = id, i
		c.Series = append([]results.SeriesRow(nil), t.Series...)
		c.Links = append([]results.LinkRow(nil), t.Links...)
		c.Recoveries = append([]results.RecoveryRow(nil), t.Recoveries...)
		for j := range c.Series {
			c.Series[j].RunID, c.Series[j].Index = id, i
		}
		for j := range c.Links {
			c.Links[j].RunID, c.Links[j].Index = id, i
		}
		for j := range c.Recoveries {
			c.Recoveries[j].RunID, c.Recoveries[j].Index = id, i
		}
		if err := results.WritePart(dir, &c); err != nil {
			b.Fatal(err)
		}
		units[i] = stubUnit{id}
	}
	return dir, units, meta
}

// noFinalize is the results store without the final assembly of tables.
type noFinalize struct{ *resultsStore }

func (noFinalize) Finalize(string, []string) error { return nil }

// BenchmarkResume reruns a finished sweep of 1,000 runs: "skip" checks the
// folder, lists the parts and skips every run; "finalize" also rewrites the
// tables from the 1,000 parts, as a rerun of `hoplore run` does.
func BenchmarkResume(b *testing.B) {
	const n = 1000
	dir, units, meta := finishedFolder(b, n)
	b.Run("skip", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			p, _, err := makePlan(units, Options{})
			if err != nil {
				b.Fatal(err)
			}
			oc, err := execute(context.Background(), p, noFinalize{&resultsStore{meta: meta}}, engineOpts{out: dir, workers: 2})
			if err != nil || oc.Skipped != n || oc.Ran != 0 {
				b.Fatalf("%v %+v", err, oc)
			}
		}
		b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/rerun")
	})
	b.Run("finalize", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			oc, err := executeTables(context.Background(), meta, units, Options{Out: dir, Workers: 2, Quiet: true}, nil)
			if err != nil || oc.Skipped != n || !oc.Complete {
				b.Fatalf("%v %+v", err, oc)
			}
		}
		b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/rerun")
	})
}
