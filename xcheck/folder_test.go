package xcheck

import (
	"context"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
	"github.com/parquet-go/parquet-go"

	"hoplore/experiments"
	"hoplore/results"
	"hoplore/sweep"
)

// canon returns a value in a form both readers agree on: integers as
// int64 (bit pattern for unsigned), floats by their bits, strings, booleans,
// nil for null.
func canon(x any) any {
	switch v := x.(type) {
	case int32:
		return int64(v)
	case uint32:
		return int64(v)
	case uint64:
		return int64(v)
	case float32:
		return math.Float64bits(float64(v))
	case float64:
		return math.Float64bits(v)
	case []byte:
		return string(v)
	}
	return x
}

// arrowValue returns element i of an arrow array as the Go value of its
// type (string, int32, int64, uint32, uint64, float32, float64 or bool), or
// nil when null; dictionary arrays are looked through.
func arrowValue(t *testing.T, a arrow.Array, i int) any {
	if a.IsNull(i) {
		return nil
	}
	switch c := a.(type) {
	case *array.String:
		return c.Value(i)
	case *array.LargeString:
		return c.Value(i)
	case *array.Binary:
		return string(c.Value(i))
	case *array.Int64:
		return c.Value(i)
	case *array.Int32:
		return c.Value(i)
	case *array.Uint64:
		return c.Value(i)
	case *array.Uint32:
		return c.Value(i)
	case *array.Float64:
		return c.Value(i)
	case *array.Float32:
		return c.Value(i)
	case *array.Boolean:
		return c.Value(i)
	case *array.Dictionary:
		return arrowValue(t, c.Dictionary(), c.GetValueIndex(i))
	}
	t.Fatalf("unexpected arrow array type %s", a.DataType())
	return nil
}

func parquetGoValue(v parquet.Value) any {
	if v.IsNull() {
		return nil
	}
	switch v.Kind() {
	case parquet.Boolean:
		return v.Boolean()
	case parquet.Int32:
		return v.Int32()
	case parquet.Int64:
		return v.Int64()
	case parquet.Float:
		return v.Float()
	case parquet.Double:
		return v.Double()
	case parquet.ByteArray, parquet.FixedLenByteArray:
		return string(v.ByteArray())
	}
	return v.String()
}

// readParquetGo reads every column of a flat Parquet file with parquet-go.
func readParquetGo(t *testing.T, path string) (names []string, cols [][]any) {
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	st, _ := f.Stat()
	pf, err := parquet.OpenFile(f, st.Size())
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	for _, c := range pf.Schema().Columns() {
		names = append(names, strings.Join(c, "."))
	}
	cols = make([][]any, len(names))
	for _, rg := range pf.RowGroups() {
		rows := rg.Rows()
		buf := make([]parquet.Row, 128)
		for {
			n, err := rows.ReadRows(buf)
			for _, row := range buf[:n] {
				for _, v := range row {
					cols[v.Column()] = append(cols[v.Column()], canon(parquetGoValue(v)))
				}
			}
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				t.Fatalf("%s: %v", path, err)
			}
		}
		rows.Close()
	}
	return names, cols
}

