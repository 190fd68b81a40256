package results

import (
	"fmt"
	"testing"
	"time"

	"hoplore/internal/atomicfile"
)

// synthTables builds run i of a synthetic sweep sized like a typical run: 120
// bins, 40 channels, 2 failure events.
func synthTables(i int) *RunTables {
	d := Dims{Experiment: "bench", Topology: "grid", Agent: fmt.Sprint("agent-", i%4), Load: float64(i%5) / 4,
		Failure: "cut", Replicate: i % 10, Seed: uint64(i) * 2654435761, RunID: fmt.Sprintf("run-%05d", i), Index: i}
	t := &RunTables{Run: RunRow{Dims: d, Nodes: 16, Links: 20, DurationS: 600, WarmupS: 100, Generated: int64(1e5 + i),
		Delivered: 99000, Dropped: 1000, DeliveryMeanS: ptr(0.01 + float64(i)*1e-6), LossRate: ptr(0.01), ThroughputBps: 1e6, WallS: 1}}
	for b := 0; b < 120; b++ {
		t.Series = append(t.Series, SeriesRow{Dims: d, Bin: b, TStartS: float64(5 * b), TEndS: float64(5*b + 5),
			Generated: 800, Delivered: 790, Dropped: 10, DeliveryMeanS: ptr(0.01 + float64(b)*1e-5), UtilMax: 0.5})
	}
	for c := 0; c < 40; c++ {
		t.Links = append(t.Links, LinkRow{Dims: d, Channel: c, Link: c / 2, From: fmt.Sprint("n", c/2), To: fmt.Sprint("n", c/2+1),
			BandwidthBps: 1e7, DelayS: 0.001, Util: float64(c) / 40, Packets: int64(1000 * c)})
	}
	for k := 0; k < 2; k++ {
		t.Recoveries = append(t.Recoveries, RecoveryRow{Dims: d, Event: k, AtS: float64(300 + 100*k), Element: "n3-n4",
			Action: "down", LostPackets: 40, RecoveryS: ptr(5)})
	}
	return t
}

// BenchmarkFinalize assembles the tables of 1000 runs (120 bins and 40
// channels each) from their parts.
func BenchmarkFinalize(b *testing.B) {
	dir := b.TempDir()
	order := make([]string, 1000)
	for i := range order {
		t := synthTables(i)
		if err := writePartNoSync(dir, t); err != nil {
			b.Fatal(err)
		}
		order[i] = t.Run.RunID
	}
	meta := Meta{Version: "bench", Experiment: "bench", ExperimentHash: "h"}
	for _, sync := range []bool{true, false} {
		b.Run(fmt.Sprintf("sync=%v", sync), func(b *testing.B) {
			atomicfile.SkipSync = !sync
			defer func() { atomicfile.SkipSync = false }()
			b.ReportAllocs()
			for b.Loop() {
				if err := Finalize(dir, order, meta); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Seconds())/float64(b.N)/1000*1e6, "µs/run")
			runs, err := ReadRuns(dir + "/" + RunsFile)
			if err != nil || len(runs) != 1000 {
				b.Fatalf("read back %d runs, %v", len(runs), err)
			}
		})
	}
}

// BenchmarkListParts lists a folder of 1000 finished runs, as a resumed
// sweep does before skipping them.
func BenchmarkListParts(b *testing.B) {
	dir := b.TempDir()
	for i := 0; i < 1000; i++ {
		t := &RunTables{Run: RunRow{Dims: Dims{RunID: fmt.Sprintf("run-%05d", i)}}}
		if err := writePartNoSync(dir, t); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportAllocs()
	var n int
	for b.Loop() {
		ids, err := ListParts(dir)
		if err != nil {
			b.Fatal(err)
		}
		n = len(ids)
	}
	if n != 1000 {
		b.Fatalf("listed %d parts, want 1000", n)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/1000, "ns/part")
}

// BenchmarkWritePart stores one typical run durably (every file synced).
func BenchmarkWritePart(b *testing.B) {
	dir := b.TempDir()
	t := synthTables(0)
	b.ReportAllocs()
	start := time.Now()
	for b.Loop() {
		if err := WritePart(dir, t); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(time.Since(start).Seconds()*1e3/float64(b.N), "ms/part")
}

// writePartNoSync writes a benchmark's fixture part without syncing it.
func writePartNoSync(dir string, t *RunTables) error {
	atomicfile.SkipSync = true
	defer func() { atomicfile.SkipSync = false }()
	return WritePart(dir, t)
}

// BenchmarkSummarize summarises 1000 runs (20 cells of 50 runs each) over
// every column the schema marks for summary.
func BenchmarkSummarize(b *testing.B) {
	runs := make([]RunRow, 1000)
	for i := range runs {
		runs[i] = synthTables(i).Run
	}
	b.ReportAllocs()
	var cells int
	for b.Loop() {
		cells = len(Summarize(runs))
	}
	b.ReportMetric(float64(b.Elapsed().Microseconds())/float64(b.N)/float64(len(runs)), "µs/run")
	if cells == 0 {
		b.Fatal("no cells")
	}
}
