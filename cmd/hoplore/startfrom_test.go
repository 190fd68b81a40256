package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"hoplore/results"
)

const trainYAML = `name: train
duration: 20s
warmup: 2s
bin: 1s
replicates: 2
seed: 3
topologies: [{name: ring, nodes: 6}]
traffic: {matrix: uniform, loads: [0.5]}
agents:
  - {kind: q-routing, label: trainee}
  - {kind: q-network, hidden: [4], label: net}
  - shortest-path
failures:
  - {name: link, each: links, at: 8s, until: 14s, sample: 1, seed: 2}
`

// Train on failures, test on others: a training run stores every learning
// run's final state; an experiment starting from it runs, refuses a missing
// folder, an unknown label and another topology with FILE:LINE:COL and exit
// status 2, writing nothing.
func TestTrainThenStartFrom(t *testing.T) {
	dir := t.TempDir()
	write := func(name, body string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	trained := filepath.Join(dir, "trained")
	hop(t, 0, "run", write("train.yaml", trainYAML), "--out", trained, "--quiet")
	states, err := results.ReadStates(trained)
	if err != nil {
		t.Fatal(err)
	}
	// 2 learners × 2 replicates; shortest-path learns nothing
	if len(states) != 4 {
		t.Fatalf("%d state files, want 4", len(states))
	}
	for _, s := range states {
		p := results.StatePath(trained, s.RunID)
		switch s.Agent {
		case "trainee":
			rows, err := results.ReadQTable(p, s)
			// 6 nodes × 5 destinations × 2 channels
			if err != nil || len(rows) != 60 {
				t.Errorf("%s: Q table of %d rows (%v), want 60", s.RunID, len(rows), err)
			}
		case "net":
			if s.Network == nil || len(s.Network.Params) != 6 {
				t.Errorf("%s: no network of 6 nodes", s.RunID)
			}
		default:
			t.Errorf("state of agent %q", s.Agent)
		}
	}

	// shards merged carry their states along
	train := filepath.Join(dir, "train.yaml")
	for _, k := range []string{"SLURM_ARRAY_TASK_ID", "SLURM_ARRAY_TASK_COUNT", "SLURM_ARRAY_TASK_MIN", "SLURM_ARRAY_TASK_MAX", "SLURM_ARRAY_TASK_STEP"} {
		t.Setenv(k, "")
	}
	s0, s1, merged := filepath.Join(dir, "s0"), filepath.Join(dir, "s1"), filepath.Join(dir, "merged")
	hop(t, 0, "run", train, "--out", s0, "--shard", "0/2", "--quiet")
	hop(t, 0, "run", train, "--out", s1, "--shard", "1/2", "--quiet")
	hop(t, 0, "merge", merged, s0, s1)
	if ms, err := results.ReadStates(merged); err != nil || len(ms) != 4 {
		t.Errorf("merged shards hold %d state files (%v), want 4", len(ms), err)
	}

	test := func(name, agents string) string {
		return write(name, strings.Replace(strings.Replace(trainYAML, "name: train", "name: "+strings.TrimSuffix(name, ".yaml"), 1),
			"agents:\n  - {kind: q-routing, label: trainee}\n  - {kind: q-network, hidden: [4], label: net}\n  - shortest-path\n", agents, 1))
	}
	good := test("test.yaml", "agents:\n  - {kind: q-routing, learning: frozen, start_from: {results: trained, agent: trainee}}\n"+
		"  - {kind: q-network, hidden: [4], start_from: {results: trained, agent: net}}\n")
	hop(t, 0, "run", good, "--out", filepath.Join(dir, "tested"), "--quiet")

	// a state copied from another training, and a Q table of another
	// experiment under a state file of this folder's, are refused
	foreign, swapped := filepath.Join(dir, "foreign"), filepath.Join(dir, "swapped")
	for _, d := range []string{foreign, swapped} {
		copyDir(t, trained, d)
	}
	var trainee string
	for _, s := range states {
		if s.Agent == "trainee" {
			trainee = results.StatePath(foreign, s.RunID)
			break
		}
	}
	b, _ := os.ReadFile(trainee)
	hash := states[0].ExperimentHash
	os.WriteFile(trainee, []byte(strings.Replace(string(b), hash, "0123abcd", 1)), 0o644)
	for _, p := range append([]string{filepath.Join(swapped, results.MarkFile)}, statePaths(t, swapped)...) {
		b, _ := os.ReadFile(p)
		os.WriteFile(p, []byte(strings.ReplaceAll(string(b), hash, "4567cdef")), 0o644)
	}

	bad := []struct {
		name, agents, want string
	}{
		{"foreign.yaml", "agents: [{kind: q-routing, start_from: {results: foreign, agent: trainee}}]\n",
			`foreign.yaml:9:40: agents[0].start_from: statefile: ` + trainee + ` was written by experiment "train" (hash 0123abcd), not by the one whose results hold it (hash ` + hash + `)`},
		{"swapped.yaml", "agents: [{kind: q-routing, start_from: {results: swapped, agent: trainee}}]\n",
			`.qtable.parquet: Q table of experiment hash "` + hash + `", its state file `},
		{"missing.yaml", "agents: [{kind: q-routing, start_from: {results: nowhere, agent: trainee}}]\n",
			`missing.yaml:9:40: agents[0].start_from.results: "nowhere" is not a result folder`},
		{"label.yaml", "agents: [{kind: q-routing, start_from: {results: trained, agent: trainer}}]\n",
			`label.yaml:9:40: agents[0].start_from.agent: "trained" has no learned state of agent "trainer" (it has: net, trainee)`},
		{"other-topology.yaml", "agents: [{kind: q-routing, start_from: {results: trained, agent: trainee}}]\n",
			`other-topology.yaml:9:40: agents[0].start_from: "trained" holds no state of agent "trainee" learned on topology "ring(nodes=7)"`},
	}
	for _, b := range bad {
		p := test(b.name, b.agents)
		if b.name == "other-topology.yaml" {
			body, _ := os.ReadFile(p)
			os.WriteFile(p, []byte(strings.Replace(string(body), "nodes: 6", "nodes: 7", 1)), 0o644)
		}
		out := filepath.Join(dir, "out-"+b.name)
		_, errb := hop(t, 2, "run", p, "--out", out)
		if !strings.Contains(errb, b.want) {
			t.Errorf("%s: stderr %q, want %q", b.name, errb, b.want)
		}
		if _, err := os.Stat(out); !os.IsNotExist(err) {
			t.Errorf("%s: %s was created", b.name, out)
		}
	}
}

// A state learned under objective mix carries its loss and utilisation
// tables: the Q table has them (utilisation estimates > 0 on a loaded
// ring), a frozen run of the same objective starts from it, and a
// start_from whose objective differs is refused at start_from with exit
// status 2, writing nothing.
func TestStartFromObjective(t *testing.T) {
	dir := t.TempDir()
	write := func(name, body string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	const mixAgent = "{kind: q-routing, variant: dual, objective: {mix: {delay: 1, loss: 5, utilisation: 1}}"
	body := func(name, agent string) string {
		return "name: " + name + "\nduration: 10s\nwarmup: 1s\nbin: 1s\nseed: 3\ntopologies: [{name: ring, nodes: 6}]\n" +
			"traffic: {matrix: uniform, loads: [0.5]}\nagents:\n  - " + agent + "\n"
	}
	trained := filepath.Join(dir, "trained")
	hop(t, 0, "run", write("train.yaml", body("train", mixAgent+", label: trainee}")), "--out", trained, "--quiet")
	states, err := results.ReadStates(trained)
	if err != nil || len(states) != 1 {
		t.Fatalf("%d state files (%v), want 1", len(states), err)
	}
	s := states[0]
	if s.Objective != "mix/delay=1/loss=5/utilisation=1" {
		t.Errorf("state objective %q, want mix/delay=1/loss=5/utilisation=1", s.Objective)
	}
	rows, err := results.ReadQTable(results.StatePath(trained, s.RunID), s)
	if err != nil {
		t.Fatal(err)
	}
	busy := 0
	for _, r := range rows {
		if r.Utilisation > 0 {
			busy++
		}
	}
	if busy == 0 {
		t.Errorf("no utilisation estimate above 0 in %d rows", len(rows))
	}
	hop(t, 0, "run", write("test.yaml", body("test", mixAgent+", learning: frozen, start_from: {results: trained, agent: trainee}}")),
		"--out", filepath.Join(dir, "tested"), "--quiet")
	out := filepath.Join(dir, "out-other")
	_, errb := hop(t, 2, "run", write("other.yaml", body("other", "{kind: q-routing, variant: dual, objective: loss, start_from: {results: trained, agent: trainee}}")), "--out", out)
	want := `other.yaml:9:67: agents[0].start_from: "trained" holds states of agent "trainee" learned under objective mix/delay=1/loss=5/utilisation=1, not loss`
	if !strings.Contains(errb, want) {
		t.Errorf("stderr %q, want %q", errb, want)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("%s was created", out)
	}
}

// copyDir copies the files of folder src, one level of subfolders deep,
// into dst.
func copyDir(t *testing.T, src, dst string) {
	t.Helper()
	err := filepath.WalkDir(src, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(src, p)
		if d.IsDir() {
			return os.MkdirAll(filepath.Join(dst, rel), 0o755)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		return os.WriteFile(filepath.Join(dst, rel), b, 0o644)
	})
	if err != nil {
		t.Fatal(err)
	}
}

// statePaths lists the state files (JSON) of result folder dir.
func statePaths(t *testing.T, dir string) []string {
	t.Helper()
	ps, err := filepath.Glob(filepath.Join(dir, results.StateDir, "*.json"))
	if err != nil || len(ps) == 0 {
		t.Fatalf("no state files in %s: %v", dir, err)
	}
	return ps
}
