package experiments

import (
	"strings"
	"testing"
)

const hashBase = `name: hashed
duration: 60s
seed: 7
topologies: [{name: ring, nodes: 6}]
traffic: {matrix: uniform, loads: [0.5, 0.9]}
agents:
  - shortest-path
  - {kind: q-routing, learning_rate: 0.7}
failures:
  - none
  - name: cut
    events: [{at: 30s, link: [n0, n1], action: down}]
`

// TestHashCoversTheParsedExperiment checks that the hash follows what
// decides the runs and nothing else.
func TestHashCoversTheParsedExperiment(t *testing.T) {
	base := mustParse(t, hashBase).Hash
	same := []struct{ name, src string }{
		{"comments and blank lines", "# a sweep\n" + strings.ReplaceAll(hashBase, "seed: 7\n", "seed: 7   # fixed\n\n")},
		{"description", hashBase + "description: another text\n"},
		{"key order", strings.Replace(hashBase, "name: hashed\nduration: 60s\n", "duration: 60s\nname: hashed\n", 1)},
		{"block instead of flow style", strings.Replace(hashBase, "traffic: {matrix: uniform, loads: [0.5, 0.9]}",
			"traffic:\n  matrix: uniform\n  loads:\n    - 0.5\n    - 0.9", 1)},
		{"defaults written out", strings.Replace(hashBase, "{kind: q-routing, learning_rate: 0.7}", "{kind: q-routing, learning_rate: 0.7, variant: plain}", 1)},
		{"another spelling of a value", strings.Replace(hashBase, "duration: 60s", "duration: 1m", 1)},
		{"a UTF-8 byte order mark", "\ufeff" + hashBase},
	}
	for _, tt := range same {
		if got := mustParse(t, tt.src).Hash; got != base {
			t.Errorf("%s: hash changed", tt.name)
		}
	}
	differ := []struct{ name, old, new string }{
		{"seed", "seed: 7", "seed: 8"},
		{"name", "name: hashed", "name: hashed2"},
		{"a load", "0.9]", "0.8]"},
		{"an agent parameter", "learning_rate: 0.7", "learning_rate: 0.6"},
		{"the topology", "nodes: 6", "nodes: 7"},
		{"a failure time", "at: 30s", "at: 31s"},
		{"duration", "duration: 60s", "duration: 61s"},
	}
	for _, tt := range differ {
		if got := mustParse(t, strings.Replace(hashBase, tt.old, tt.new, 1)).Hash; got == base {
			t.Errorf("%s changed and the hash did not", tt.name)
		}
	}
}

func mustParse(t *testing.T, src string) *Experiment {
	t.Helper()
	e, err := Parse("hashed.yaml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	return e
}
