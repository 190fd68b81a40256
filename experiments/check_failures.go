package experiments

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"time"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

func (c *checker) failures(e *Experiment) error {
	r := c.raw
	if !r.Failures.Set {
		e.Failures = []*Failure{{Name: "none"}}
		c.at.failures = []failureWhere{{}}
		return nil
	}
	if len(r.Failures.Items) == 0 {
		return c.errf(r.Failures.Pos, "failures: list at least one schedule (`none` for no failures)")
	}
	seen := map[string]bool{}
	for i := range r.Failures.Items {
		f := &r.Failures.Items[i]
		fl, at, err := c.failure(e, i, f)
		if err != nil {
			return err
		}
		if seen[fl.Name] {
			return c.errf(f.Pos, "failures[%d]: schedule name %q is used twice", i, fl.Name)
		}
		seen[fl.Name] = true
		e.Failures = append(e.Failures, fl)
		c.at.failures = append(c.at.failures, at)
	}
	return nil
}

// failure checks schedule i and returns it with the positions resolving
// its names may report.
func (c *checker) failure(e *Experiment, i int, f *failureYAML) (*Failure, failureWhere, error) {
	var at failureWhere
	if f.None {
		return &Failure{Name: "none"}, at, nil
	}
	fl := &Failure{Detection: DefaultDetection}
	switch {
	case f.Name.Set && f.Name.S == "none":
		return nil, at, c.errf(f.Name.Pos, "failures[%d].name: \"none\" is reserved for the schedule without failures", i)
	case f.Name.Set && f.Name.S != "":
		fl.Name = f.Name.S
	case f.Each.Set:
		fl.Name = "each-" + f.Each.S
	default:
		return nil, at, c.errf(f.Pos, "failures[%d].name: required", i)
	}
	if f.Detection.Set {
		if f.Detection.D < 0 {
			return nil, at, c.errf(f.Detection.Pos, "failures[%d].detection: must not be negative, got %v", i, f.Detection.D)
		}
		fl.Detection = sim.Time(f.Detection.D)
	}
	if f.Each.Set {
		if f.Events.Set || f.Random.Set {
			return nil, at, c.errf(f.Each.Pos, "failures[%d].each: a family of single failures takes no events or random", i)
		}
		ea, err := c.each(e, i, f)
		if err != nil {
			return nil, at, err
		}
		fl.Each = ea
		at.each = f.Each.Pos
	} else {
		for _, d := range []struct {
			name string
			set  bool
			p    yamlx.Pos
		}{{"at", f.At.Set, f.At.Pos}, {"until", f.Until.Set, f.Until.Pos}, {"sample", f.Sample.Set, f.Sample.Pos}, {"seed", f.Seed.Set, f.Seed.Pos}} {
			if d.set {
				return nil, at, c.errf(d.p, "failures[%d].%s: applies to a family (each: links, nodes or groups) only", i, d.name)
			}
		}
	}
	if !f.Events.Set && !f.Random.Set && !f.Each.Set {
		return nil, at, c.errf(f.Pos, "failures[%d]: give events, random or both, or each (or use `none`)", i)
	}
	for _, g := range f.Groups.Groups {
		if slices.ContainsFunc(fl.Groups, func(h Group) bool { return h.Name == g.Name }) {
			return nil, at, c.errf(g.Pos, "failures[%d].groups: group %q is defined twice", i, g.Name)
		}
		gr := Group{Name: g.Name}
		if geo := g.Geo; geo != nil {
			if !geo.WithinKm.Set {
				return nil, at, c.errf(geo.Pos, "failures[%d].groups.%s.within_km: required", i, g.Name)
			}
			if !(geo.WithinKm.V > 0) || math.IsInf(geo.WithinKm.V, 1) {
				return nil, at, c.errf(geo.WithinKm.Pos, "failures[%d].groups.%s.within_km: must be positive, got %g", i, g.Name, geo.WithinKm.V)
			}
			if !geo.Of.Set || geo.Of.S == "" {
				return nil, at, c.errf(geo.Pos, "failures[%d].groups.%s.of: required (a node name)", i, g.Name)
			}
			gr.WithinKm, gr.Of = geo.WithinKm.V, geo.Of.S
			fl.Groups = append(fl.Groups, gr)
			at.groupLinks = append(at.groupLinks, nil)
			at.groupOf = append(at.groupOf, geo.Of.Pos)
			continue
		}
		var links []yamlx.Pos
		if len(g.Links) == 0 {
			return nil, at, c.errf(g.Pos, "failures[%d].groups.%s: list at least one link [a, b]", i, g.Name)
		}
		for _, l := range g.Links {
			if len(l.Items) != 2 {
				return nil, at, c.errf(l.Pos, "failures[%d].groups.%s: a link is a pair of node names [a, b]", i, g.Name)
			}
			gr.Links = append(gr.Links, [2]string{l.Items[0].S, l.Items[1].S})
			links = append(links, l.Pos)
		}
		fl.Groups = append(fl.Groups, gr)
		at.groupLinks = append(at.groupLinks, links)
		at.groupOf = append(at.groupOf, yamlx.Pos{})
	}
	if fl.Each != nil && fl.Each.Kind == "groups" && len(fl.Groups) == 0 {
		return nil, at, c.errf(f.Each.Pos, "failures[%d].each: groups needs the schedule's groups", i)
	}
	if f.Events.Set && len(f.Events.Items) == 0 {
		return nil, at, c.errf(f.Events.Pos, "failures[%d].events: list at least one event, or leave events out", i)
	}
	for j, ev := range f.Events.Items {
		where := fmt.Sprintf("failures[%d].events[%d]", i, j)
		if !ev.At.Set {
			return nil, at, c.errf(ev.Pos, "%s.at: required", where)
		}
		if ev.At.D < 0 || sim.Time(ev.At.D) >= e.Duration {
			return nil, at, c.errf(ev.At.Pos, "%s.at: %v is outside the run [0s, %v)", where, ev.At.D, time.Duration(e.Duration))
		}
		out := Event{At: sim.Time(ev.At.D)}
		var elem yamlx.Pos
		n := 0
		if ev.Link.Set {
			n++
			if len(ev.Link.Items) != 2 {
				return nil, at, c.errf(ev.Link.Pos, "%s.link: a link is a pair of node names [a, b]", where)
			}
			out.Link = [2]string{ev.Link.Items[0].S, ev.Link.Items[1].S}
			elem = ev.Link.Pos
		}
		if ev.Node.Set {
			n++
			out.Node = ev.Node.S
			elem = ev.Node.Pos
		}
		if ev.Group.Set {
			n++
			if !slices.ContainsFunc(fl.Groups, func(g Group) bool { return g.Name == ev.Group.S }) {
				return nil, at, c.errf(ev.Group.Pos, "%s.group: no group %q under this schedule's groups", where, ev.Group.S)
			}
			out.Group = ev.Group.S
			elem = ev.Group.Pos
		}
		if n != 1 {
			return nil, at, c.errf(ev.Pos, "%s: give exactly one of link, node or group", where)
		}
		switch ev.Action.S {
		case "down":
		case "up":
			out.Up = true
		case "":
			return nil, at, c.errf(ev.Pos, "%s.action: required (down or up)", where)
		default:
			return nil, at, c.errf(ev.Action.Pos, "%s.action: %q is not down or up", where, ev.Action.S)
		}
		fl.Events = append(fl.Events, out)
		at.elements = append(at.elements, elem)
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
			return nil, at, c.errf(f.Events.Items[j].Action.Pos, "failures[%d].events[%d]: %s is already %s at %v", i, j, ev.element(), state, time.Duration(ev.At))
		}
		down[k] = !ev.Up
	}
	if f.Random.Set {
		rd := f.Random
		at.random = rd.Pos
		rf := &Random{Scope: "links"}
		if rd.Scope.Set {
			if rd.Scope.S != "links" && rd.Scope.S != "nodes" {
				return nil, at, c.errf(rd.Scope.Pos, "failures[%d].random.scope: %q is not links or nodes", i, rd.Scope.S)
			}
			rf.Scope = rd.Scope.S
		}
		for _, d := range []struct {
			name string
			v    yamlx.Duration
			out  *sim.Time
		}{{"mtbf", rd.MTBF, &rf.MTBF}, {"mttr", rd.MTTR, &rf.MTTR}} {
			if !d.v.Set {
				return nil, at, c.errf(rd.Pos, "failures[%d].random.%s: required", i, d.name)
			}
			if d.v.D <= 0 {
				return nil, at, c.errf(d.v.Pos, "failures[%d].random.%s: must be positive, got %v", i, d.name, d.v.D)
			}
			*d.out = sim.Time(d.v.D)
		}
		fl.Random = rf
	}
	return fl, at, nil
}

