package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"hoplore/results"
	"hoplore/results/resultstest"
)

// writeResults writes a small result folder with the results package:
// agents shortest-path and q-routing, three replicates each.
func writeResults(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	meta := results.Meta{Version: "test", Experiment: "square-sweep", ExperimentHash: "h"}
	if err := results.MarkDir(dir, meta); err != nil {
		t.Fatal(err)
	}
	net := resultstest.Net()
	cfg := resultstest.Config(net)
	for _, ag := range []string{"shortest-path", "q-routing"} {
		for rep := range 3 {
			r := resultstest.Run(net, rep, false)
			if ag == "q-routing" { // shift its delivery times so that the pair differs
				r.DeliverySum *= 0.9
			}
			if err := results.WritePart(dir, results.FromRun(resultstest.Dims(ag, 0.5, rep), net, cfg, r, 1, "test")); err != nil {
				t.Fatal(err)
			}
		}
	}
	if err := results.Finalize(dir, nil, meta); err != nil {
		t.Fatal(err)
	}
	return dir
}

func TestReportCommand(t *testing.T) {
	dir := writeResults(t)
	d, out, errb := testDeps()
	if code := run([]string{"report", dir}, d); code != 0 {
		t.Fatalf("exit %d, stderr %q", code, errb.String())
	}
	page := filepath.Join(dir, "report", "index.html")
	if !strings.Contains(out.String(), page) {
		t.Errorf("stdout %q does not name %s", out.String(), page)
	}
	for _, f := range []string{"index.html", "delivery-mean.svg", "delivery-mean.png", "loss.svg", "links.svg"} {
		if st, err := os.Stat(filepath.Join(dir, "report", f)); err != nil || st.Size() == 0 {
			t.Errorf("%s: %v", f, err)
		}
	}
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"no folder", []string{"report", filepath.Join(dir, "nothing")}, "not a result folder"},
		{"bad load", []string{"report", dir, "--links-load", "lots"}, "--links-load"},
		{"unknown cell", []string{"report", dir, "--links-topology", "nowhere", "--out", filepath.Join(dir, "x")}, "nowhere"},
		{"no argument", []string{"report"}, "accepts 1 arg"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d, _, errb := testDeps()
			if code := run(tc.args, d); code != 2 || !strings.Contains(errb.String(), tc.want) {
				t.Errorf("exit %d, stderr %q; want 2 and a message naming %q", code, errb.String(), tc.want)
			}
		})
	}
	if _, err := os.Stat(filepath.Join(dir, "x")); err == nil {
		t.Error("a refused report left its folder behind")
	}
}

func TestCompareCommand(t *testing.T) {
	dir := writeResults(t)
	d, out, errb := testDeps()
	if code := run([]string{"compare", dir, "--a", "q-routing", "--b", "shortest-path"}, d); code != 0 {
		t.Fatalf("exit %d, stderr %q", code, errb.String())
	}
	for _, s := range []string{"A = q-routing, B = shortest-path", "delivery mean (ms)", "loss (%)", "Holm", "compare.parquet"} {
		if !strings.Contains(out.String(), s) {
			t.Errorf("output lacks %q:\n%s", s, out.String())
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "compare.parquet")); err != nil {
		t.Error(err)
	}
	for _, args := range [][]string{
		{"compare", dir, "--a", "nobody", "--b", "shortest-path", "--out", filepath.Join(dir, "c2.parquet")},
		{"compare", dir, "--a", "q-routing", "--b", "q-routing", "--out", filepath.Join(dir, "c2.parquet")},
		{"compare", dir, "--a", "q-routing"},
	} {
		d, _, errb := testDeps()
		if code := run(args, d); code != 2 {
			t.Errorf("%v: exit %d (stderr %q), want 2", args, code, errb.String())
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "c2.parquet")); err == nil {
		t.Error("a refused comparison wrote its file")
	}
}
