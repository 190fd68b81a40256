package results_test

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"sync"
	"testing"

	"github.com/parquet-go/parquet-go"

	"hoplore/results"
)

// The column names the README's Results section lists, in its order; the
// tables may hold more.
var (
	specDims = []string{"experiment", "topology", "agent", "load", "failure", "replicate", "seed", "run_id"}
	specCols = map[string][]string{
		results.RunsFile: append(slices.Clone(specDims), "nodes", "links", "duration_s", "warmup_s",
			"generated", "delivered", "dropped", "in_flight", "dropped_queue_full", "dropped_link_down",
			"dropped_no_route", "dropped_hop_limit", "dropped_node_down", "loss_rate", "delivery_mean_s",
			"delivery_p50_s", "delivery_p95_s", "delivery_p99_s", "delivery_max_s", "hops_mean",
			"stretch_mean", "throughput_bps", "util_mean", "util_max", "control_packets", "control_bytes",
			"events", "wall_s", "version", "route_changes"),
		results.SeriesFile: append(slices.Clone(specDims), "t_start_s", "t_end_s", "generated", "delivered",
			"dropped", "delivery_mean_s", "delivery_p95_s", "util_max"),
		results.LinksFile: append(slices.Clone(specDims), "from", "to", "bandwidth_bps", "delay_s", "util",
			"packets", "dropped_queue_full", "dropped_link_down", "down_s"),
		results.RecoveriesFile: append(slices.Clone(specDims), "at_s", "element", "action", "lost_packets",
			"recovery_s"),
		results.SummaryFile: {"experiment", "topology", "agent", "load", "failure", "replicates",
			"delivery_mean_s_mean", "delivery_mean_s_ci95", "delivery_p95_s_mean", "delivery_p95_s_ci95",
			"loss_rate_mean", "loss_rate_ci95", "throughput_bps_mean", "throughput_bps_ci95"},
	}
	rowTypes = map[string]any{
		results.RunsFile: results.RunRow{}, results.SeriesFile: results.SeriesRow{},
		results.LinksFile: results.LinkRow{}, results.RecoveriesFile: results.RecoveryRow{},
	}
	tableFiles = []string{results.RunsFile, results.SeriesFile, results.LinksFile, results.RecoveriesFile, results.SummaryFile}
)

// Source: README, Results (Parquet): the column names notebooks rely on.
func TestSchemaHasSpecColumns(t *testing.T) {
	for _, file := range tableFiles {
		schema := results.SummarySchema()
		if file != results.SummaryFile {
			schema = parquet.SchemaOf(rowTypes[file])
		}
		var names []string
		for _, f := range schema.Fields() {
			names = append(names, f.Name())
		}
		for _, want := range specCols[file] {
			if !slices.Contains(names, want) {
				t.Errorf("%s: no column %q (have %v)", file, want, names)
			}
		}
		if file == results.SummaryFile {
			for _, no := range []string{"replicate", "seed", "run_id"} {
				if slices.Contains(names, no) {
					t.Errorf("%s: unexpected column %q", file, no)
				}
			}
		}
		// the dimensions lead, in the README's order
		n := 8
		if file == results.SummaryFile {
			n = 5
		}
		if !slices.Equal(names[:n], specCols[file][:n]) {
			t.Errorf("%s: leading columns %v, want %v", file, names[:n], specCols[file][:n])
		}
	}
}

// grid builds the tables of a small sweep: 2 agents × 2 loads × reps.
func grid(t testing.TB, reps int) []*results.RunTables {
	var out []*results.RunTables
	for _, agent := range []string{"shortest-path", "q-routing"} {
		for _, load := range []float64{0.5, 1.2} {
			for r := 0; r < reps; r++ {
				tb := fixture(t, agent, load, r, agent == "q-routing" && load > 1 && r == 0)
				d := tb.Run.Dims
				d.Index = len(out)
				setDims(tb, d)
				out = append(out, tb)
			}
		}
	}
	return out
}

func setDims(tb *results.RunTables, d results.Dims) {
	tb.Run.Dims = d
	for i := range tb.Series {
		tb.Series[i].Dims = d
	}
	for i := range tb.Links {
		tb.Links[i].Dims = d
	}
	for i := range tb.Recoveries {
		tb.Recoveries[i].Dims = d
	}
}

