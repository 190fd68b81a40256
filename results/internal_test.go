package results

import (
	"bytes"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// A part is invisible until complete, and a failure before the rename
// leaves nothing behind (common practice for atomic file replacement:
// write, fsync, rename).
func TestWritePartInvisibleUntilComplete(t *testing.T) {
	dir := t.TempDir()
	tb := &RunTables{Run: RunRow{Dims: Dims{RunID: "r1"}}, Series: []SeriesRow{{Dims: Dims{RunID: "r1"}}}}
	var sawTmp bool
	testHookInstall = func(tmp string) error {
		ids, err := ListParts(dir)
		if err != nil || len(ids) != 0 {
			t.Errorf("complete but unrenamed part listed: %v %v", ids, err)
		}
		if st, err := os.Stat(tmp); err == nil && st.Size() > 0 {
			sawTmp = true
		}
		return errors.New("crash")
	}
	defer func() { testHookInstall = nil }()
	if err := WritePart(dir, tb); err == nil {
		t.Fatal("WritePart succeeded through a failing hook")
	}
	if !sawTmp {
		t.Error("hook saw no temporary part")
	}
	ents, err := os.ReadDir(filepath.Join(dir, PartsDir))
	if err != nil || len(ents) != 0 {
		t.Errorf("after a failed write: %v entries, %v", len(ents), err)
	}
	testHookInstall = nil
	if err := WritePart(dir, tb); err != nil {
		t.Fatal(err)
	}
	if ids, _ := ListParts(dir); !ids["r1"] || len(ids) != 1 {
		t.Errorf("after a good write: %v", ids)
	}
}

func ptr(v float64) *float64 { return &v }

// FuzzRunRowRoundTrip writes one runs row and reads it back: every value,
// null and non-null, must survive unchanged.
func FuzzRunRowRoundTrip(f *testing.F) {
	f.Add("exp", "two-region", "q-routing{lr=0.5}", 0.6, "none", 2, uint64(1)<<63|5, "run-1", int64(1000), 0.25, true, 1e-3, false, -1.5, "v1")
	f.Add("", "", "", math.Inf(1), "ü", -7, uint64(0), "a/b%c", int64(-1), math.NaN(), false, 0.0, true, 0.0, "")
	f.Add("e", "t", "a", -0.0, "f", math.MaxInt32, uint64(math.MaxUint64), strings.Repeat("x", 300), int64(math.MaxInt64), math.SmallestNonzeroFloat64, true, math.MaxFloat64, true, 1e300, "v")
	f.Fuzz(func(t *testing.T, exp, topo, agent string, load float64, failure string, rep int, seed uint64,
		id string, gen int64, loss float64, lossOK bool, mean float64, meanOK bool, wall float64, version string) {
		row := RunRow{
			Dims:      Dims{Experiment: exp, Topology: topo, Agent: agent, Load: load, Failure: failure, Replicate: rep, Seed: seed, RunID: id, Index: rep},
			Generated: gen, Delivered: gen / 2, ThroughputBps: loss, WallS: wall, Version: version,
		}
		if lossOK {
			row.LossRate = ptr(loss)
		}
		if meanOK {
			row.DeliveryMeanS = ptr(mean)
			row.DeliveryP99S = ptr(-mean)
		}
		var buf bytes.Buffer
		if err := writeTable(&buf, []RunRow{row}, Meta{Version: version}.kv(tableRuns)); err != nil {
			t.Fatal(err)
		}
		got, err := readRows[RunRow](bytes.NewReader(buf.Bytes()), int64(buf.Len()), "fuzz", tableRuns)
		if err != nil {
			t.Fatal(err)
		}
		if len(got) != 1 || !sameBits(got[0], row) {
			t.Fatalf("round trip:\n got %+v\nwant %+v", got, row)
		}
	})
}

// sameBits compares rows, float fields by bit pattern (NaN included).
func sameBits(a, b RunRow) bool {
	return reflect.DeepEqual(bitsOf(reflect.ValueOf(a)), bitsOf(reflect.ValueOf(b)))
}

func bitsOf(v reflect.Value) []any {
	var out []any
	switch v.Kind() {
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			out = append(out, bitsOf(v.Field(i))...)
		}
	case reflect.Pointer:
		if v.IsNil() {
			out = append(out, "null")
		} else {
			out = append(out, bitsOf(v.Elem())...)
		}
	case reflect.Float64:
		out = append(out, math.Float64bits(v.Float()))
	default:
		out = append(out, v.Interface())
	}
	return out
}