// each checks the family fields of schedule i.
func (c *checker) each(e *Experiment, i int, f *failureYAML) (*Each, error) {
	ea := &Each{Kind: f.Each.S, Seed: e.Seed}
	switch ea.Kind {
	case "links", "nodes", "groups":
	default:
		return nil, c.errf(f.Each.Pos, "failures[%d].each: %q is not links, nodes or groups", i, f.Each.S)
	}
	if !f.At.Set {
		return nil, c.errf(f.Pos, "failures[%d].at: required with each", i)
	}
	if f.At.D < 0 || sim.Time(f.At.D) >= e.Duration {
		return nil, c.errf(f.At.Pos, "failures[%d].at: %v is outside the run [0s, %v)", i, f.At.D, time.Duration(e.Duration))
	}
	ea.At = sim.Time(f.At.D)
	if f.Until.Set {
		if f.Until.D <= f.At.D {
			return nil, c.errf(f.Until.Pos, "failures[%d].until: %v must be after at (%v)", i, f.Until.D, f.At.D)
		}
		ea.Until = sim.Time(f.Until.D)
	}
	if f.Sample.Set {
		if f.Sample.V < 1 {
			return nil, c.errf(f.Sample.Pos, "failures[%d].sample: must be at least 1, got %d", i, f.Sample.V)
		}
		ea.Sample = f.Sample.V
	}
	if f.Seed.Set {
		if !f.Sample.Set {
			return nil, c.errf(f.Seed.Pos, "failures[%d].seed: seeds a sample: give sample too", i)
		}
		if f.Seed.V < 0 {
			return nil, c.errf(f.Seed.Pos, "failures[%d].seed: must not be negative, got %d", i, f.Seed.V)
		}
		ea.Seed = uint64(f.Seed.V)
	}
	return ea, nil
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
