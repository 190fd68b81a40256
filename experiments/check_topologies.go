package experiments

import (
	"errors"
	"fmt"
	"slices"
	"strings"

	"hoplore/internal/yamlx"
	"hoplore/sim"
	"hoplore/topologies"
)

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
		if n := len(g.Nodes); n > MaxNodes {
			return c.errf(t.Pos, "topologies[%d]: %d nodes; at most %d (validation and runs keep tables over every pair of nodes)", i, n, MaxNodes)
		}
		if l := len(g.Links); l > MaxLinks {
			return c.errf(t.Pos, "topologies[%d]: %d links; at most %d", i, l, MaxLinks)
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
		// compiled once the grid is known to be within bounds
		e.Topologies = append(e.Topologies, &Topology{Label: label, Graph: g})
	}
	return nil
}

func (c *checker) topology(i int, t *topoYAML) (*sim.Graph, string, error) {
	switch {
	case t.HasName:
		var info topologies.Info
		var names []string
		for _, gen := range topologies.List() {
			names = append(names, gen.Name)
			if gen.Name == t.Name.S {
				info = gen
			}
		}
		if info.Name == "" {
			return nil, "", c.errf(t.Name.Pos, "topologies[%d]: unknown topology %q (bundled: %s)", i, t.Name.S, strings.Join(names, ", "))
		}
		params := make(map[string]float64, len(t.Params))
		for _, p := range t.Params {
			if !slices.ContainsFunc(info.Params, func(q topologies.Param) bool { return q.Name == p.Name }) {
				// the first unknown one in file order
				known := make([]string, len(info.Params))
				for j, q := range info.Params {
					known[j] = q.Name
				}
				return nil, "", c.errf(p.Value.Pos, "topologies[%d]: %s: unknown parameter of %s (known: %s)", i, p.Name, info.Name, strings.Join(known, ", "))
			}
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
		c.names = append(c.names, t.File.S)
		o := topologies.ReadOptions{Keep: t.Keep.S, BandwidthScale: t.BandwidthScale.V, CapacityUnit: t.CapacityUnit.S}
		if t.BandwidthScale.Set && !(t.BandwidthScale.V > 0) {
			return nil, "", c.errf(t.BandwidthScale.Pos, "topologies[%d].bandwidth_scale: must be a positive number, got %g", i, t.BandwidthScale.V)
		}
		for _, a := range t.Attributes {
			if o.Attributes == nil {
				o.Attributes = map[string]string{}
			}
			if _, dup := o.Attributes[a.Field]; dup {
				return nil, "", c.errf(a.Pos, "topologies[%d].attributes.%s: given twice", i, a.Field)
			}
			o.Attributes[a.Field] = a.Key.S
		}
		g, err := c.files.load(p, data, o)
		if err != nil {
			var ye *yamlx.Error
			if errors.As(err, &ye) {
				return nil, "", ye
			}
			var oe *topologies.OptionError
			if errors.As(err, &oe) {
				at := t.File.Pos
				switch {
				case oe.Option == "keep":
					at = t.Keep.Pos
				case oe.Option == "bandwidth_scale":
					at = t.BandwidthScale.Pos
				case oe.Option == "capacity_unit":
					at = t.CapacityUnit.Pos
				case strings.HasPrefix(oe.Option, "attributes"):
					at = t.AttributesPos
					for _, a := range t.Attributes {
						if "attributes."+a.Field == oe.Option {
							at = a.Pos
						}
					}
				}
				return nil, "", c.errf(at, "topologies[%d].%s: %s", i, oe.Option, oe.Msg)
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