func FuzzEscapeID(f *testing.F) {
	for _, s := range []string{"a", ".x", "a/b", "%", "%zz", "ü", "a.b-c_d"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, id string) {
		name := escapeID(id)
		if strings.ContainsAny(name, "/\\\x00") || strings.HasPrefix(name, ".") {
			t.Fatalf("escapeID(%q) = %q: not a safe folder name", id, name)
		}
		back, err := unescapeID(name)
		if err != nil || back != id {
			t.Fatalf("unescapeID(escapeID(%q)) = %q, %v", id, back, err)
		}
	})
}

// A row struct field without a schema entry, or an entry without a field,
// stops the program at start-up instead of writing an undocumented column.
func TestBindRefusesMismatch(t *testing.T) {
	type row struct {
		Dims
		A float64 `parquet:"a"`
		B float64 `parquet:"b"`
	}
	for _, tc := range []struct {
		name string
		cols []Column
		want string
	}{
		{"undeclared field", []Column{{Name: "a"}}, `column "b" (row.B) has no entry`},
		{"column without field", []Column{{Name: "a"}, {Name: "b"}, {Name: "c"}}, `column "c" is declared but row has no field`},
		{"summarised label", []Column{{Name: "a"}, {Name: "b", Summary: MeanCI95}}, `only numeric runs columns are summarised`},
		{"declared twice", []Column{{Name: "a"}, {Name: "a"}}, `declared twice`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			defer func() {
				r := recover()
				if s, _ := r.(string); !strings.Contains(s, tc.want) {
					t.Errorf("got panic %v, want one containing %q", r, tc.want)
				}
			}()
			bind(&Table{Name: "test", File: "test.parquet", Columns: tc.cols}, reflect.TypeFor[row]())
		})
	}
}

// summary.parquet is read by column name: a file written before a column
// existed reads it as null, and a column this version does not know is
// ignored.
func TestReadSummaryOlderFile(t *testing.T) {
	type oldRow struct {
		CellDims
		Replicates int      `parquet:"replicates"`
		LossMean   *float64 `parquet:"loss_rate_mean,optional"`
		Retired    *float64 `parquet:"retired_column_mean,optional"`
	}
	v := 0.25
	path := filepath.Join(t.TempDir(), SummaryFile)
	err := writeFileAtomic(path, func(w io.Writer) error {
		return writeTable(w, []oldRow{{CellDims{Experiment: "e", Agent: "a", Load: 0.5}, 3, &v, &v}}, Meta{}.kv(tableSummary))
	})
	if err != nil {
		t.Fatal(err)
	}
	rows, err := ReadSummary(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 1 || rows[0].Agent != "a" || rows[0].Load != 0.5 || rows[0].Replicates != 3 {
		t.Fatalf("got %+v", rows)
	}
	if m, h := rows[0].MeanCI95("loss_rate"); m == nil || *m != 0.25 || h != nil {
		t.Errorf("loss_rate: got %v %v, want 0.25 and null", m, h)
	}
	if m, _ := rows[0].MeanCI95("delivery_mean_s"); m != nil {
		t.Errorf("a column the file lacks reads %v, want null", *m)
	}
	if len(rows[0].Values) != len(Summaries.Columns)-1 {
		t.Errorf("%d values, want %d", len(rows[0].Values), len(Summaries.Columns)-1)
	}
}