var testMeta = results.Meta{Version: "v-test", Experiment: "square-sweep", ExperimentHash: "abc123"}

func writeAll(t testing.TB, dir string, runs []*results.RunTables, perm []int) {
	t.Helper()
	if err := results.MarkDir(dir, testMeta); err != nil {
		t.Fatal(err)
	}
	for _, i := range perm {
		if err := results.WritePart(dir, runs[i]); err != nil {
			t.Fatal(err)
		}
	}
}

func ids(runs []*results.RunTables) []string {
	var out []string
	for _, r := range runs {
		out = append(out, r.Run.RunID)
	}
	return out
}

func identity(n int) []int {
	p := make([]int, n)
	for i := range p {
		p[i] = i
	}
	return p
}

func TestPartRoundTrip(t *testing.T) {
	dir := t.TempDir()
	runs := grid(t, 2)
	writeAll(t, dir, runs, identity(len(runs)))
	got, err := results.ListParts(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(runs) {
		t.Errorf("ListParts: got %d runs, want %d", len(got), len(runs))
	}
	for _, want := range runs {
		if !got[want.Run.RunID] {
			t.Errorf("ListParts: %q missing", want.Run.RunID)
		}
		back, err := results.ReadPart(dir, want.Run.RunID)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(back, want) {
			t.Errorf("run %s: read back\n%+v\nwant\n%+v", want.Run.RunID, back.Run, want.Run)
		}
	}
}

func TestFinalizeRoundTrip(t *testing.T) {
	dir := t.TempDir()
	runs := grid(t, 3)
	writeAll(t, dir, runs, identity(len(runs)))
	if err := results.Finalize(dir, ids(runs), testMeta); err != nil {
		t.Fatal(err)
	}
	var wantRuns []results.RunRow
	var wantSeries []results.SeriesRow
	var wantLinks []results.LinkRow
	var wantRecs []results.RecoveryRow
	for _, r := range runs {
		wantRuns = append(wantRuns, r.Run)
		wantSeries = append(wantSeries, r.Series...)
		wantLinks = append(wantLinks, r.Links...)
		wantRecs = append(wantRecs, r.Recoveries...)
	}
	check := func(name string, got, want any, err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s: rows differ after the round trip", name)
		}
	}
	gr, err := results.ReadRuns(filepath.Join(dir, results.RunsFile))
	check("runs", gr, wantRuns, err)
	gs, err := results.ReadSeries(filepath.Join(dir, results.SeriesFile))
	check("series", gs, wantSeries, err)
	gl, err := results.ReadLinks(filepath.Join(dir, results.LinksFile))
	check("links", gl, wantLinks, err)
	gc, err := results.ReadRecoveries(filepath.Join(dir, results.RecoveriesFile))
	check("recoveries", gc, wantRecs, err)
	gm, err := results.ReadSummary(filepath.Join(dir, results.SummaryFile))
	check("summary", gm, results.Summarize(wantRuns), err)
	if len(gm) != 4 || gm[0].Replicates != 3 {
		t.Errorf("summary: got %d cells, first with %d replicates; want 4, 3", len(gm), gm[0].Replicates)
	}
	for _, f := range tableFiles {
		m, err := results.ReadMeta(filepath.Join(dir, f))
		if err != nil {
			t.Fatal(err)
		}
		if m != testMeta {
			t.Errorf("%s: metadata %+v, want %+v", f, m, testMeta)
		}
	}
	// a table read as another table is refused
	if _, err := results.ReadRuns(filepath.Join(dir, results.SeriesFile)); err == nil {
		t.Error("ReadRuns accepted series.parquet")
	}
	// no temporary file is left behind
	ents, _ := os.ReadDir(dir)
	for _, e := range ents {
		if strings.HasPrefix(e.Name(), ".") {
			t.Errorf("leftover %s", e.Name())
		}
	}
}

func readFiles(t testing.TB, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	for _, f := range tableFiles {
		b, err := os.ReadFile(filepath.Join(dir, f))
		if err != nil {
			t.Fatal(err)
		}
		out[f] = b
	}
	return out
}

