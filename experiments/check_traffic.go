package experiments

import (
	"slices"
	"strings"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

func (c *checker) traffic(e *Experiment) error {
	t := &c.raw.Traffic
	tr := &e.Traffic
	tr.Matrix = "uniform"
	c.at.traffic = pos(orPos(t.Matrix.Pos, t.Pos))
	if t.Pairs.Set && !t.Matrix.Set {
		tr.Matrix = "pairs"
	}
	if t.Matrix.Set {
		switch t.Matrix.S {
		case "uniform", "gravity", "hotspot", "pairs":
			tr.Matrix = t.Matrix.S
		case "file":
			if t.Matrix.File == nil {
				return c.errf(t.Matrix.Pos, "traffic.matrix: a matrix file is given as {file: PATH} or {files: [PATH, ...]}")
			}
			tr.Matrix = "file"
		default:
			return c.errf(t.Matrix.Pos, "traffic.matrix: unknown matrix %q (known: uniform, gravity, hotspot, pairs, or {file: PATH})", t.Matrix.S)
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
			c.at.pairs = append(c.at.pairs, [2]yamlx.Pos{p.From.Pos, p.To.Pos})
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
		c.at.hot = append(c.at.hot, n.Pos)
	}
	// packet size
	if err := c.size(e); err != nil {
		return err
	}
	if tr.Matrix == "file" {
		if err := c.matrixFile(e); err != nil {
			return err
		}
	}
	if t.Flows.Gen != nil {
		if err := c.flows(e); err != nil {
			return err
		}
	} else if t.Flows.Set {
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
	all := []distField{
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
	if err := c.distFields("traffic.packet_size", s.Dist.S, s.Pos, all, want); err != nil {
		return err
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

// distField is one field of a size-distribution mapping: whether it was
// given, and where.
type distField struct {
	name string
	set  bool
	pos  yamlx.Pos
}

// distFields checks that of the fields all, exactly those in want (the
// fields of distribution dist) are given; prefix names the mapping in
// messages and at is where it starts.
func (c *checker) distFields(prefix, dist string, at yamlx.Pos, all []distField, want []string) error {
	for _, f := range all {
		ok := slices.Contains(want, f.name)
		if f.set && !ok {
			return c.errf(f.pos, "%s.%s: not a field of dist %s (fields: %s)", prefix, f.name, dist, strings.Join(want, ", "))
		}
		if !f.set && ok {
			return c.errf(at, "%s.%s: required for dist %s", prefix, f.name, dist)
		}
	}
	return nil
}
