package experiments

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"

	"github.com/goccy/go-yaml/ast"

	"hoplore/agents"
	"hoplore/internal/statefile"
	"hoplore/internal/yamlx"
)

// LearnedState is a training run's state file that an agent's start_from
// may load: what the checker keeps of it (the layout is package
// statefile's, written by `hoplore run`) and a digest of its contents, so
// that the experiment's hash changes with the training.
type LearnedState struct {
	path      string
	Digest    string // hex SHA-256 of the state file and its Q table
	Format    string
	Agent     string
	Topology  string
	Key       string // the topology key
	Replicate int
	RunIndex  int
	Table     string
	Objective string // the learner's, "" for delay
}

// startFromYAML is an agent's start_from: {results: DIR, agent: LABEL}.
type startFromYAML struct {
	Pos     yamlx.Pos    `yaml:"-"`
	Results yamlx.String `yaml:"results"`
	Agent   yamlx.String `yaml:"agent"`
}

// UnmarshalYAML implements the YAML library's node unmarshaler.
func (s *startFromYAML) UnmarshalYAML(n ast.Node) error {
	type plain startFromYAML
	var p plain
	if err := yamlx.DecodeNode(n, &p); err != nil {
		return err
	}
	*s = startFromYAML(p)
	s.Pos = nodePos(n)
	return nil
}

func (s *startFromYAML) at() yamlx.Pos { return s.Pos }

func (s *startFromYAML) store(ptr any) {
	*ptr.(**agents.Origin) = &agents.Origin{Results: s.Results.S, Agent: s.Agent.S}
}

// startStates reads the state files agent i (parameters ap) start_from
// names and keeps those of its label, by run index; an error at the field
// when the folder is missing, holds no state of that label, or holds one
// learned under another objective.
func (c *checker) startStates(i int, ap *agents.Params, at yamlx.Pos) ([]LearnedState, error) {
	o := ap.StartFrom
	dir := c.files.resolve(c.file, o.Results)
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return nil, c.errf(at, "agents[%d].start_from.results: %q is not a result folder", i, o.Results)
	}
	sd := filepath.Join(dir, statefile.Dir)
	ents, err := os.ReadDir(sd)
	if err != nil {
		return nil, c.errf(at, "agents[%d].start_from.results: %q holds no learned state (no state folder: was it written by hoplore run with a learning agent?)", i, o.Results)
	}
	hash, err := statefile.FolderHash(dir)
	if err != nil {
		return nil, c.errf(at, "agents[%d].start_from.results: %q is not a result folder (%v)", i, o.Results, err)
	}
	var refs []LearnedState
	labels := map[string]bool{}
	for _, e := range ents {
		name := e.Name()
		if !e.Type().IsRegular() || strings.HasPrefix(name, ".") || !strings.HasSuffix(name, ".json") {
			continue
		}
		p := filepath.Join(sd, name)
		info, b, err := statefile.Read(p)
		if errors.Is(err, fs.ErrNotExist) || errors.Is(err, fs.ErrPermission) {
			return nil, c.errf(at, "agents[%d].start_from: cannot read %s: %v", i, p, err)
		} else if err != nil {
			return nil, c.errf(at, "agents[%d].start_from: %s is not a state file of this version", i, p)
		}
		labels[info.Agent] = true
		if info.Agent != o.Agent {
			continue
		}
		if ap.Kind == agents.QRoutingKind || ap.Kind == agents.QNetworkKind {
			if got, want := agents.ObjectiveLabel(info.Objective), ap.Objective.String(); got != want {
				return nil, c.errf(at, "agents[%d].start_from: %q holds states of agent %q learned under objective %s, not %s", i, o.Results, o.Agent, got, want)
			}
		}
		if err := statefile.Check(p, info, hash); err != nil {
			return nil, c.errf(at, "agents[%d].start_from: %v", i, err)
		}
		r := LearnedState{path: p, Format: info.Format, Agent: info.Agent, Topology: info.Topology, Key: info.TopologyKey,
			Replicate: info.Replicate, RunIndex: info.RunIndex, Table: info.Table, Objective: info.Objective}
		h := sha256.New()
		h.Write(b)
		if tp := statefile.TablePath(p, info); tp != "" {
			tb, err := os.ReadFile(tp)
			if err != nil {
				return nil, c.errf(at, "agents[%d].start_from: cannot read the Q table of %s: %v", i, p, err)
			}
			h.Write(tb)
		}
		r.Digest = hex.EncodeToString(h.Sum(nil))
		refs = append(refs, r)
	}
	if len(refs) == 0 {
		have := make([]string, 0, len(labels))
		for l := range labels {
			have = append(have, l)
		}
		sort.Strings(have)
		return nil, c.errf(at, "agents[%d].start_from.agent: %q has no learned state of agent %q (it has: %s)", i, o.Results, o.Agent, strings.Join(have, ", "))
	}
	sort.Slice(refs, func(a, b int) bool { return refs[a].RunIndex < refs[b].RunIndex })
	return refs, nil
}

// pickState returns the state file a run of replicate rep on a topology
// with key starts from: the training run of the same replicate on a
// topology of the same key, else the lowest replicate there; among several
// (other loads or failure schedules) the first in the training's grid
// order. "" when none fits.
func pickState(refs []LearnedState, key string, rep int) string {
	best := -1
	for k, r := range refs {
		if r.Key != key {
			continue
		}
		if r.Replicate == rep {
			return r.path
		}
		if best < 0 || r.Replicate < refs[best].Replicate {
			best = k
		}
	}
	if best < 0 {
		return ""
	}
	return refs[best].path
}

// checkStartTopology reports an error when agent i's states include none
// learned on topology t.
func (c *checker) checkStartTopology(e *Experiment, t *Topology) error {
	for i, refs := range e.Starts {
		if refs == nil {
			continue
		}
		key := t.Graph.Key()
		if pickState(refs, key, 0) != "" {
			continue
		}
		var tops []string
		for _, r := range refs {
			if !slices.Contains(tops, r.Topology) {
				tops = append(tops, r.Topology)
			}
		}
		o := e.Agents[i].StartFrom
		return c.errf(c.at.starts[i], "agents[%d].start_from: %q holds no state of agent %q learned on topology %q (only on %s, another topology)",
			i, o.Results, o.Agent, t.Label, strings.Join(tops, ", "))
	}
	return nil
}
