package experiments

import (
	"errors"
	"strings"

	"hoplore/agents"
	"hoplore/internal/yamlx"
)

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
		c.at.agents = append(c.at.agents, a.Pos)
		var refs []LearnedState
		var at yamlx.Pos
		if p.StartFrom != nil {
			for _, v := range a.Fields {
				if v.Name == "start_from" {
					at = v.Value.at()
				}
			}
			if refs, err = c.startStates(i, &p, at); err != nil {
				return err
			}
		}
		e.Starts = append(e.Starts, refs)
		c.at.starts = append(c.at.starts, at)
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
