package xcheck

import (
	"context"
	"math"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"hoplore/results"
	"hoplore/results/resultstest"
)

// expected holds one table's values as hoplore wrote them, column by column:
// nil for null, else string, int64, uint64 or float64.
type expected struct {
	names []string
	cols  map[string][]any
}

// columns flattens rows of a row struct type (embedded dimensions included)
// into columns named by their parquet tags.
func columns[T any](rows []T) expected {
	e := expected{cols: map[string][]any{}}
	var walk func(t reflect.Type, v reflect.Value, first bool)
	walk = func(t reflect.Type, v reflect.Value, first bool) {
		for i := 0; i < t.NumField(); i++ {
			f := t.Field(i)
			if f.Anonymous {
				walk(f.Type, v.Field(i), first)
				continue
			}
			name, _, _ := strings.Cut(f.Tag.Get("parquet"), ",")
			if first {
				e.names = append(e.names, name)
			}
			fv := v.Field(i)
			var x any
			switch fv.Kind() {
			case reflect.String:
				x = fv.String()
			case reflect.Int, reflect.Int64:
				x = fv.Int()
			case reflect.Uint64:
				x = fv.Uint()
			case reflect.Float64:
				x = fv.Float()
			case reflect.Pointer:
				if !fv.IsNil() {
					x = fv.Elem().Float()
				}
			default:
				panic("unexpected kind " + fv.Kind().String())
			}
			e.cols[name] = append(e.cols[name], x)
		}
	}
	typ := reflect.TypeFor[T]()
	if len(rows) == 0 {
		var zero T
		walk(typ, reflect.ValueOf(zero), true)
		for k := range e.cols {
			e.cols[k] = nil
		}
	}
	for i := range rows {
		walk(typ, reflect.ValueOf(rows[i]), i == 0)
	}
	return e
}

// summaryColumns flattens summary rows into the columns the results schema
// declares for summary.parquet: the cell dimensions, replicates, then one
// column per value (results.Summaries).
func summaryColumns(rows []results.SummaryRow) expected {
	e := expected{cols: map[string][]any{}}
	for _, c := range results.CellColumns {
		e.names = append(e.names, c.Name)
	}
	e.names = append(e.names, results.Summaries.Names()...)
	for _, r := range rows {
		e.cols["experiment"] = append(e.cols["experiment"], r.Experiment)
		e.cols["topology"] = append(e.cols["topology"], r.Topology)
		e.cols["agent"] = append(e.cols["agent"], r.Agent)
		e.cols["load"] = append(e.cols["load"], r.Load)
		e.cols["failure"] = append(e.cols["failure"], r.Failure)
		e.cols["replicates"] = append(e.cols["replicates"], int64(r.Replicates))
		for i, c := range results.Summaries.Columns[1:] {
			var x any
			if v := r.Values[i]; v != nil {
				x = *v
			}
			e.cols[c.Name] = append(e.cols[c.Name], x)
		}
	}
	return e
}

func same(a, b any) bool {
	fa, ok1 := a.(float64)
	fb, ok2 := b.(float64)
	if ok1 && ok2 {
		return math.Float64bits(fa) == math.Float64bits(fb)
	}
	return a == b
}

// wantType is the arrow type each Go field kind must arrive as.
func wantType(x any) arrow.Type {
	switch x.(type) {
	case string:
		return arrow.STRING
	case int64:
		return arrow.INT64
	case uint64:
		return arrow.UINT64
	default:
		return arrow.FLOAT64
	}
}

