package demands

import (
	"bytes"
	"errors"
	"os"
	"reflect"
	"testing"

	"github.com/parquet-go/parquet-go"

	"hoplore/internal/inputerr"
	"hoplore/internal/yamlx"
)

func TestParseUnit(t *testing.T) {
	for _, c := range []struct {
		in   string
		want Unit
		err  bool
	}{
		{"/s", Unit{Packets: true, Name: "/s"}, false},
		{"pps", Unit{Packets: true, Name: "pps"}, false},
		{"Mbps", Unit{BPS: 1e6, Name: "Mbps"}, false},
		{"gbit/s", Unit{BPS: 1e9, Name: "gbit/s"}, false},
		{"bps", Unit{BPS: 1, Name: "bps"}, false},
		{"furlongs", Unit{}, true},
		{"10Mbps", Unit{}, true},
		{"", Unit{}, true},
	} {
		got, err := ParseUnit(c.in)
		if (err != nil) != c.err || !c.err && got != c.want {
			t.Errorf("%q: got %+v, %v; want %+v (error %v)", c.in, got, err, c.want, c.err)
		}
	}
	// 12 Mbit/s of 1500-byte packets is 1000 packets/s.
	if got := (Unit{BPS: 1e6}).PerSecond(12, 1500); got != 1000 {
		t.Errorf("PerSecond: %g, want 1000", got)
	}
}

func TestReadCSV(t *testing.T) {
	const text = "t,Source,target,rate,unit\n" +
		"0,Arvenport,Bellcaster,40,/s\n" +
		"# a comment line\n" +
		"5m,Bellcaster,Corlund,2.5,Mbps\n"
	tb, err := Read("day.csv", []byte(text), nil)
	if err != nil {
		t.Fatal(err)
	}
	want := []Row{
		{T: 0, Source: "Arvenport", Target: "Bellcaster", Rate: 40, Unit: Unit{Packets: true, Name: "/s"}, Pos: yamlx.Pos{Line: 2, Col: 1},
			SourcePos: yamlx.Pos{Line: 2, Col: 3}, TargetPos: yamlx.Pos{Line: 2, Col: 13}},
		{T: 300, Source: "Bellcaster", Target: "Corlund", Rate: 2.5, Unit: Unit{BPS: 1e6, Name: "Mbps"}, Pos: yamlx.Pos{Line: 4, Col: 1},
			SourcePos: yamlx.Pos{Line: 4, Col: 4}, TargetPos: yamlx.Pos{Line: 4, Col: 15}},
	}
	if !tb.HasT || !reflect.DeepEqual(tb.Rows, want) {
		t.Errorf("got %+v\nwant %+v", tb.Rows, want)
	}
	// the unit in the header
	tb, err = Read("m.csv", []byte("source,target,rate (kbps)\na,b,64\n"), nil)
	if err != nil || tb.Rows[0].Unit.BPS != 1e3 || tb.HasT {
		t.Errorf("header unit: %v %+v", err, tb)
	}
	// the caller's default
	def := Unit{Packets: true, Name: "/s"}
	tb, err = Read("m.csv", []byte("source,target,rate\na,b,64\n"), &def)
	if err != nil || tb.Rows[0].Unit != def {
		t.Errorf("default unit: %v %+v", err, tb)
	}
}

func TestReadErrors(t *testing.T) {
	for _, c := range []struct {
		name, file, text, want string
	}{
		{"unknown unit", "m.csv", "source,target,rate,unit\na,b,1,furlongs/s\n", `m.csv:2:7: unit: unknown unit "furlongs/s" (use /s, pps, bps, kbps, Mbps or Gbps)`},
		{"unknown header unit", "m.csv", "source,target,rate_parsecs\n", `m.csv:1:15: column "rate_parsecs": unknown unit "parsecs" (use /s, pps, bps, kbps, Mbps or Gbps)`},
		{"no unit", "m.csv", "source,target,rate\na,b,1\n", `m.csv:2:5: rate: no unit: give a unit column, a unit in the header such as rate_mbps, or unit: in the experiment`},
		{"negative rate", "m.csv", "source,target,rate_mbps\na,b,1\nb,a,-2\n", `m.csv:3:5: rate: must be a finite number, not negative, got -2`},
		{"same node", "m.csv", "source,target,rate_mbps\na,a,1\n", `m.csv:2:3: target: a demand needs two different nodes, got "a" twice`},
		{"bad t", "m.csv", "t,source,target,rate_mbps\nsoon,a,b,1\n", `m.csv:2:1: t: "soon" is neither seconds nor a duration such as 5m`},
		{"missing column", "m.csv", "source,rate_mbps\n", `m.csv:1:1: no target column (columns: source, target, rate or rate_UNIT, and optionally t and unit)`},
		{"unknown column", "m.csv", "source,target,rate_mbps,colour\n", `m.csv:1:25: unknown column "colour" (columns: source, target, rate or rate_UNIT, and optionally t and unit)`},
		{"ragged", "m.csv", "source,target,rate_mbps\na,b\n", `m.csv:2:1: malformed CSV: wrong number of fields`},
		{"empty", "m.csv", "", `m.csv:1:1: empty file: a header row source,target,rate is required`},
		{"layout", "m.txt", "", `m.txt: not a traffic-matrix file: name it .csv, .parquet or .xml`},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := Read(c.file, []byte(c.text), nil)
			if err == nil || err.Error() != c.want || !errors.Is(err, inputerr.ErrBadInput) {
				t.Errorf("got  %v\nwant %s (an input error)", err, c.want)
			}
		})
	}
}