func sameFiles(t *testing.T, a, b map[string][]byte, what string) {
	t.Helper()
	for _, f := range tableFiles {
		if !bytes.Equal(a[f], b[f]) {
			t.Errorf("%s: %s differs (%d vs %d bytes)", what, f, len(a[f]), len(b[f]))
		}
	}
}

func TestFinalizeDeterministic(t *testing.T) {
	runs := grid(t, 3)
	order := ids(runs)
	d1, d2 := t.TempDir(), t.TempDir()
	writeAll(t, d1, runs, identity(len(runs)))
	// reverse order, written concurrently by several workers
	if err := results.MarkDir(d2, testMeta); err != nil {
		t.Fatal(err)
	}
	var wg sync.WaitGroup
	errs := make(chan error, len(runs))
	for w := 0; w < 4; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := len(runs) - 1 - w; i >= 0; i -= 4 {
				errs <- results.WritePart(d2, runs[i])
			}
		}()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		if err != nil {
			t.Fatal(err)
		}
	}
	for _, d := range []string{d1, d2} {
		if err := results.Finalize(d, order, testMeta); err != nil {
			t.Fatal(err)
		}
	}
	sameFiles(t, readFiles(t, d1), readFiles(t, d2), "two part orders")

	// nil order sorts by run_index, which grid set to the listed order
	d3 := t.TempDir()
	writeAll(t, d3, runs, identity(len(runs)))
	if err := results.Finalize(d3, nil, testMeta); err != nil {
		t.Fatal(err)
	}
	sameFiles(t, readFiles(t, d1), readFiles(t, d3), "nil order")
}

func TestFinalizeErrors(t *testing.T) {
	runs := grid(t, 1)
	dir := t.TempDir()
	writeAll(t, dir, runs, identity(len(runs)))
	if err := results.Finalize(dir, append(ids(runs), "missing"), testMeta); err == nil || !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing part: got %v", err)
	}
	if err := results.Finalize(dir, append(ids(runs), runs[0].Run.RunID), testMeta); err == nil {
		t.Error("duplicate run in order: no error")
	}
	if _, err := os.Stat(filepath.Join(dir, results.RunsFile)); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("a failed Finalize left %s: %v", results.RunsFile, err)
	}
}

