package experiments

import (
	"fmt"
	"math/rand/v2"
	"slices"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

// resolve checks the names the traffic and failure schedules use against
// topology t and stores their indices. It works on the checked experiment
// alone, with the positions the section checks recorded (checker.at).
func (c *checker) resolve(e *Experiment, t *Topology) error {
	g := t.Graph
	node := func(name string, at yamlx.Pos, field string) (int, error) {
		v, ok := g.NodeIndex(name)
		if !ok {
			return 0, c.errf(at, "%s: topology %q has no node %q", field, t.Label, name)
		}
		return v, nil
	}
	if e.Traffic.Matrix == "pairs" {
		N := len(g.Nodes)
		t.pairs = make([][]float64, N)
		for i := range t.pairs {
			t.pairs[i] = make([]float64, N)
		}
		for i, p := range e.Traffic.Pairs {
			s, err := node(p.From, c.at.pairs[i][0], fmt.Sprintf("traffic.pairs[%d].from", i))
			if err != nil {
				return err
			}
			d, err := node(p.To, c.at.pairs[i][1], fmt.Sprintf("traffic.pairs[%d].to", i))
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
	if e.Traffic.Matrix == "file" {
		if err := c.matrixFilePeriods(e, t); err != nil {
			return err
		}
	}
	if e.Traffic.Matrix == "hotspot" {
		if len(e.Traffic.Hotspot.Nodes) == 0 {
			t.hot = []int{bestConnected(g)}
		}
		for i, name := range e.Traffic.Hotspot.Nodes {
			v, err := node(name, c.at.hot[i], fmt.Sprintf("traffic.hotspot.nodes[%d]", i))
			if err != nil {
				return err
			}
			t.hot = append(t.hot, v)
		}
	}
	if err := c.checkStartTopology(e, t); err != nil {
		return err
	}
	if err := t.prepare(e); err != nil {
		return c.errf(c.at.traffic, "traffic: topology %q: %v", t.Label, err)
	}
	t.conditions = nil
	if len(e.Conditions) > 0 {
		index := make(map[string]int, len(g.Nodes))
		for i, n := range g.Nodes {
			index[n.Name] = i
		}
		links := make(map[[2]int]int, len(g.Links))
		for i := len(g.Links) - 1; i >= 0; i-- { // the first link of a pair wins
			l := g.Links[i]
			links[[2]int{min(l.A, l.B), max(l.A, l.B)}] = i
		}
		for _, cd := range e.Conditions {
			a, okA := index[cd.A]
			b, okB := index[cd.B]
			idx, okL := links[[2]int{min(a, b), max(a, b)}]
			if !okA || !okB || !okL {
				return cd.at("topology %q has no link %s-%s", t.Label, cd.A, cd.B)
			}
			t.conditions = append(t.conditions, sim.LinkCondition{At: cd.At, Link: idx, Bandwidth: cd.Bandwidth,
				Delay: cd.Delay, SetDelay: cd.SetDelay, Loss: cd.Loss, SetLoss: cd.SetLoss})
		}
	}

	t.failures, t.scheduled = nil, nil
	names := map[string]bool{}
	for i, fl := range e.Failures {
		at := c.at.failures[i]
		groups := map[string][]int{}
		for gi, gr := range fl.Groups {
			if gr.WithinKm > 0 {
				links, err := c.geoGroup(t, gr, at.groupOf[gi], fmt.Sprintf("failures[%d].groups.%s", i, gr.Name))
				if err != nil {
					return err
				}
				groups[gr.Name] = links
				continue
			}
			for li, l := range gr.Links {
				idx, err := c.link(t, l, at.groupLinks[gi][li], fmt.Sprintf("failures[%d].groups.%s", i, gr.Name))
				if err != nil {
					return err
				}
				groups[gr.Name] = append(groups[gr.Name], idx)
			}
		}
		var evs []sim.FailureEvent
		for j, ev := range fl.Events {
			where := fmt.Sprintf("failures[%d].events[%d]", i, j)
			out := sim.FailureEvent{At: ev.At, Node: -1, Up: ev.Up}
			switch {
			case ev.Group != "":
				out.Links = groups[ev.Group]
				out.Element = ev.Group
			case ev.Node != "":
				v, err := node(ev.Node, at.elements[j], where+".node")
				if err != nil {
					return err
				}
				out.Node = v
				out.Element = ev.Node
			default:
				idx, err := c.link(t, ev.Link, at.elements[j], where+".link")
				if err != nil {
					return err
				}
				out.Links = []int{idx}
				out.Element = ev.Link[0] + "-" + ev.Link[1]
			}
			evs = append(evs, out)
		}
		if fl.Each == nil {
			t.failures = append(t.failures, fl)
			t.scheduled = append(t.scheduled, evs)
			names[fl.Name] = true
			continue
		}
		for _, m := range expandEach(g, fl, groups) {
			if names[m.f.Name] {
				return c.errf(at.each, "failures[%d].each: schedule name %q is used twice on topology %q", i, m.f.Name, t.Label)
			}
			names[m.f.Name] = true
			t.failures = append(t.failures, m.f)
			t.scheduled = append(t.scheduled, m.evs)
		}
	}
	return nil
}

type member struct {
	f   *Failure
	evs []sim.FailureEvent
}

// expandEach returns family fl's schedules on graph g, one per element in
// index order (groups in file order), sampled when fl.Each.Sample is set.
func expandEach(g *sim.Graph, fl *Failure, groups map[string][]int) []member {
	ea := fl.Each
	var evs []sim.FailureEvent
	switch ea.Kind {
	case "links":
		for l, lk := range g.Links {
			evs = append(evs, sim.FailureEvent{Links: []int{l}, Node: -1, Element: g.Nodes[lk.A].Name + "-" + g.Nodes[lk.B].Name})
		}
	case "nodes":
		for v, n := range g.Nodes {
			evs = append(evs, sim.FailureEvent{Node: v, Element: n.Name})
		}
	case "groups":
		for _, gr := range fl.Groups {
			evs = append(evs, sim.FailureEvent{Links: groups[gr.Name], Node: -1, Element: gr.Name})
		}
	}
	if ea.Sample > 0 && ea.Sample < len(evs) {
		evs = sampleEvents(evs, ea.Sample, ea.Seed)
	}
	out := make([]member, len(evs))
	for k, ev := range evs {
		down := ev
		down.At = ea.At
		s := []sim.FailureEvent{down}
		if ea.Until > 0 {
			up := ev
			up.At, up.Up = ea.Until, true
			up.Links = slices.Clone(ev.Links)
			s = append(s, up)
		}
		out[k] = member{f: &Failure{Name: fl.Name + "/" + ev.Element, Detection: fl.Detection}, evs: s}
	}
	return out
}

// sampleEvents keeps n of evs drawn uniformly without replacement (a
// partial Fisher–Yates shuffle, Knuth TAOCP vol. 2 Algorithm P) from a PCG
// stream of seed, in their original order.
func sampleEvents(evs []sim.FailureEvent, n int, seed uint64) []sim.FailureEvent {
	idx := make([]int, len(evs))
	for i := range idx {
		idx[i] = i
	}
	r := rand.New(rand.NewPCG(seed, sampleStream))
	for i := 0; i < n; i++ {
		j := i + r.IntN(len(idx)-i)
		idx[i], idx[j] = idx[j], idx[i]
	}
	keep := idx[:n]
	slices.Sort(keep)
	out := make([]sim.FailureEvent, n)
	for k, i := range keep {
		out[k] = evs[i]
	}
	return out
}

// sampleStream is the second PCG seed of a family's sample, keeping its
// stream apart from other uses of the same seed.
const sampleStream = 0xfa3117

// geoGroup returns the links of a geographic group on t: every link with an
// end within gr.WithinKm km of node gr.Of, by the topology's coordinates.
func (c *checker) geoGroup(t *Topology, gr Group, at yamlx.Pos, field string) ([]int, error) {
	g := t.Graph
	v, ok := g.NodeIndex(gr.Of)
	if !ok {
		return nil, c.errf(at, "%s.of: topology %q has no node %q", field, t.Label, gr.Of)
	}
	if g.Nodes[v].Coord == sim.NoCoord {
		return nil, c.errf(at, "%s.of: node %q of topology %q has no coordinates", field, gr.Of, t.Label)
	}
	within := func(u int) bool {
		d, ok := sim.Distance(g.Nodes[v], g.Nodes[u])
		return ok && d <= gr.WithinKm*1000
	}
	var links []int
	for l, lk := range g.Links {
		if within(lk.A) || within(lk.B) {
			links = append(links, l)
		}
	}
	if len(links) == 0 {
		return nil, c.errf(at, "%s: no link of topology %q has an end within %g km of %q", field, t.Label, gr.WithinKm, gr.Of)
	}
	return links, nil
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
