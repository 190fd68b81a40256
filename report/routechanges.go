package report

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/plot"

	"hoplore/stats"
)

// ChangesPanel holds, for one panel (topology, load, failure schedule),
// each agent's route changes per bin over the whole run: the mean across
// replicates with its 95% confidence half-width (series.parquet's
// route_changes; what one change is depends on the agent kind).
type ChangesPanel struct {
	Panel
	Bin    float64 // bin width, s
	Curves []Curve // x: middle of the bin, s; route changes in the bin
}

// RouteChangeCurves aggregates series.parquet's route changes per bin, one
// ChangesPanel per panel in panel order (failure schedule "none" first), at
// most max of them (more: how many were left out). It returns no panel when
// no agent made a route change (or the column is absent).
func RouteChangeCurves(d *Data, max int) (panels []ChangesPanel, more int) {
	type key struct {
		p     Panel
		agent string
		start float64
	}
	acc := map[key][]float64{}
	width := map[Panel]float64{}
	any := false
	for _, b := range d.Series {
		if math.IsNaN(b.RouteChanges) {
			continue
		}
		any = any || b.RouteChanges > 0
		k := key{Panel{b.Topology, b.Load, b.Failure}, b.Agent, b.Start}
		acc[k] = append(acc[k], b.RouteChanges)
		width[k.p] = math.Max(width[k.p], b.End-b.Start)
	}
	if !any {
		return nil, 0
	}
	var ps []Panel
	for p := range width {
		ps = append(ps, p)
	}
	slices.SortFunc(ps, func(x, y Panel) int {
		return cmp.Or(compareFailure(x.Failure, y.Failure), cmp.Compare(x.Topology, y.Topology), cmp.Compare(x.Load, y.Load))
	})
	if len(ps) > max {
		more = len(ps) - max
		ps = ps[:max]
	}
	keys := make([]key, 0, len(acc))
	for k := range acc {
		keys = append(keys, k)
	}
	slices.SortFunc(keys, func(x, y key) int { return cmp.Compare(x.start, y.start) })
	for _, p := range ps {
		cp := ChangesPanel{Panel: p, Bin: width[p]}
		for _, a := range d.Agents() {
			c := Curve{Agent: a}
			for _, k := range keys {
				if k.p == p && k.agent == a {
					if e := stats.MeanCI95(acc[k]); e.N > 0 {
						c.Points = append(c.Points, Point{X: k.start + cp.Bin/2, Est: e})
					}
				}
			}
			if len(c.Points) > 0 {
				cp.Curves = append(cp.Curves, c)
			}
		}
		panels = append(panels, cp)
	}
	return panels, more
}

// routeChangesChart draws, one panel per row, each agent's route changes
// per bin over the whole run.
func routeChangesChart(id, title, caption string, cps []ChangesPanel, agents []string) *chart {
	idx := agentIndex(agents)
	legend := agentLegend(agents, idx,
		"lines: mean across replicates per bin (warm-up included); bands: 95% CI",
		"a route change is what the agent kind counts (README, Results): a changed next hop, preferred next hop, split or source route")
	return &chart{ID: id, Title: title, Caption: caption, build: func(th theme) *figure {
		f := &figure{panelW: 2 * panelW, panelH: panelH, legend: legend}
		f.legendH = legendHeight(legend, 2*panelW)
		for _, cp := range cps {
			head := fmt.Sprintf("%s · load %s · failures: %s", cp.Topology, fmtNum(cp.Load), cp.Failure)
			pl := newPanel(th, head, "time since the start of the run (s)", fmt.Sprintf("route changes per %s s bin", fmtNum(cp.Bin)))
			xhi := 0.0
			for _, c := range cp.Curves {
				addCurve(pl, c, styleFor(idx[c.Agent]), 1, false, false)
				for _, p := range c.Points {
					xhi = math.Max(xhi, p.X+cp.Bin/2)
				}
			}
			_, hi := valueRange(cp.Curves)
			setRange(&pl.X, 0, xhi, false)
			setRange(&pl.Y, 0, math.Max(hi*1.05, 1), false)
			f.panels = append(f.panels, []*plot.Plot{pl})
		}
		return f
	}}
}
