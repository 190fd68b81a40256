package experiments

import (
	"errors"
	"fmt"
	"math"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	"hoplore/agents"
	"hoplore/internal/yamlx"
	"hoplore/sim"
	"hoplore/topologies"
)

// checker turns the raw file into an Experiment, checking as it goes.
type checker struct {
	file  string
	files fileSource
	raw   *fileYAML
	extra [][]byte // bytes of referenced topology files, for the hash
	names []string // their paths as written
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
	e.Replicates = DefaultReplicates
	if r.Replicates.Set {
		if r.Replicates.V < 1 {
			return nil, c.errf(r.Replicates.Pos, "replicates: must be at least 1, got %d", r.Replicates.V)
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
	for _, t := range e.Topologies {
		if err := c.resolve(e, t); err != nil {
			return nil, err
		}
		// Build every agent once on every topology, so that a problem only
		// the agent can see (one that depends on the network) is reported
		// now rather than when its runs start.
		for i, p := range e.Agents {
			if _, err := agents.New(p, t.Net); err != nil {
				return nil, c.errf(c.raw.Agents.Items[i].Pos, "agents[%d]: on topology %q: %s", i, t.Label, strings.TrimPrefix(err.Error(), "agents: "))
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

// ---- topologies ----

func (c *checker) topologies(e *Experiment) error {
	r := c.raw
	if !r.Topologies.Set || len(r.Topologies.Items) == 0 {
		return c.errf(pos(r.Topologies.Pos), "topologies: at least one topology is required")
	}
	seen := map[string]bool{}
	for i := range r.Topologies.Items {
		t := &r.Topologies.Items[i]
		g, label, err := c.topology(i, t)
		if err != nil {
			return err
		}
		if t.Label.Set {
			if strings.TrimSpace(t.Label.S) == "" {
				return c.errf(t.Label.Pos, "topologies[%d].label: must not be empty", i)
			}
			label = t.Label.S
			g.Name = label
		}
		if err := g.Validate(); err != nil {
			var ye *yamlx.Error
			if errors.As(err, &ye) {
				return ye
			}
			return c.errf(t.Pos, "topologies[%d]: %s", i, strings.TrimPrefix(err.Error(), "sim: "))
		}
		if seen[label] {
			return c.errf(t.Pos, "topologies[%d]: topology %q is listed twice; give one a label:", i, label)
		}
		seen[label] = true
		e.Topologies = append(e.Topologies, &Topology{Label: label, Graph: g, Net: sim.Compile(g)})
	}
	return nil
}

func (c *checker) topology(i int, t *topoYAML) (*sim.Graph, string, error) {
	switch {
	case t.HasName:
		known := false
		var names []string
		for _, info := range topologies.List() {
			names = append(names, info.Name)
			known = known || info.Name == t.Name.S
		}
		if !known {
			return nil, "", c.errf(t.Name.Pos, "topologies[%d]: unknown topology %q (bundled: %s)", i, t.Name.S, strings.Join(names, ", "))
		}
		params := make(map[string]float64, len(t.Params))
		for _, p := range t.Params {
			params[p.Name] = p.Value.V
		}
		g, err := topologies.Generate(t.Name.S, params)
		if err != nil {
			var pe *topologies.ParamError
			if errors.As(err, &pe) {
				at := t.Name.Pos
				for _, p := range t.Params {
					if p.Name == pe.Param {
						at = p.Value.Pos
					}
				}
				return nil, "", c.errf(at, "topologies[%d]: %s: %s", i, pe.Param, pe.Msg)
			}
			return nil, "", c.errf(t.Name.Pos, "topologies[%d]: %s", i, strings.TrimPrefix(err.Error(), "topologies: "))
		}
		return g, topologies.Label(t.Name.S, params), nil
	case t.File.Set:
		if t.File.S == "" {
			return nil, "", c.errf(t.File.Pos, "topologies[%d]: file: empty path", i)
		}
		p := c.files.resolve(c.file, t.File.S)
		data, err := c.files.read(p)
		if err != nil {
			return nil, "", c.errf(t.File.Pos, "topologies[%d]: file: cannot read %q: %v", i, t.File.S, unwrapPathErr(err))
		}
		c.extra = append(c.extra, data)
		c.names = append(c.names, t.File.S)
		g, err := c.files.load(p, data)
		if err != nil {
			var ye *yamlx.Error
			if errors.As(err, &ye) {
				return nil, "", ye
			}
			return nil, "", c.errf(t.File.Pos, "topologies[%d]: file %q: %v", i, t.File.S, err)
		}
		label := g.Name
		if label == "" {
			label = baseName(t.File.S)
			g.Name = label
		}
		return g, label, nil
	default:
		g, err := topologies.BuildFile(c.file, t.Inline)
		if err != nil {
			var ye *yamlx.Error
			if errors.As(err, &ye) {
				return nil, "", ye
			}
			return nil, "", c.errf(t.InlPos, "topologies[%d]: inline: %v", i, err)
		}
		if !t.Inline.Name.Set || t.Inline.Name.S == "" {
			g.Name = fmt.Sprintf("inline-%d", i)
		}
		return g, g.Name, nil
	}
}

// ---- traffic ----

func (c *checker) traffic(e *Experiment) error {
	t := &c.raw.Traffic
	tr := &e.Traffic
	tr.Matrix = "uniform"
	if t.Pairs.Set && !t.Matrix.Set {
		tr.Matrix = "pairs"
	}
	if t.Matrix.Set {
		switch t.Matrix.S {
		case "uniform", "gravity", "hotspot", "pairs":
			tr.Matrix = t.Matrix.S
		default:
			return c.errf(t.Matrix.Pos, "traffic.matrix: unknown matrix %q (known: uniform, gravity, hotspot, pairs)", t.Matrix.S)
		}
	}
	// pairs
	if t.Pairs.Set && tr.Matrix != "pairs" {
		return c.errf(t.Pairs.Pos, "traffic.pairs: only with matrix: pairs (matrix is %s)", tr.Matrix)
	}
	if tr.Matrix == "pairs" {
		if len(t.Pairs.Items) == 0 {
			return c.errf(pos(orPos(t.Pairs.Pos, t.Matrix.Pos)), "traffic.pairs: matrix pairs needs at least one {from, to, rate}")
		}
		withRate := t.Pairs.Items[0].Rate.Set
		for i, p := range t.Pairs.Items {
			if !p.From.Set || p.From.S == "" {
				return c.errf(p.Pos, "traffic.pairs[%d].from: required", i)
			}
			if !p.To.Set || p.To.S == "" {
				return c.errf(p.Pos, "traffic.pairs[%d].to: required", i)
			}
			if p.From.S == p.To.S {
				return c.errf(p.To.Pos, "traffic.pairs[%d].to: a pair needs two different nodes, got %q twice", i, p.To.S)
			}
			if p.Rate.Set != withRate {
				return c.errf(p.Pos, "traffic.pairs[%d]: give a rate on every pair or on none", i)
			}
			if p.Rate.Set && !(p.Rate.PerSecond > 0) {
				return c.errf(p.Rate.Pos, "traffic.pairs[%d].rate: must be positive, got %g/s", i, p.Rate.PerSecond)
			}
			tr.Pairs = append(tr.Pairs, Pair{From: p.From.S, To: p.To.S, Rate: p.Rate.PerSecond})
		}
		tr.Absolute = withRate && !t.Loads.Set
	}
	// hotspot
	if t.Hotspot.Set && tr.Matrix != "hotspot" {
		return c.errf(t.Hotspot.Pos, "traffic.hotspot: only with matrix: hotspot (matrix is %s)", tr.Matrix)
	}
	tr.Hotspot.Fraction = DefaultHotspotFraction
	if t.Hotspot.Fraction.Set {
		f := t.Hotspot.Fraction
		if f.V < 0 || f.V > 1 {
			return c.errf(f.Pos, "traffic.hotspot.fraction: must be in [0, 1], got %g", f.V)
		}
		tr.Hotspot.Fraction = f.V
	}
	if t.Hotspot.Nodes.Set && len(t.Hotspot.Nodes.Items) == 0 {
		return c.errf(t.Hotspot.Nodes.Pos, "traffic.hotspot.nodes: list at least one node, or leave nodes out for the best-connected node")
	}
	for _, n := range t.Hotspot.Nodes.Items {
		if slices.Contains(tr.Hotspot.Nodes, n.S) {
			return c.errf(n.Pos, "traffic.hotspot.nodes: %q is listed twice", n.S)
		}
		tr.Hotspot.Nodes = append(tr.Hotspot.Nodes, n.S)
	}
	// packet size
	if err := c.size(e); err != nil {
		return err
	}
	if t.Flows.Set {
		if t.Flows.V < 1 || t.Flows.V > 1<<20 {
			return c.errf(t.Flows.Pos, "traffic.flows: must be in 1..1048576, got %d", t.Flows.V)
		}
		tr.Flows = t.Flows.V
	}
	for i, ph := range t.Phases.Items {
		if !ph.At.Set {
			return c.errf(ph.Pos, "traffic.phases[%d].at: required: when the phase starts", i)
		}
		if !ph.Factor.Set {
			return c.errf(ph.Pos, "traffic.phases[%d].factor: required: what every rate is multiplied by from then on", i)
		}
		at := sim.Time(ph.At.D)
		if at < 0 || at >= sim.Time(e.Duration) {
			return c.errf(ph.At.Pos, "traffic.phases[%d].at: must be in [0, duration), got %v", i, ph.At.D)
		}
		if i > 0 && at <= tr.Phases[i-1].At {
			return c.errf(ph.At.Pos, "traffic.phases[%d].at: phases must be in increasing time order", i)
		}
		if ph.Factor.V < 0 || ph.Factor.V > 1000 {
			return c.errf(ph.Factor.Pos, "traffic.phases[%d].factor: must be in [0, 1000], got %g", i, ph.Factor.V)
		}
		tr.Phases = append(tr.Phases, sim.RatePhase{At: at, Factor: ph.Factor.V})
	}
	// loads
	switch {
	case tr.Absolute:
	case !t.Loads.Set || len(t.Loads.Items) == 0:
		return c.errf(pos(orPos(t.Loads.Pos, t.Pos)), "traffic.loads: required: a list of normalised loads such as [0.3, 0.7, 1.0] (1.0 saturates the busiest channel under shortest-path routing)")
	default:
		for i, l := range t.Loads.Items {
			if !(l.V > 0) {
				return c.errf(l.Pos, "traffic.loads[%d]: must be positive, got %g", i, l.V)
			}
			if slices.Contains(e.Loads, l.V) {
				return c.errf(l.Pos, "traffic.loads[%d]: %g is listed twice", i, l.V)
			}
			e.Loads = append(e.Loads, l.V)
		}
	}
	return nil
}

func orPos(ps ...yamlx.Pos) yamlx.Pos {
	for _, p := range ps {
		if p.Line != 0 {
			return p
		}
	}
	return yamlx.Pos{}
}

func (c *checker) size(e *Experiment) error {
	s := &c.raw.Traffic.PacketSize
	d := &e.Traffic.Size
	if !s.Set {
		*d = sim.SizeDist{Kind: sim.Fixed, Bytes: DefaultPacketBytes}
		return nil
	}
	type field struct {
		name string
		set  bool
		pos  yamlx.Pos
	}
	all := []field{
		{"bytes", s.Bytes.Set, s.Bytes.Pos},
		{"mean_bytes", s.MeanBytes.Set, s.MeanBytes.Pos},
		{"small_bytes", s.SmallBytes.Set, s.SmallBytes.Pos},
		{"large_bytes", s.LargeBytes.Set, s.LargeBytes.Pos},
		{"large_fraction", s.LargeFraction.Set, s.LargeFraction.Pos},
	}
	var want []string
	switch s.Dist.S {
	case "fixed":
		want = []string{"bytes"}
	case "exponential":
		want = []string{"mean_bytes"}
	case "bimodal":
		want = []string{"small_bytes", "large_bytes", "large_fraction"}
	case "":
		return c.errf(orPos(s.Dist.Pos, s.Pos), "traffic.packet_size.dist: required (fixed, exponential or bimodal)")
	default:
		return c.errf(s.Dist.Pos, "traffic.packet_size.dist: unknown distribution %q (known: fixed, exponential, bimodal)", s.Dist.S)
	}
	for _, f := range all {
		ok := slices.Contains(want, f.name)
		if f.set && !ok {
			return c.errf(f.pos, "traffic.packet_size.%s: not a field of dist %s (fields: %s)", f.name, s.Dist.S, strings.Join(want, ", "))
		}
		if !f.set && ok {
			return c.errf(s.Pos, "traffic.packet_size.%s: required for dist %s", f.name, s.Dist.S)
		}
	}
	posInt := func(name string, v yamlx.Int) error {
		if v.V < 1 {
			return c.errf(v.Pos, "traffic.packet_size.%s: must be at least 1 byte, got %d", name, v.V)
		}
		return nil
	}
	switch s.Dist.S {
	case "fixed":
		if err := posInt("bytes", s.Bytes); err != nil {
			return err
		}
		*d = sim.SizeDist{Kind: sim.Fixed, Bytes: s.Bytes.V}
	case "exponential":
		if !(s.MeanBytes.V >= 1) {
			return c.errf(s.MeanBytes.Pos, "traffic.packet_size.mean_bytes: must be at least 1 byte, got %g", s.MeanBytes.V)
		}
		*d = sim.SizeDist{Kind: sim.Exponential, MeanBytes: s.MeanBytes.V}
	case "bimodal":
		if err := posInt("small_bytes", s.SmallBytes); err != nil {
			return err
		}
		if err := posInt("large_bytes", s.LargeBytes); err != nil {
			return err
		}
		if f := s.LargeFraction; f.V < 0 || f.V > 1 {
			return c.errf(f.Pos, "traffic.packet_size.large_fraction: must be in [0, 1], got %g", f.V)
		}
		*d = sim.SizeDist{Kind: sim.Bimodal, SmallBytes: s.SmallBytes.V, LargeBytes: s.LargeBytes.V, LargeFraction: s.LargeFraction.V}
	}
	if s.Redraw.Set {
		switch s.Redraw.S {
		case "per-hop":
			e.Traffic.Redraw = true
		case "none":
		default:
			return c.errf(s.Redraw.Pos, "traffic.packet_size.redraw: %q is not per-hop or none", s.Redraw.S)
		}
	}
	return nil
}

// ---- agents ----

func (c *checker) agents(e *Experiment) error {
	r := c.raw
	if !r.Agents.Set || len(r.Agents.Items) == 0 {
		return c.errf(pos(r.Agents.Pos), "agents: at least one agent is required")
	}
	seen := map[string]int{}
	for i := range r.Agents.Items {
		a := &r.Agents.Items[i]
		p, err := c.agent(i, a)
		if err != nil {
			return err
		}
		label := p.Canonical()
		if j, dup := seen[label]; dup {
			return c.errf(a.Pos, "agents[%d]: same agent as agents[%d] (%s); give one a label:", i, j, label)
		}
		seen[label] = i
		e.Agents = append(e.Agents, p)
	}
	return nil
}

func (c *checker) agent(i int, a *agentYAML) (agents.Params, error) {
	known := strings.Join(agents.Kinds(), ", ")
	if !a.Kind.Set || a.Kind.S == "" {
		return agents.Params{}, c.errf(a.Pos, "agents[%d].kind: required (known: %s)", i, known)
	}
	kind, ok := agents.Lookup(a.Kind.S)
	if !ok {
		return agents.Params{}, c.errf(a.Kind.Pos, "agents[%d].kind: unknown agent kind %q (known: %s)", i, a.Kind.S, known)
	}
	where := map[string]yamlx.Pos{"kind": a.Kind.Pos, "label": a.Label.Pos}
	for _, v := range a.Fields {
		if _, ok := kind.Field(v.Name); !ok {
			return agents.Params{}, c.errf(v.Value.at(), "agents[%d].%s: not a field of kind %s (fields: %s)", i, v.Name, kind.Name,
				strings.Join(append([]string{"kind", "label"}, agents.Fields(kind.Name)...), ", "))
		}
		where[v.Name] = v.Value.at()
	}
	p := agents.Defaults(kind.Name)
	if a.Label.Set {
		if strings.TrimSpace(a.Label.S) == "" {
			return agents.Params{}, c.errf(a.Label.Pos, "agents[%d].label: must not be empty", i)
		}
		p.Label = a.Label.S
	}
	for _, v := range a.Fields {
		if cs, ok := v.Value.(*consensusYAML); ok {
			if !cs.Every.Set {
				return agents.Params{}, c.errf(cs.Pos, "agents[%d].consensus.every: required (interval between rounds, e.g. 1s)", i)
			}
			if cs.Weight.Set {
				where["consensus.weight"] = cs.Weight.Pos
			}
			where["consensus.every"] = cs.Every.Pos
			where["consensus.split_horizon"] = cs.Pos
		}
		f, _ := kind.Field(v.Name)
		v.Value.store(f.Ptr(&p))
	}
	if err := p.Validate(); err != nil {
		var pe *agents.ParamError
		if errors.As(err, &pe) {
			at, ok := where[pe.Field]
			if !ok {
				at, ok = where[strings.SplitN(pe.Field, ".", 2)[0]]
			}
			if !ok {
				at = a.Pos
			}
			return agents.Params{}, c.errf(at, "agents[%d].%s: %s", i, pe.Field, pe.Msg)
		}
		return agents.Params{}, c.errf(a.Pos, "agents[%d]: %v", i, err)
	}
	return p, nil
}

// ---- failures ----

func (c *checker) failures(e *Experiment) error {
	r := c.raw
	if !r.Failures.Set {
		e.Failures = []*Failure{{Name: "none"}}
		return nil
	}
	if len(r.Failures.Items) == 0 {
		return c.errf(r.Failures.Pos, "failures: list at least one schedule (`none` for no failures)")
	}
	seen := map[string]bool{}
	for i := range r.Failures.Items {
		f := &r.Failures.Items[i]
		fl, err := c.failure(e, i, f)
		if err != nil {
			return err
		}
		if seen[fl.Name] {
			return c.errf(f.Pos, "failures[%d]: schedule name %q is used twice", i, fl.Name)
		}
		seen[fl.Name] = true
		e.Failures = append(e.Failures, fl)
	}
	return nil
}

func (c *checker) failure(e *Experiment, i int, f *failureYAML) (*Failure, error) {
	if f.None {
		return &Failure{Name: "none"}, nil
	}
	fl := &Failure{Detection: DefaultDetection}
	if !f.Name.Set || f.Name.S == "" {
		return nil, c.errf(f.Pos, "failures[%d].name: required", i)
	}
	if f.Name.S == "none" {
		return nil, c.errf(f.Name.Pos, "failures[%d].name: \"none\" is reserved for the schedule without failures", i)
	}
	fl.Name = f.Name.S
	if f.Detection.Set {
		if f.Detection.D < 0 {
			return nil, c.errf(f.Detection.Pos, "failures[%d].detection: must not be negative, got %v", i, f.Detection.D)
		}
		fl.Detection = sim.Time(f.Detection.D)
	}
	if !f.Events.Set && !f.Random.Set {
		return nil, c.errf(f.Pos, "failures[%d]: give events, random or both (or use `none`)", i)
	}
	for _, g := range f.Groups.Groups {
		if slices.ContainsFunc(fl.Groups, func(h Group) bool { return h.Name == g.Name }) {
			return nil, c.errf(g.Pos, "failures[%d].groups: group %q is defined twice", i, g.Name)
		}
		gr := Group{Name: g.Name}
		if len(g.Links) == 0 {
			return nil, c.errf(g.Pos, "failures[%d].groups.%s: list at least one link [a, b]", i, g.Name)
		}
		for _, l := range g.Links {
			if len(l.Items) != 2 {
				return nil, c.errf(l.Pos, "failures[%d].groups.%s: a link is a pair of node names [a, b]", i, g.Name)
			}
			gr.Links = append(gr.Links, [2]string{l.Items[0].S, l.Items[1].S})
		}
		fl.Groups = append(fl.Groups, gr)
	}
	if f.Events.Set && len(f.Events.Items) == 0 {
		return nil, c.errf(f.Events.Pos, "failures[%d].events: list at least one event, or leave events out", i)
	}
	for j, ev := range f.Events.Items {
		where := fmt.Sprintf("failures[%d].events[%d]", i, j)
		if !ev.At.Set {
			return nil, c.errf(ev.Pos, "%s.at: required", where)
		}
		if ev.At.D < 0 || sim.Time(ev.At.D) >= e.Duration {
			return nil, c.errf(ev.At.Pos, "%s.at: %v is outside the run [0s, %v)", where, ev.At.D, time.Duration(e.Duration))
		}
		out := Event{At: sim.Time(ev.At.D)}
		n := 0
		if ev.Link.Set {
			n++
			if len(ev.Link.Items) != 2 {
				return nil, c.errf(ev.Link.Pos, "%s.link: a link is a pair of node names [a, b]", where)
			}
			out.Link = [2]string{ev.Link.Items[0].S, ev.Link.Items[1].S}
		}
		if ev.Node.Set {
			n++
			out.Node = ev.Node.S
		}
		if ev.Group.Set {
			n++
			if !slices.ContainsFunc(fl.Groups, func(g Group) bool { return g.Name == ev.Group.S }) {
				return nil, c.errf(ev.Group.Pos, "%s.group: no group %q under this schedule's groups", where, ev.Group.S)
			}
			out.Group = ev.Group.S
		}
		if n != 1 {
			return nil, c.errf(ev.Pos, "%s: give exactly one of link, node or group", where)
		}
		switch ev.Action.S {
		case "down":
		case "up":
			out.Up = true
		case "":
			return nil, c.errf(ev.Pos, "%s.action: required (down or up)", where)
		default:
			return nil, c.errf(ev.Action.Pos, "%s.action: %q is not down or up", where, ev.Action.S)
		}
		fl.Events = append(fl.Events, out)
	}
	// Each element must alternate down, up, down... in time order.
	order := make([]int, len(fl.Events))
	for j := range order {
		order[j] = j
	}
	sort.SliceStable(order, func(a, b int) bool { return fl.Events[order[a]].At < fl.Events[order[b]].At })
	down := map[string]bool{}
	for _, j := range order {
		ev := fl.Events[j]
		k := ev.key()
		if down[k] == !ev.Up {
			state := "up"
			if down[k] {
				state = "down"
			}
			return nil, c.errf(f.Events.Items[j].Action.Pos, "failures[%d].events[%d]: %s is already %s at %v", i, j, ev.element(), state, time.Duration(ev.At))
		}
		down[k] = !ev.Up
	}
	if f.Random.Set {
		rd := f.Random
		rf := &Random{Scope: "links"}
		if rd.Scope.Set {
			if rd.Scope.S != "links" && rd.Scope.S != "nodes" {
				return nil, c.errf(rd.Scope.Pos, "failures[%d].random.scope: %q is not links or nodes", i, rd.Scope.S)
			}
			rf.Scope = rd.Scope.S
		}
		for _, d := range []struct {
			name string
			v    yamlx.Duration
			out  *sim.Time
		}{{"mtbf", rd.MTBF, &rf.MTBF}, {"mttr", rd.MTTR, &rf.MTTR}} {
			if !d.v.Set {
				return nil, c.errf(rd.Pos, "failures[%d].random.%s: required", i, d.name)
			}
			if d.v.D <= 0 {
				return nil, c.errf(d.v.Pos, "failures[%d].random.%s: must be positive, got %v", i, d.name, d.v.D)
			}
			*d.out = sim.Time(d.v.D)
		}
		fl.Random = rf
	}
	return fl, nil
}

func (ev Event) key() string {
	switch {
	case ev.Group != "":
		return "group:" + ev.Group
	case ev.Node != "":
		return "node:" + ev.Node
	}
	a, b := ev.Link[0], ev.Link[1]
	if b < a {
		a, b = b, a
	}
	return "link:" + a + "\x00" + b
}

func (ev Event) element() string {
	switch {
	case ev.Group != "":
		return "group " + ev.Group
	case ev.Node != "":
		return "node " + ev.Node
	}
	return "link " + ev.Link[0] + "-" + ev.Link[1]
}

// ---- per-topology resolution ----

// resolve checks the names the traffic and failure schedules use against
// topology t and stores their indices.
func (c *checker) resolve(e *Experiment, t *Topology) error {
	g := t.Graph
	node := func(name string, at yamlx.Pos, field string) (int, error) {
		v, ok := g.NodeIndex(name)
		if !ok {
			return 0, c.errf(at, "%s: topology %q has no node %q", field, t.Label, name)
		}
		return v, nil
	}
	tr := c.raw.Traffic
	if e.Traffic.Matrix == "pairs" {
		N := len(g.Nodes)
		t.pairs = make([][]float64, N)
		for i := range t.pairs {
			t.pairs[i] = make([]float64, N)
		}
		for i, p := range e.Traffic.Pairs {
			rp := tr.Pairs.Items[i]
			s, err := node(p.From, rp.From.Pos, fmt.Sprintf("traffic.pairs[%d].from", i))
			if err != nil {
				return err
			}
			d, err := node(p.To, rp.To.Pos, fmt.Sprintf("traffic.pairs[%d].to", i))
			if err != nil {
				return err
			}
			r := p.Rate
			if r == 0 {
				r = 1
			}
			t.pairs[s][d] += r
		}
	}
	if e.Traffic.Matrix == "hotspot" {
		if len(e.Traffic.Hotspot.Nodes) == 0 {
			t.hot = []int{bestConnected(g)}
		}
		for i, name := range e.Traffic.Hotspot.Nodes {
			v, err := node(name, tr.Hotspot.Nodes.Items[i].Pos, "traffic.hotspot.nodes")
			if err != nil {
				return err
			}
			t.hot = append(t.hot, v)
		}
	}
	if err := t.prepare(e); err != nil {
		return c.errf(pos(orPos(tr.Matrix.Pos, tr.Pos)), "traffic: topology %q: %v", t.Label, err)
	}
	t.scheduled = make([][]sim.FailureEvent, len(e.Failures))
	fi := 0
	for i := range c.raw.Failures.Items {
		f := &c.raw.Failures.Items[i]
		fl := e.Failures[fi]
		fi++
		if f.None {
			continue
		}
		groups := map[string][]int{}
		for gi, gr := range fl.Groups {
			for li, l := range gr.Links {
				at := f.Groups.Groups[gi].Links[li].Pos
				idx, err := c.link(t, l, at, fmt.Sprintf("failures[%d].groups.%s", i, gr.Name))
				if err != nil {
					return err
				}
				groups[gr.Name] = append(groups[gr.Name], idx)
			}
		}
		var evs []sim.FailureEvent
		for j, ev := range fl.Events {
			raw := f.Events.Items[j]
			where := fmt.Sprintf("failures[%d].events[%d]", i, j)
			out := sim.FailureEvent{At: ev.At, Node: -1, Up: ev.Up}
			switch {
			case ev.Group != "":
				out.Links = groups[ev.Group]
				out.Element = ev.Group
			case ev.Node != "":
				v, err := node(ev.Node, raw.Node.Pos, where+".node")
				if err != nil {
					return err
				}
				out.Node = v
				out.Element = ev.Node
			default:
				idx, err := c.link(t, ev.Link, raw.Link.Pos, where+".link")
				if err != nil {
					return err
				}
				out.Links = []int{idx}
				out.Element = ev.Link[0] + "-" + ev.Link[1]
			}
			evs = append(evs, out)
		}
		t.scheduled[fi-1] = evs
	}
	return nil
}

func (c *checker) link(t *Topology, l [2]string, at yamlx.Pos, field string) (int, error) {
	g := t.Graph
	a, okA := g.NodeIndex(l[0])
	b, okB := g.NodeIndex(l[1])
	if !okA || !okB {
		missing := l[0]
		if okA {
			missing = l[1]
		}
		return 0, c.errf(at, "%s: topology %q has no node %q", field, t.Label, missing)
	}
	idx, ok := g.LinkIndex(a, b)
	if !ok {
		return 0, c.errf(at, "%s: topology %q has no link %s-%s", field, t.Label, l[0], l[1])
	}
	return idx, nil
}

// bestConnected returns the node with the largest total attached bandwidth,
// the lowest index among equals.
func bestConnected(g *sim.Graph) int {
	capa := make([]float64, len(g.Nodes))
	for _, l := range g.Links {
		capa[l.A] += l.Bandwidth
		capa[l.B] += l.Bandwidth
	}
	best := 0
	for v := range capa {
		if capa[v] > capa[best] {
			best = v
		}
	}
	return best
}

func fmtLoad(l float64) string {
	if math.IsNaN(l) {
		return "absolute"
	}
	return strconv.FormatFloat(l, 'g', -1, 64)
}
