package experiments

import (
	"fmt"

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
	if err := t.prepare(e); err != nil {
		return c.errf(c.at.traffic, "traffic: topology %q: %v", t.Label, err)
	}
	t.scheduled = make([][]sim.FailureEvent, len(e.Failures))
	for i, fl := range e.Failures {
		at := c.at.failures[i]
		groups := map[string][]int{}
		for gi, gr := range fl.Groups {
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
		t.scheduled[i] = evs
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