// check reads path with arrow-go and compares schema, every value and the
// key-value metadata with want.
func check(t *testing.T, path string, want expected, meta results.Meta, table string) {
	t.Helper()
	rdr, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer rdr.Close()
	kv := rdr.MetaData().KeyValueMetadata()
	for key, v := range map[string]string{
		results.KeyTable: table, results.KeyVersion: meta.Version,
		results.KeyExperiment: meta.Experiment, results.KeyExperimentHash: meta.ExperimentHash,
	} {
		got := kv.FindValue(key)
		if got == nil || *got != v {
			t.Errorf("%s: metadata %s = %v, want %q", table, key, got, v)
		}
	}
	fr, err := pqarrow.NewFileReader(rdr, pqarrow.ArrowReadProperties{BatchSize: 4096}, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	tbl, err := fr.ReadTable(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	defer tbl.Release()
	var names []string
	for _, f := range tbl.Schema().Fields() {
		names = append(names, f.Name)
	}
	if !reflect.DeepEqual(names, want.names) {
		t.Fatalf("%s: columns\n%v\nwant\n%v", table, names, want.names)
	}
	n := len(want.cols[want.names[0]])
	if int(tbl.NumRows()) != n {
		t.Fatalf("%s: %d rows, want %d", table, tbl.NumRows(), n)
	}
	for ci, name := range names {
		col := tbl.Column(ci).Data()
		wantVals := want.cols[name]
		var nulls int
		for _, v := range wantVals {
			if v == nil {
				nulls++
			}
		}
		if col.NullN() != nulls {
			t.Errorf("%s.%s: %d nulls, want %d", table, name, col.NullN(), nulls)
		}
		row := 0
		for _, chunk := range col.Chunks() {
			dt := chunk.DataType()
			if d, ok := dt.(*arrow.DictionaryType); ok {
				dt = d.ValueType
			}
			for i := 0; i < chunk.Len(); i++ {
				got := arrowValue(t, chunk, i)
				w := wantVals[row]
				if w != nil && dt.ID() != wantType(w) {
					t.Fatalf("%s.%s: arrow type %s, want %s", table, name, dt, wantType(w))
				}
				if !same(got, w) {
					t.Errorf("%s.%s row %d: arrow read %v (%T), hoplore wrote %v (%T)", table, name, row, got, got, w, w)
				}
				row++
			}
		}
	}
}

// TestArrowReadsEveryTable writes a small sweep of synthetic runs with
// FromRun, WritePart and Finalize, then reads every table with Apache
// arrow-go's Parquet reader (an independent implementation) and
// compares every column value by value, the nulls, the types and the
// key-value metadata.
func TestArrowReadsEveryTable(t *testing.T) {
	dir := t.TempDir()
	meta := results.Meta{Version: "v0-xcheck", Experiment: "square-sweep", ExperimentHash: "feedc0de"}
	if err := results.MarkDir(dir, meta); err != nil {
		t.Fatal(err)
	}
	net := resultstest.Net()
	cfg := resultstest.Config(net)
	var all []*results.RunTables
	for _, agent := range []string{"shortest-path", "q-routing{lr=0.5}"} {
		for _, load := range []float64{0.3, 1.4} {
			for rep := 0; rep < 3; rep++ {
				d := resultstest.Dims(agent, load, rep)
				d.Index = len(all)
				empty := load > 1 && rep == 1 // nothing delivered: null statistics
				tb := results.FromRun(d, net, cfg, resultstest.Run(net, rep, empty), 0.25*float64(rep+1), meta.Version)
				all = append(all, tb)
			}
		}
	}
	// write the parts in reverse, finalize in grid order
	var order []string
	for i := len(all) - 1; i >= 0; i-- {
		if err := results.WritePart(dir, all[i]); err != nil {
			t.Fatal(err)
		}
	}
	var runs []results.RunRow
	var series []results.SeriesRow
	var links []results.LinkRow
	var recs []results.RecoveryRow
	for _, tb := range all {
		order = append(order, tb.Run.RunID)
		runs = append(runs, tb.Run)
		series = append(series, tb.Series...)
		links = append(links, tb.Links...)
		recs = append(recs, tb.Recoveries...)
	}
	if err := results.Finalize(dir, order, meta); err != nil {
		t.Fatal(err)
	}
	summary := results.Summarize(runs)

	// the fixture must exercise nulls and non-nulls in the nullable columns
	wr := columns(runs)
	for _, c := range []string{"delivery_mean_s", "delivery_p99_s", "hops_mean"} {
		var nulls int
		for _, v := range wr.cols[c] {
			if v == nil {
				nulls++
			}
		}
		if nulls == 0 || nulls == len(runs) {
			t.Fatalf("fixture: %s has %d nulls of %d", c, nulls, len(runs))
		}
	}
	check(t, filepath.Join(dir, results.RunsFile), wr, meta, "runs")
	check(t, filepath.Join(dir, results.SeriesFile), columns(series), meta, "series")
	check(t, filepath.Join(dir, results.LinksFile), columns(links), meta, "links")
	check(t, filepath.Join(dir, results.RecoveriesFile), columns(recs), meta, "recoveries")
	check(t, filepath.Join(dir, results.SummaryFile), summaryColumns(summary), meta, "summary")
	if len(summary) != 4 || len(runs) != 12 || len(series) != 144 || len(links) != 120 || len(recs) != 24 {
		t.Errorf("sizes: summary %d runs %d series %d links %d recoveries %d", len(summary), len(runs), len(series), len(links), len(recs))
	}
}
