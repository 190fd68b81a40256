package results_test

import (
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"

	"hoplore/results"
)

// The schema declares exactly the columns each table's file holds: the
// dimensions first, in their declared order, then the table's columns (in
// the row struct's order in the file).
func TestSchemaMatchesFiles(t *testing.T) {
	dims := func(cols []results.Column) []string {
		var out []string
		for _, c := range cols {
			out = append(out, c.Name)
		}
		return out
	}
	for _, tc := range []struct {
		table  *results.Table
		schema *parquet.Schema
		dims   []results.Column
	}{
		{results.Runs, parquet.SchemaOf(results.RunRow{}), results.DimColumns},
		{results.Series, parquet.SchemaOf(results.SeriesRow{}), results.DimColumns},
		{results.Links, parquet.SchemaOf(results.LinkRow{}), results.DimColumns},
		{results.Recoveries, parquet.SchemaOf(results.RecoveryRow{}), results.DimColumns},
		{results.Flows, parquet.SchemaOf(results.FlowRow{}), results.DimColumns},
		{results.Summaries, results.SummarySchema(), results.CellColumns},
		{results.Optimum, parquet.SchemaOf(results.OptimumRow{}), nil}, // its dimensions are its columns
	} {
		t.Run(tc.table.Name, func(t *testing.T) {
			var names []string
			for _, f := range tc.schema.Fields() {
				names = append(names, f.Name())
			}
			d := dims(tc.dims)
			if !slices.Equal(names[:len(d)], d) {
				t.Errorf("leading columns %v, want the dimensions %v", names[:len(d)], d)
			}
			got, want := slices.Sorted(slices.Values(names[len(d):])), slices.Sorted(slices.Values(tc.table.Names()))
			if !slices.Equal(got, want) {
				t.Errorf("file columns %v, schema declares %v", got, want)
			}
			for _, c := range tc.table.Columns {
				if c.Label == "" || c.Doc == "" {
					t.Errorf("column %s: no label or doc", c.Name)
				}
				if i := tc.table.Index(c.Name); i < 0 || tc.table.Columns[i].Name != c.Name {
					t.Errorf("Index(%q) = %d", c.Name, i)
				}
			}
			if tc.table.Index("no_such_column") != -1 {
				t.Error("Index of an unknown column is not -1")
			}
		})
	}
}

// summary.parquet follows the runs columns marked for summary, in their
// declared order, with one or two columns each.
func TestSummaryFollowsSchema(t *testing.T) {
	var want []string
	want = append(want, "replicates")
	for _, c := range results.Summarized() {
		for _, suf := range c.Summary.Suffixes() {
			want = append(want, c.Name+suf)
		}
	}
	if got := results.Summaries.Names(); !slices.Equal(got, want) {
		t.Errorf("summary columns %v, want %v", got, want)
	}
	// the columns the command-line contract names come first, in its order
	// (README, "Results")
	head := []string{"replicates", "delivery_mean_s_mean", "delivery_mean_s_ci95", "delivery_p95_s_mean",
		"delivery_p95_s_ci95", "loss_rate_mean", "loss_rate_ci95", "throughput_bps_mean", "throughput_bps_ci95"}
	if got := results.Summaries.Names(); len(got) < len(head) || !slices.Equal(got[:len(head)], head) {
		t.Errorf("summary columns %v, want them to start with %v", got, head)
	}
}

func TestColumnFloat(t *testing.T) {
	v := 0.25
	r := &results.RunRow{Generated: 7, LossRate: &v, ThroughputBps: 3e6, Dims: results.Dims{Seed: 1 << 63, Load: 0.5}}
	for _, tc := range []struct {
		name string
		want float64
		ok   bool
	}{
		{"generated", 7, true},
		{"loss_rate", 0.25, true},
		{"delivery_mean_s", 0, false}, // null
		{"throughput_bps", 3e6, true},
	} {
		c, ok := results.Runs.Column(tc.name)
		if !ok {
			t.Fatalf("no column %s", tc.name)
		}
		if got, ok := c.Float(r); got != tc.want || ok != tc.ok {
			t.Errorf("%s: got %v %v, want %v %v", tc.name, got, ok, tc.want, tc.ok)
		}
	}
	c, _ := results.Runs.Column("version")
	if c.Number() {
		t.Error("version is not a number column")
	}
	defer func() {
		if recover() == nil {
			t.Error("Float of a label column did not panic")
		}
	}()
	c.Float(r)
}

func TestColumnDisplay(t *testing.T) {
	// common practice: times in ms, ratios in %, rates in Mbit/s
	for _, tc := range []struct {
		name  string
		scale float64
		unit  string
	}{{"delivery_mean_s", 1e3, "ms"}, {"loss_rate", 100, "%"}, {"throughput_bps", 1e-6, "Mbit/s"}, {"generated", 1, "packets"}} {
		c, _ := results.Runs.Column(tc.name)
		if s, u := c.Display(); s != tc.scale || u != tc.unit {
			t.Errorf("%s: got %v %q, want %v %q", tc.name, s, u, tc.scale, tc.unit)
		}
	}
}

// Every parquet-tagged field of a row struct is declared, with the
// struct's type telling numbers from labels.
func TestSchemaKinds(t *testing.T) {
	for _, tc := range []struct {
		table *results.Table
		typ   reflect.Type
	}{
		{results.Runs, reflect.TypeFor[results.RunRow]()},
		{results.Series, reflect.TypeFor[results.SeriesRow]()},
		{results.Links, reflect.TypeFor[results.LinkRow]()},
		{results.Recoveries, reflect.TypeFor[results.RecoveryRow]()},
		{results.Flows, reflect.TypeFor[results.FlowRow]()},
		{results.Optimum, reflect.TypeFor[results.OptimumRow]()},
	} {
		for i := 0; i < tc.typ.NumField(); i++ {
			f := tc.typ.Field(i)
			if f.Anonymous {
				continue
			}
			name, _, _ := strings.Cut(f.Tag.Get("parquet"), ",")
			c, ok := tc.table.Column(name)
			if !ok {
				t.Errorf("%s: field %s (%s) not declared", tc.table.Name, f.Name, name)
				continue
			}
			if want := f.Type.Kind() != reflect.String; c.Number() != want {
				t.Errorf("%s.%s: Number() = %v, want %v", tc.table.Name, name, c.Number(), want)
			}
		}
	}
}

func TestSummaryRowValues(t *testing.T) {
	r := results.NewSummaryRow(results.CellDims{Agent: "a"}, 3, map[string]float64{"loss_rate_mean": 0.5})
	if m, h := r.MeanCI95("loss_rate"); m == nil || *m != 0.5 || h != nil {
		t.Errorf("loss_rate: got %v %v, want 0.5 and null", m, h)
	}
	if r.Value("no_such_column") != nil || r.Value("replicates") != nil {
		t.Error("Value of a column that is not a value column is not null")
	}
	defer func() {
		if recover() == nil {
			t.Error("NewSummaryRow with an unknown column did not panic")
		}
	}()
	results.NewSummaryRow(results.CellDims{}, 1, map[string]float64{"nope": 1})
}
