package experiments

import (
	"regexp"
	"strings"
	"time"

	"hoplore/agents"
	"hoplore/internal/yamlx"
	"hoplore/optimum"
	"hoplore/sim"
)

// checker turns the raw file into an Experiment, checking as it goes: one
// method per section of the file (this file: the top level), then the
// names the sections use resolved on every topology (resolve.go).
type checker struct {
	file  string
	files fileSource
	raw   *fileYAML
	names []string // their paths as written
	at    where
}

// where holds the positions of what the per-topology resolution may find
// wrong, recorded while the sections are checked, so that resolving never
// reads the raw file.
type where struct {
	traffic  yamlx.Pos      // the matrix: value, else the traffic section
	pairs    [][2]yamlx.Pos // from and to of each traffic pair
	hot      []yamlx.Pos    // each hotspot node
	agents   []yamlx.Pos    // each agent entry
	failures []failureWhere // one per Experiment.Failures entry
	starts   []yamlx.Pos    // each agent's start_from value (zero without)
}

type failureWhere struct {
	random     yamlx.Pos     // the random: mapping
	groupLinks [][]yamlx.Pos // each link of each group, in Failure.Groups order
	groupOf    []yamlx.Pos   // each geographic group's node (zero for listed groups)
	elements   []yamlx.Pos   // each event's node or link value
	each       yamlx.Pos     // the each field
}

func (c *checker) errf(pos yamlx.Pos, format string, args ...any) error {
	return yamlx.Errorf(c.file, pos, format, args...)
}

var top = yamlx.Pos{Line: 1, Col: 1}