// A crash leaves temporary folders and files, always named with a leading
// dot; a part is visible only once complete.
func TestCrashLeftoversIgnored(t *testing.T) {
	runs := grid(t, 1)
	clean, dirty := t.TempDir(), t.TempDir()
	writeAll(t, clean, runs, identity(len(runs)))
	writeAll(t, dirty, runs, identity(len(runs)))
	// a half-written part of another run, a leftover folder, and a
	// half-written final table
	parts := filepath.Join(dirty, results.PartsDir)
	if err := os.WriteFile(filepath.Join(parts, ".other.part.tmp-4242"), []byte("hoplore-part\n\x01half"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.MkdirAll(filepath.Join(parts, ".tmp-1", "x.part"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dirty, "."+results.RunsFile+".tmp-77"), []byte("PAR1"), 0o644); err != nil {
		t.Fatal(err)
	}
	got, err := results.ListParts(dirty)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(runs) {
		t.Errorf("ListParts: got %d, want %d (temporary folder counted?)", len(got), len(runs))
	}
	for _, d := range []string{clean, dirty} {
		if err := results.Finalize(d, nil, testMeta); err != nil {
			t.Fatal(err)
		}
	}
	sameFiles(t, readFiles(t, clean), readFiles(t, dirty), "with leftovers")
}

// Damaged data in a visible part is an error, never read as rows.
func TestCorruptPartRefused(t *testing.T) {
	runs := grid(t, 1)
	dir := t.TempDir()
	writeAll(t, dir, runs, identity(len(runs)))
	if err := results.Finalize(dir, ids(runs), testMeta); err != nil {
		t.Fatal(err)
	}
	before := readFiles(t, dir)
	// a truncated part, then one with a flipped byte
	p := filepath.Join(dir, results.PartsDir, "shortest-path%2F1.2%2Fr0.part")
	b, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	for _, bad := range [][]byte{b[:len(b)/2], append(append([]byte{}, b[:100]...), append([]byte{b[100] ^ 4}, b[101:]...)...)} {
		if err := os.WriteFile(p, bad, 0o644); err != nil {
			t.Fatal(err)
		}
		if err := results.Finalize(dir, ids(runs), testMeta); err == nil {
			t.Fatal("Finalize read a damaged part")
		}
		if _, err := results.ReadPart(dir, runs[1].Run.RunID); err == nil {
			t.Fatal("ReadPart read a damaged part")
		}
	}
	sameFiles(t, before, readFiles(t, dir), "after a failed Finalize")
}

func TestRunIDEscaping(t *testing.T) {
	dir := t.TempDir()
	tb := fixture(t, "a", 1, 0, false)
	for _, id := range []string{"plain-id_1.2", ".hidden", "a/b\\c d%e", "ünï", "x%2"} {
		d := tb.Run.Dims
		d.RunID = id
		setDims(tb, d)
		if err := results.WritePart(dir, tb); err != nil {
			t.Fatal(err)
		}
		got, err := results.ListParts(dir)
		if err != nil {
			t.Fatal(err)
		}
		if !got[id] {
			t.Errorf("id %q not listed: %v", id, got)
		}
		back, err := results.ReadPart(dir, id)
		if err != nil || back.Run.RunID != id {
			t.Errorf("id %q: read back %v", id, err)
		}
	}
	ents, _ := os.ReadDir(filepath.Join(dir, results.PartsDir))
	if len(ents) != 5 {
		t.Errorf("got %d part folders, want 5", len(ents))
	}
	// rewriting a run replaces its part
	tb.Run.Events = 99
	if err := results.WritePart(dir, tb); err != nil {
		t.Fatal(err)
	}
	back, err := results.ReadPart(dir, "x%2")
	if err != nil || back.Run.Events != 99 {
		t.Errorf("rewritten part: events %d, %v", back.Run.Events, err)
	}
	if ents2, _ := os.ReadDir(filepath.Join(dir, results.PartsDir)); len(ents2) != 5 {
		t.Errorf("after rewrite: %d entries, want 5", len(ents2))
	}
	// rows of another run are refused
	tb.Series[0].RunID = "other"
	if err := results.WritePart(dir, tb); err == nil {
		t.Error("WritePart accepted a series row of another run")
	}
	tb.Series[0].RunID = tb.Run.RunID
	tb.Links[3].Load = 7
	if err := results.WritePart(dir, tb); err == nil {
		t.Error("WritePart accepted a links row with other dimensions")
	}
	tb.Run.RunID = ""
	if err := results.WritePart(dir, tb); err == nil {
		t.Error("WritePart accepted an empty run id")
	}
}

func TestMarkCheckDir(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	if err := results.CheckDir(dir, "h1"); err != nil {
		t.Errorf("missing folder: %v", err)
	}
	if err := results.MarkDir(dir, results.Meta{Experiment: "e", ExperimentHash: "h1", Version: "v"}); err != nil {
		t.Fatal(err)
	}
	if err := results.CheckDir(dir, "h1"); err != nil {
		t.Errorf("same experiment: %v", err)
	}
	err := results.CheckDir(dir, "h2")
	if !errors.Is(err, results.ErrOtherExperiment) || !strings.Contains(err.Error(), `"e"`) {
		t.Errorf("other experiment: got %v", err)
	}
	if err := results.MarkDir(dir, results.Meta{Experiment: "f", ExperimentHash: "h2"}); !errors.Is(err, results.ErrOtherExperiment) {
		t.Errorf("MarkDir over another experiment: got %v", err)
	}
	m, err := results.ReadMark(dir)
	if err != nil || m.ExperimentHash != "h1" {
		t.Errorf("ReadMark: %+v %v", m, err)
	}
	// results without a marker are not taken over
	bare := t.TempDir()
	if err := results.WritePart(bare, fixture(t, "a", 1, 0, false)); err != nil {
		t.Fatal(err)
	}
	if err := results.CheckDir(bare, "h1"); !errors.Is(err, results.ErrOtherExperiment) {
		t.Errorf("unmarked results: got %v", err)
	}
	// an empty or unrelated folder is fine
	other := t.TempDir()
	os.WriteFile(filepath.Join(other, "notes.txt"), []byte("x"), 0o644)
	if err := results.CheckDir(other, "h1"); err != nil {
		t.Errorf("unrelated folder: %v", err)
	}
}

func TestMerge(t *testing.T) {
	runs := grid(t, 3)
	order := ids(runs)
	whole := t.TempDir()
	writeAll(t, whole, runs, identity(len(runs)))
	if err := results.Finalize(whole, order, testMeta); err != nil {
		t.Fatal(err)
	}
	want := readFiles(t, whole)

	// three shards, round robin, one overlapping run; a shard with no parts
	// (tables only) is read from its tables
	root := t.TempDir()
	shards := make([]string, 3)
	for s := range shards {
		shards[s] = filepath.Join(root, fmt.Sprint("shard", s))
		var perm, own []int
		for i := s; i < len(runs); i += 3 {
			perm = append(perm, i)
		}
		if s == 2 {
			perm = append(perm, 0) // duplicate of shard 0's first run
		}
		writeAll(t, shards[s], runs, perm)
		for _, i := range perm {
			own = append(own, i)
		}
		var ord []string
		for _, i := range own {
			ord = append(ord, runs[i].Run.RunID)
		}
		if err := results.Finalize(shards[s], ord, testMeta); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.RemoveAll(filepath.Join(shards[1], results.PartsDir)); err != nil {
		t.Fatal(err)
	}
	// a shard that finished no run holds only its marker
	empty := filepath.Join(root, "empty")
	if err := results.MarkDir(empty, testMeta); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(root, "merged")
	if err := results.Merge(out, []string{shards[2], empty, shards[0], shards[1]}); err != nil {
		t.Fatal(err)
	}
	sameFiles(t, want, readFiles(t, out), "merged shards against one folder")

	// merging again into the same folder changes nothing
	if err := results.Merge(out, shards); err != nil {
		t.Fatal(err)
	}
	sameFiles(t, want, readFiles(t, out), "merge repeated")
}

func TestMergeRefuses(t *testing.T) {
	runs := grid(t, 1)
	root := t.TempDir()
	a, b, c := filepath.Join(root, "a"), filepath.Join(root, "b"), filepath.Join(root, "c")
	writeAll(t, a, runs, []int{0, 1})
	writeAll(t, b, runs, []int{2, 3})
	// another experiment
	if err := results.MarkDir(c, results.Meta{Experiment: "other", ExperimentHash: "zzz"}); err != nil {
		t.Fatal(err)
	}
	if err := results.WritePart(c, runs[1]); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(root, "out")
	if err := results.Merge(out, []string{a, c}); !errors.Is(err, results.ErrOtherExperiment) {
		t.Errorf("different experiments: got %v", err)
	}
	if _, err := os.Stat(out); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("refused merge created %s", out)
	}
	// a conflicting duplicate (same run id, other content)
	bad := *runs[0]
	bad.Run.Delivered++
	if err := results.WritePart(b, &bad); err != nil {
		t.Fatal(err)
	}
	if err := results.Merge(out, []string{a, b}); err == nil || !strings.Contains(err.Error(), "differs") {
		t.Errorf("conflicting duplicate: got %v", err)
	}
	// wall_s alone may differ
	fine := *runs[0]
	fine.Run.WallS += 10
	if err := results.WritePart(b, &fine); err != nil {
		t.Fatal(err)
	}
	if err := results.Merge(out, []string{a, b}); err != nil {
		t.Errorf("duplicate differing in wall_s only: %v", err)
	}
	got, err := results.ReadRuns(filepath.Join(out, results.RunsFile))
	if err != nil || len(got) != 4 {
		t.Errorf("merged runs: %d, %v", len(got), err)
	}
	if err := results.Merge(out, []string{filepath.Join(root, "nothing")}); err == nil {
		t.Error("merging a folder with no marker: no error")
	}
	if err := results.Merge(c, []string{a}); !errors.Is(err, results.ErrOtherExperiment) {
		t.Errorf("merging into another experiment's folder: got %v", err)
	}
}
