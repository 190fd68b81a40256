package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Experiments whose memory estimate exceeds what the process may use are
// refused by check and run, naming the setting that drives the estimate;
// --memory-limit sets the budget (or none lifts the check).
func TestMemoryGuard(t *testing.T) {
	dir := t.TempDir()
	write := func(name, bin, failure string) string {
		p := filepath.Join(dir, name+".yaml")
		y := `name: ` + name + `
duration: 100s
warmup: 1s
bin: ` + bin + `
replicates: 1
seed: 1
topologies: [{name: ring, nodes: 6}]
traffic:
  matrix: uniform
  loads: [0.5]
  packet_size: {dist: fixed, bytes: 1000}
agents: [shortest-path]
failures: [` + failure + `]
`
		if err := os.WriteFile(p, []byte(y), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	tiny := write("tiny", "1s", "none")
	// a replay of periods matrices (one demand each) on a ring of nodes
	replay := func(name string, nodes, periods int) string {
		var b strings.Builder
		b.WriteString("t,source,target,rate_pps\n")
		for k := range periods {
			fmt.Fprintf(&b, "%dm,n%d,n%d,5\n", 5*k, k%nodes, (k+1)%nodes)
		}
		if err := os.WriteFile(filepath.Join(dir, name+".csv"), []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, name+".yaml")
		y := fmt.Sprintf("name: %s\nduration: 100s\nbin: 1s\ntopologies: [{name: ring, nodes: %d}]\n"+
			"traffic:\n  matrix: {file: %s.csv, period: 5m, speedup: 864}\nagents: [shortest-path]\n", name, nodes, name)
		if err := os.WriteFile(p, []byte(y), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	tests := []struct {
		name string
		args []string
		code int
		want string
	}{
		{"10us bins", []string{"check", write("fine-bins", "10us", "none"), "--memory-limit", "2GB"}, 2, "driven by bin: 10µs (1e+07 bins per run)"},
		{"1ns bins", []string{"check", write("finest-bins", "1ns", "none"), "--memory-limit", "16GB"}, 2, "bin: 1ns"},
		{"1ns mtbf", []string{"check", write("flapping", "1s", "{name: flap, random: {scope: links, mtbf: 1ns, mttr: 1ns}}"), "--memory-limit", "16GB"}, 2, "failures[0].random: about 6e+11 failure events per run"},
		{"100us mtbf", []string{"check", write("flapping2", "1s", "{name: flap, random: {scope: links, mtbf: 100us, mttr: 100us}}"), "--memory-limit", "2GB"}, 2, "driven by failures flap: mtbf 100µs"},
		{"run refused too", []string{"run", write("fine-bins-run", "10us", "none"), "--memory-limit", "2GB", "--out", filepath.Join(dir, "out")}, 2, "estimated peak memory"},
		{"small budget", []string{"check", tiny, "--memory-limit", "10MB"}, 2, "the process itself"},
		{"budget lifted", []string{"check", write("fine-bins2", "10us", "none"), "--memory-limit", "none"}, 0, "memory"},
		{"within budget", []string{"check", tiny, "--memory-limit", "1GB"}, 0, "may be used (--memory-limit)"},
		{"bad size", []string{"check", tiny, "--memory-limit", "lots"}, 2, "--memory-limit"},
		// a day of 5-minute matrices on 1,000 nodes: 2.6 GB a copy, refused
		// before validation builds one
		{"replay of 288 on 1000", []string{"check", replay("day-1000", 1000, 288), "--memory-limit", "none"}, 2,
			`day-1000.yaml:6:11: traffic.matrix: a replay of 289 periods on topology "ring(nodes=1000)" (1000 nodes) takes 2.61 GB as dense matrices`},
		// on 300 nodes 0.23 GB a copy: validation builds it, the guard weighs
		// the copies (validation's and each run's)
		{"replay of 288 on 300", []string{"check", replay("day-300", 300, 288), "--memory-limit", "500MB"}, 2,
			"driven by traffic.matrix: a replay of 289 periods (dense 300×300 matrices on topology ring(nodes=300))"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d, out, errb := testDeps()
			code := run(tc.args, d)
			if code != tc.code || !strings.Contains(out.String()+errb.String(), tc.want) {
				t.Errorf("exit %d, stdout %q, stderr %q; want %d and %q", code, out.String(), errb.String(), tc.code, tc.want)
			}
		})
	}
	if _, err := os.Stat(filepath.Join(dir, "out")); err == nil {
		t.Error("a refused run wrote its results folder")
	}
}