// TestArrowReadsEveryFileOfASweep runs a small sweep through the tool
// (failures, learning and central agents, the model optimum) and reads every
// Parquet file of its results folder with both parquet-go and Apache
// arrow-go (an independent implementation): the same columns, row counts,
// nulls and values, the table name and the experiment hash in every file's
// metadata (result tables and learned Q tables).
func TestArrowReadsEveryFileOfASweep(t *testing.T) {
	y := `name: xcheck-sweep
duration: 12s
warmup: 2s
bin: 1s
replicates: 2
seed: 3
topologies: [{name: ring, nodes: 6}]
traffic:
  matrix: uniform
  loads: [0.5, 1.2]
  packet_size: {dist: fixed, bytes: 1000}
  flows: {arrivals: 2/s, size: {dist: mix, classes: [{fraction: 0.8, bytes: 8000}, {fraction: 0.2, bytes: 200000}]}}
agents:
  - shortest-path
  - q-routing
  - {kind: central-adaptive, every: 2s}
failures:
  - none
  - {name: cut, events: [{at: 5s, link: [n0, n1], action: down}, {at: 8s, link: [n0, n1], action: up}]}
`
	e, err := experiments.Parse("xcheck-sweep.yaml", []byte(y))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	oc, err := sweep.Execute(context.Background(), e, sweep.Options{Out: dir, Workers: 2, Quiet: true, Version: "xcheck"})
	if err != nil || !oc.Complete {
		t.Fatalf("sweep: %v (complete %v)", err, oc != nil && oc.Complete)
	}
	var files []string
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err == nil && strings.HasSuffix(p, ".parquet") {
			files = append(files, p)
		}
		return nil
	})
	if len(files) < 5 {
		t.Fatalf("%d Parquet files: %v", len(files), files)
	}
	// every result table is in the set the manifest verifies
	m, err := results.CheckTables(dir)
	if err != nil {
		t.Fatal(err)
	}
	listed := map[string]bool{}
	for _, tb := range m.Tables {
		listed[tb.File] = true
	}
	for _, p := range files {
		if filepath.Dir(p) == dir && !listed[filepath.Base(p)] {
			t.Errorf("%s is not in %s", filepath.Base(p), results.ManifestFile)
		}
	}
	if !listed[results.FlowsFile] {
		t.Errorf("%s does not list %s", results.ManifestFile, results.FlowsFile)
	}
	checkFlowCounts(t, dir)
	for _, path := range files {
		name := filepath.Base(path)
		pgNames, pgCols := readParquetGo(t, path)
		rdr, err := file.OpenParquetFile(path, false)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		kv := rdr.MetaData().KeyValueMetadata()
		if tb := kv.FindValue("hoplore.table"); tb == nil || *tb == "" {
			t.Errorf("%s: no hoplore.table in its metadata", name)
		}
		// the result tables and the learned state's Q tables name the experiment
		if h := kv.FindValue("hoplore.experiment_hash"); h == nil || *h != e.Hash {
			t.Errorf("%s: experiment hash %v, want %s", name, h, e.Hash)
		}
		fr, err := pqarrow.NewFileReader(rdr, pqarrow.ArrowReadProperties{BatchSize: 4096}, memory.DefaultAllocator)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		tbl, err := fr.ReadTable(context.Background())
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if int(tbl.NumCols()) != len(pgNames) {
			t.Fatalf("%s: arrow reads %d columns, parquet-go %d", name, tbl.NumCols(), len(pgNames))
		}
		for ci := 0; ci < int(tbl.NumCols()); ci++ {
			if got := tbl.Schema().Field(ci).Name; got != pgNames[ci] {
				t.Errorf("%s: column %d is %q for arrow, %q for parquet-go", name, ci, got, pgNames[ci])
			}
			row := 0
			for _, chunk := range tbl.Column(ci).Data().Chunks() {
				for i := 0; i < chunk.Len(); i++ {
					got := canon(arrowValue(t, chunk, i))
					if row >= len(pgCols[ci]) || got != pgCols[ci][row] {
						t.Fatalf("%s.%s row %d: arrow %v, parquet-go %v", name, pgNames[ci], row, got, pgCols[ci][min(row, len(pgCols[ci])-1)])
					}
					row++
				}
			}
			if row != len(pgCols[ci]) || row == 0 && name != "recoveries.parquet" {
				t.Errorf("%s.%s: %d rows for arrow, %d for parquet-go", name, pgNames[ci], row, len(pgCols[ci]))
			}
		}
		tbl.Release()
		rdr.Close()
	}
	t.Logf("%d files cross-read: %v", len(files), func() (n []string) {
		for _, f := range files {
			n = append(n, filepath.Base(f))
		}
		return
	}())
}

// checkFlowCounts: with every measured flow in the sample (fewer than the
// default sample size per run), flows.parquet's rows of each run add up to
// its runs.parquet flow columns: started, completed and failed.
func checkFlowCounts(t *testing.T, dir string) {
	t.Helper()
	runs, err := results.ReadRuns(filepath.Join(dir, results.RunsFile))
	if err != nil {
		t.Fatal(err)
	}
	flows, err := results.ReadFlows(filepath.Join(dir, results.FlowsFile))
	if err != nil {
		t.Fatal(err)
	}
	type counts struct{ started, completed, failed int64 }
	got := map[string]*counts{}
	for _, f := range flows {
		c := got[f.RunID]
		if c == nil {
			c = &counts{}
			got[f.RunID] = c
		}
		c.started++
		switch f.Outcome {
		case "completed":
			c.completed++
			// fct_s is computed from whole nanoseconds; end_s − start_s in
			// float64 seconds of a run under 64 s carries rounding below 1e-13 s
			if f.FCTS == nil || f.EndS == nil || math.Abs(*f.EndS-f.StartS-*f.FCTS) > 1e-12 {
				t.Errorf("run %s flow %d: completed with end %v, fct %v", f.RunID, f.FlowID, f.EndS, f.FCTS)
			}
		case "failed":
			c.failed++
		}
	}
	var total int64
	for _, r := range runs {
		c := got[r.RunID]
		if c == nil {
			c = &counts{}
		}
		if r.FlowsStarted >= experiments.DefaultFlowSample {
			t.Fatalf("run %s started %d flows: the sample no longer holds every flow", r.RunID, r.FlowsStarted)
		}
		if *c != (counts{r.FlowsStarted, r.FlowsCompleted, r.FlowsFailed}) {
			t.Errorf("run %s: flows.parquet %+v, runs.parquet started %d, completed %d, failed %d",
				r.RunID, *c, r.FlowsStarted, r.FlowsCompleted, r.FlowsFailed)
		}
		total += r.FlowsStarted
	}
	if total == 0 || int64(len(flows)) != total {
		t.Errorf("flows.parquet holds %d rows, runs.parquet %d started flows", len(flows), total)
	}
}
