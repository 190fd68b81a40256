package main

import (
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
