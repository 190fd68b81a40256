package main

import (
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"
)

// No table hoplore writes holds a NaN: a value that cannot be computed is
// null (README, Results). Checked on every Parquet file of a small grid
// with failures, learning and central agents, one replicate (so that
// intervals cannot be computed) and after a comparison.
func TestNoNaNInTables(t *testing.T) {
	dir := t.TempDir()
	exp := filepath.Join(dir, "mixed.yaml")
	y := `name: mixed
duration: 20s
warmup: 5s
bin: 1s
replicates: 1
seed: 5
topologies: [{name: ring, nodes: 8}]
traffic:
  matrix: uniform
  loads: [0.4, 1.3]
  packet_size: {dist: fixed, bytes: 1000}
agents:
  - shortest-path
  - q-routing
  - {kind: central-adaptive, every: 2s}
failures:
  - none
  - {name: cut, events: [{at: 10s, node: n5, action: down}, {at: 15s, node: n5, action: up}]}
`
	if err := os.WriteFile(exp, []byte(y), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	if _, errb := hop(t, 0, "run", exp, "--out", out, "--quiet"); errb != "" {
		t.Logf("stderr: %s", errb)
	}
	hop(t, 0, "compare", out, "--a", "q-routing", "--b", "shortest-path")
	var files []string
	filepath.WalkDir(out, func(p string, d os.DirEntry, err error) error {
		if err == nil && strings.HasSuffix(p, ".parquet") {
			files = append(files, p)
		}
		return nil
	})
	if len(files) < 6 {
		t.Fatalf("only %d tables: %v", len(files), files)
	}
	for _, p := range files {
		f, err := os.Open(p)
		if err != nil {
			t.Fatal(err)
		}
		st, _ := f.Stat()
		pf, err := parquet.OpenFile(f, st.Size())
		if err != nil {
			t.Fatalf("%s: %v", p, err)
		}
		cols := pf.Schema().Columns()
		nans := map[string]int{}
		for _, rg := range pf.RowGroups() {
			rows := rg.Rows()
			buf := make([]parquet.Row, 64)
			for {
				n, err := rows.ReadRows(buf)
				for _, row := range buf[:n] {
					for _, v := range row {
						if v.Kind() == parquet.Double && math.IsNaN(v.Double()) {
							nans[strings.Join(cols[v.Column()], ".")]++
						}
					}
				}
				if errors.Is(err, io.EOF) {
					break
				}
				if err != nil {
					t.Fatalf("%s: %v", p, err)
				}
			}
			rows.Close()
		}
		f.Close()
		if len(nans) > 0 {
			t.Errorf("%s holds NaN in columns %v", filepath.Base(p), nans)
		}
	}
}