var nameRE = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._-]*$`)

func (c *checker) experiment() (*Experiment, error) {
	r := c.raw
	e := &Experiment{}
	if !r.Name.Set || r.Name.S == "" {
		return nil, c.errf(pos(r.Name.Pos), "name: required (letters, digits, '.', '_', '-')")
	}
	if !nameRE.MatchString(r.Name.S) {
		return nil, c.errf(r.Name.Pos, "name: %q may hold only letters, digits, '.', '_' and '-' and must start with a letter or digit", r.Name.S)
	}
	e.Name = r.Name.S
	e.Description = r.Description.S

	if !r.Duration.Set {
		return nil, c.errf(top, "duration: required (simulated time per run, e.g. 600s)")
	}
	if r.Duration.D <= 0 {
		return nil, c.errf(r.Duration.Pos, "duration: must be positive, got %v", r.Duration.D)
	}
	e.Duration = sim.Time(r.Duration.D)
	if r.Warmup.Set {
		if r.Warmup.D < 0 {
			return nil, c.errf(r.Warmup.Pos, "warmup: must not be negative, got %v", r.Warmup.D)
		}
		if r.Warmup.D >= r.Duration.D {
			return nil, c.errf(r.Warmup.Pos, "warmup: %v must be shorter than duration %v", r.Warmup.D, r.Duration.D)
		}
		e.Warmup = sim.Time(r.Warmup.D)
	}
	e.Bin = e.Duration / DefaultBins
	if r.Bin.Set {
		if r.Bin.D <= 0 {
			return nil, c.errf(r.Bin.Pos, "bin: must be positive, got %v", r.Bin.D)
		}
		if r.Bin.D > r.Duration.D {
			return nil, c.errf(r.Bin.Pos, "bin: %v must not exceed duration %v", r.Bin.D, r.Duration.D)
		}
		e.Bin = sim.Time(r.Bin.D)
	}
	if e.Bin <= 0 {
		e.Bin = e.Duration
	}
	if bins := (e.Duration + e.Bin - 1) / e.Bin; bins > MaxBins {
		return nil, c.errf(pos(orPos(r.Bin.Pos, r.Duration.Pos)), "bin: %v makes %d bins of a %v run; at most %d", time.Duration(e.Bin), bins, time.Duration(e.Duration), MaxBins)
	}
	e.Replicates = DefaultReplicates
	if r.Replicates.Set {
		if r.Replicates.V < 1 {
			return nil, c.errf(r.Replicates.Pos, "replicates: must be at least 1, got %d", r.Replicates.V)
		}
		if r.Replicates.V > MaxRuns {
			return nil, c.errf(r.Replicates.Pos, "replicates: at most %d (runs in all), got %d", MaxRuns, r.Replicates.V)
		}
		e.Replicates = r.Replicates.V
	}
	e.Seed = DefaultSeed
	if r.Seed.Set {
		e.Seed = r.Seed.V
	}
	e.HopLimit = sim.DefaultHopLimit
	if r.HopLimit.Set {
		if r.HopLimit.V < 1 || r.HopLimit.V > 65535 {
			return nil, c.errf(r.HopLimit.Pos, "hop_limit: must be in 1..65535, got %d", r.HopLimit.V)
		}
		e.HopLimit = r.HopLimit.V
	}

	e.Optimum = Optimum{Compute: true, Epsilon: optimum.DefaultEpsilon}
	if o := r.Optimum; o.Set {
		if o.Compute.Set {
			e.Optimum.Compute, e.Optimum.Always = o.Compute.V, o.Compute.V
		}
		if o.Epsilon.Set {
			if err := optimum.CheckEpsilon(o.Epsilon.V); err != nil {
				return nil, c.errf(o.Epsilon.Pos, "optimum: epsilon: %v is outside (0, 0.5]", o.Epsilon.V)
			}
			e.Optimum.Epsilon = o.Epsilon.V
		}
	}

	if err := c.topologies(e); err != nil {
		return nil, err
	}
	if err := c.traffic(e); err != nil {
		return nil, err
	}
	if err := c.agents(e); err != nil {
		return nil, err
	}
	if err := c.failures(e); err != nil {
		return nil, err
	}
	if err := c.conditions(e); err != nil {
		return nil, err
	}
	cells := 0
	for _, t := range e.Topologies {
		cells += e.numLoads() * schedulesOn(e, t.Graph) * len(e.Agents)
	}
	if runs := cells * e.Replicates; runs > MaxRuns {
		return nil, c.errf(pos(r.Replicates.Pos), "replicates: %d cells (topologies × loads × failure schedules × agents) × %d replicates = %d runs; at most %d",
			cells, e.Replicates, runs, MaxRuns)
	}
	for _, t := range e.Topologies {
		if err := c.bounded(e, t); err != nil {
			return nil, err
		}
		t.Net = sim.Compile(t.Graph)
		if err := c.resolve(e, t); err != nil {
			return nil, err
		}
		// Build every agent once on every topology, so that a problem only
		// the agent can see (one that depends on the network) is reported
		// now rather than when its runs start.
		for i, p := range e.Agents {
			if _, err := agents.New(p, t.Net); err != nil {
				return nil, c.errf(c.at.agents[i], "agents[%d]: on topology %q: %s", i, t.Label, strings.TrimPrefix(err.Error(), "agents: "))
			}
		}
	}
	e.TopologyFiles = c.names
	return e, nil
}

// pos returns p, or the top of the file when p is unknown.
func pos(p yamlx.Pos) yamlx.Pos {
	if p.Line == 0 {
		return top
	}
	return p
}

// bounded checks the sizes that depend on topology t as well as on the
// file: random failure events per run and the agents' tables.
func (c *checker) bounded(e *Experiment, t *Topology) error {
	for i, f := range e.Failures {
		if f.Random == nil {
			continue
		}
		elements, what := len(t.Graph.Links), "links"
		if f.Random.Scope == "nodes" {
			elements, what = len(t.Graph.Nodes), "nodes"
		}
		events := 2 * float64(elements) * e.Duration.Seconds() / (f.Random.MTBF + f.Random.MTTR).Seconds()
		if events > MaxFailureEvents {
			return c.errf(c.at.failures[i].random, "failures[%d].random: about %.3g failure events per run on topology %q (%d %s, each down and up every mtbf + mttr); at most %d: raise mtbf",
				i, events, t.Label, elements, what, MaxFailureEvents)
		}
	}
	size := agents.RunSize{Nodes: len(t.Graph.Nodes), Links: len(t.Graph.Links), Channels: 2 * len(t.Graph.Links), Seconds: e.Duration.Seconds()}
	for i, p := range e.Agents {
		if b := p.Estimate(size).Bytes; b > MaxAgentBytes {
			return c.errf(c.at.agents[i], "agents[%d]: on topology %q its tables would take about %.3g GB; at most %.3g GB", i, t.Label, b/1e9, MaxAgentBytes/1e9)
		}
	}
	return nil
}

// schedulesOn returns the number of failure schedules e's failures make on
// g: one each, a family one per element (or its sample).
func schedulesOn(e *Experiment, g *sim.Graph) int {
	n := 0
	for _, f := range e.Failures {
		if f.Each == nil {
			n++
			continue
		}
		k := 0
		switch f.Each.Kind {
		case "links":
			k = len(g.Links)
		case "nodes":
			k = len(g.Nodes)
		case "groups":
			k = len(f.Groups)
		}
		if f.Each.Sample > 0 && f.Each.Sample < k {
			k = f.Each.Sample
		}
		n += k
	}
	return n
}