type parquetDemand struct {
	T      float64 `parquet:"t"`
	Source string  `parquet:"source"`
	Target string  `parquet:"target"`
	Rate   float64 `parquet:"rate_mbps"`
}

func writeParquet(t *testing.T, rows []parquetDemand) []byte {
	var b bytes.Buffer
	w := parquet.NewGenericWriter[parquetDemand](&b)
	if _, err := w.Write(rows); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestReadParquet(t *testing.T) {
	data := writeParquet(t, []parquetDemand{{0, "a", "b", 1.5}, {60, "b", "a", 0.5}})
	tb, err := Read("m.parquet", data, nil)
	if err != nil {
		t.Fatal(err)
	}
	u := Unit{BPS: 1e6, Name: "mbps"}
	want := []Row{{T: 0, Source: "a", Target: "b", Rate: 1.5, Unit: u, Row: 1}, {T: 60, Source: "b", Target: "a", Rate: 0.5, Unit: u, Row: 2}}
	if !tb.HasT || !reflect.DeepEqual(tb.Rows, want) {
		t.Errorf("got %+v\nwant %+v", tb.Rows, want)
	}
	_, err = Read("m.parquet", writeParquet(t, []parquetDemand{{0, "a", "b", 1}, {0, "b", "a", -1}}), nil)
	var re *RowError
	if !errors.As(err, &re) || err.Error() != "m.parquet: row 2: rate: must be a finite number, not negative, got -1" {
		t.Errorf("got %v", err)
	}
}

func TestReadXML(t *testing.T) {
	path := "../testdata/design-layout.xml"
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	tb, err := Read(path, data, nil)
	if err != nil {
		t.Fatal(err)
	}
	u := Unit{BPS: 1e6, Name: "Mbps"}
	want := []Row{
		{Source: "Arvenport", Target: "Corlund", Rate: 30, Unit: u, Pos: yamlx.Pos{Line: 67, Col: 3}},
		{Source: "Corlund", Target: "Bellcaster", Rate: 10, Unit: u, Pos: yamlx.Pos{Line: 72, Col: 3}},
	}
	if tb.HasT || !reflect.DeepEqual(tb.Rows, want) {
		t.Errorf("got %+v\nwant %+v", tb.Rows, want)
	}
}

// FuzzRead: the table readers either fail with an input error naming the
// file or return rows with names, finite non-negative rates and units.
func FuzzRead(f *testing.F) {
	f.Add([]byte("t,source,target,rate,unit\n0,a,b,1,/s\n5m,b,a,2,Mbps\n"))
	f.Add([]byte("source,target,rate_kbps\na,b,64\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		tb, err := Read("f.csv", data, nil)
		if err != nil {
			var ye *yamlx.Error
			if !errors.As(err, &ye) || ye.File != "f.csv" {
				t.Fatalf("error %T %v, want a *yamlx.Error in f.csv", err, err)
			}
			return
		}
		for _, r := range tb.Rows {
			if r.Source == "" || r.Target == "" || r.Source == r.Target || !(r.Rate >= 0) || r.T < 0 || !r.Unit.Packets && !(r.Unit.BPS > 0) {
				t.Fatalf("row %+v", r)
			}
		}
		if _, err := ReadConditions("f.csv", data); err != nil {
			var ye *yamlx.Error
			if !errors.As(err, &ye) {
				t.Fatalf("conditions: error %T %v", err, err)
			}
		}
	})
}
