package experiments

import (
	"fmt"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

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
