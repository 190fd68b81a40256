package main

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"hoplore/sim"
	"hoplore/topologies"
)

// TestTopologiesList checks every generator's line against what Generate
// builds at its defaults.
func TestTopologiesList(t *testing.T) {
	d, out, errb := testDeps()
	if code := run([]string{"topologies"}, d); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	lines := strings.Split(strings.TrimSpace(out.String()), "\n")[1:]
	infos := topologies.List()
	if len(lines) != len(infos) {
		t.Fatalf("%d lines for %d generators", len(lines), len(infos))
	}
	for i, info := range infos {
		g, err := topologies.Generate(info.Name, nil)
		if err != nil {
			t.Fatal(err)
		}
		want := []string{info.Name, strconv.Itoa(len(g.Nodes)), strconv.Itoa(len(g.Links)), strconv.Itoa(sim.Compile(g).Diameter())}
		if got := strings.Fields(lines[i])[:4]; strings.Join(got, " ") != strings.Join(want, " ") {
			t.Errorf("line %q, want it to start %v", lines[i], want)
		}
	}
	d, out, _ = testDeps()
	if code := run([]string{"topologies", "--params"}, d); code != 0 || !strings.Contains(out.String(), "bridge_mbps") {
		t.Errorf("topologies --params: exit %d, output lacks two-region's bridge_mbps", code)
	}
}

// TestTopologiesShow checks that show's output reads back as the same graph
// in both formats, and that bad parameters are input errors.
func TestTopologiesShow(t *testing.T) {
	for _, format := range []string{"yaml", "graphml"} {
		d, out, errb := testDeps()
		if code := run([]string{"topologies", "show", "two-region", "rows=4", "bridges=1", "--format", format}, d); code != 0 {
			t.Fatalf("%s: exit %d: %s", format, code, errb.String())
		}
		var g *sim.Graph
		var err error
		if format == "yaml" {
			g, err = topologies.ParseFile("shown.yaml", out.Bytes())
		} else {
			g, err = topologies.ParseGraphML("shown.graphml", out.Bytes())
		}
		if err != nil {
			t.Fatalf("%s: output does not read back: %v", format, err)
		}
		want, _ := topologies.Generate("two-region", map[string]float64{"rows": 4, "bridges": 1})
		if len(g.Nodes) != len(want.Nodes) || len(g.Links) != len(want.Links) {
			t.Errorf("%s: read back %d nodes %d links, want %d and %d", format, len(g.Nodes), len(g.Links), len(want.Nodes), len(want.Links))
		}
	}
	for _, args := range [][]string{
		{"topologies", "show", "ring", "nodes=2"},
		{"topologies", "show", "ring", "sides=5"},
		{"topologies", "show", "ring", "nodes"},
		{"topologies", "show", "ring", "nodes=many"},
		{"topologies", "show", "hexagon"},
		{"topologies", "show", "ring", "--format", "dot"},
	} {
		d, out, _ := testDeps()
		if code := run(args, d); code != 2 || out.Len() != 0 {
			t.Errorf("%v: exit %d with %d bytes out, want 2 and nothing", args, code, out.Len())
		}
	}
}

// TestTopologiesShowFile checks that a file from another tool is shown with
// where its fields came from, and that the reading options are checked.
func TestTopologiesShowFile(t *testing.T) {
	fixture := "../../testdata/collection-layout.graphml"
	d, out, errb := testDeps()
	if code := run([]string{"topologies", "show", fixture, "--keep", "largest-component"}, d); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	for _, want := range []string{
		"# bandwidth: 2 edges from LinkSpeedRaw (bit/s) × 0.001, 4 edges from LinkSpeed × LinkSpeedUnits × 0.001, 1 edge default 10Mbps\n",
		"# note: kept the largest component (5 of 8 nodes); dropped 3 nodes and 1 link in 2 components {Farrowby Hollin}, {7}\n",
		"  - {a: Arvenport, b: Bellcaster, bandwidth: 11Mbps, delay: 555.975µs, buffer: 64}\n",
	} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("output lacks %q:\n%s", want, out.String())
		}
	}
	if _, err := topologies.ParseFile("shown.yaml", out.Bytes()); err != nil {
		t.Errorf("output does not read back: %v", err)
	}
	d, out, _ = testDeps()
	if code := run([]string{"topologies", "show", fixture, "--keep", "largest-component", "--format", "graphml"}, d); code != 0 {
		t.Fatalf("graphml: exit %d", code)
	}
	if g, err := topologies.ParseGraphML("shown.graphml", out.Bytes()); err != nil || len(g.Nodes) != 5 {
		t.Errorf("graphml output does not read back: %v", err)
	}
	for _, args := range [][]string{
		{"topologies", "show", fixture},
		{"topologies", "show", fixture, "--keep", "everything"},
		{"topologies", "show", fixture, "--keep", "largest-component", "--attr", "lat"},
		{"topologies", "show", fixture, "--keep", "largest-component", "--attr", "bandwidth=Capacity"},
		{"topologies", "show", fixture, "--keep", "largest-component", "--bandwidth-scale", "-1"},
		{"topologies", "show", "ring", "--keep", "largest-component"},
	} {
		d, out, _ := testDeps()
		if code := run(args, d); code != 2 || out.Len() != 0 {
			t.Errorf("%v: exit %d with %d bytes out, want 2 and nothing", args, code, out.Len())
		}
	}
}

// TestMeasuredInputErrors: bad traffic-matrix and conditions files are
// input errors (exit 2) naming the file and where in it, and run writes
// nothing.
func TestMeasuredInputErrors(t *testing.T) {
	const head = "name: bad-measured\nduration: 10s\ntopologies:\n  - inline:\n      nodes: [a, b, c]\n      links: [{a: a, b: b}, {a: b, b: c}]\nagents: [shortest-path]\n"
	for _, c := range []struct {
		name, tail, file, data, want string
	}{
		{"unknown unit", "traffic: {matrix: {file: m.csv}}\n", "m.csv", "source,target,rate_furlongs\na,b,1\n", "m.csv:1:15: "},
		{"unknown node", "traffic: {matrix: {file: m.csv}}\n", "m.csv", "source,target,rate_pps\na,z,1\n", "m.csv:2:3: "},
		{"overlapping periods", "traffic: {matrix: {file: m.csv, period: 1m}}\n", "m.csv", "t,source,target,rate_pps\n0,a,b,1\n30s,a,c,1\n", "m.csv:3:1: "},
		{"missing link", "traffic: {matrix: uniform, loads: [0.5]}\nconditions: {file: c.csv}\n", "c.csv", "t,a,b,loss\n0,a,c,0.1\n", "c.csv:2:3: "},
		{"negative speed", "traffic: {matrix: uniform, loads: [0.5]}\nconditions: {file: c.csv}\n", "c.csv", "t,a,b,bandwidth\n0,a,b,-1Mbps\n", "c.csv:2:7: "},
	} {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			exp := filepath.Join(dir, "e.yaml")
			if err := os.WriteFile(exp, []byte(head+c.tail), 0o644); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(filepath.Join(dir, c.file), []byte(c.data), 0o644); err != nil {
				t.Fatal(err)
			}
			out := filepath.Join(dir, "out")
			d, _, errb := testDeps()
			if code := run([]string{"run", exp, "--out", out, "--quiet"}, d); code != 2 || !strings.Contains(errb.String(), filepath.Join(dir, c.want)) {
				t.Errorf("exit %d, stderr %q; want 2 and %s", code, errb.String(), c.want)
			}
			if _, err := os.Stat(out); !os.IsNotExist(err) {
				t.Errorf("run wrote %s", out)
			}
		})
	}
}
