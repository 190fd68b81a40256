package report

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"hoplore/stats"
)

// ElementOutcome is one single failure — a down event of one element in one
// schedule — for one agent, averaged over the replicates in which it
// happened. A measure no replicate has is NaN.
type ElementOutcome struct {
	Topology, Failure, Element string
	At                         float64 // s
	Replicates                 int
	Reconnect                  float64 // s, mean
	Settle                     float64 // s, mean over the replicates that settled
	Unsettled                  int     // replicates that did not settle
	LostReachable              float64 // mean
	DelayRatio                 float64 // mean over the replicates that have one
}

// AgentResilience is one agent's outcomes over every single failure.
type AgentResilience struct {
	Agent    string
	Elements []ElementOutcome // in (topology, failure, at, element) order
}

// Resilience gathers, per agent, the outcome of every down event at load
// (every single failure of a family such as each: links, and every down
// event of other schedules), in agent order. It is empty when no event
// carries the exact per-event measures.
func Resilience(d *Data, load float64) []AgentResilience {
	type key struct {
		agent, topology, failure, element string
		at                                float64
	}
	acc := map[key][]Recovery{}
	var keys []key
	exact := false
	for _, r := range d.Recoveries {
		if r.Action != "down" || r.Load != load {
			continue
		}
		k := key{r.Agent, r.Topology, r.Failure, r.Element, r.At}
		if _, ok := acc[k]; !ok {
			keys = append(keys, k)
		}
		acc[k] = append(acc[k], r)
		exact = exact || !math.IsNaN(r.Reconnect)
	}
	if !exact {
		return nil
	}
	slices.SortFunc(keys, func(a, b key) int {
		return cmp.Or(cmp.Compare(a.agent, b.agent), cmp.Compare(a.topology, b.topology), cmp.Compare(a.failure, b.failure),
			cmp.Compare(a.at, b.at), cmp.Compare(a.element, b.element))
	})
	var out []AgentResilience
	for _, k := range keys {
		if len(out) == 0 || out[len(out)-1].Agent != k.agent {
			out = append(out, AgentResilience{Agent: k.agent})
		}
		recs := acc[k]
		var rc, st, lr, dr []float64
		e := ElementOutcome{Topology: k.topology, Failure: k.failure, Element: k.element, At: k.at, Replicates: len(recs)}
		for _, r := range recs {
			rc = appendNum(rc, r.Reconnect)
			lr = appendNum(lr, r.LostReachable)
			dr = appendNum(dr, r.DelayRatio)
			if math.IsNaN(r.Settle) {
				e.Unsettled++
			} else {
				st = append(st, r.Settle)
			}
		}
		e.Reconnect, e.Settle, e.LostReachable, e.DelayRatio = mean(rc), mean(st), mean(lr), mean(dr)
		a := &out[len(out)-1]
		a.Elements = append(a.Elements, e)
	}
	return out
}

func appendNum(x []float64, v float64) []float64 {
	if math.IsNaN(v) {
		return x
	}
	return append(x, v)
}

func mean(x []float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	var s float64
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

// Worst returns a's worst n single failures: most reachable packets lost,
// then the longest reconnection, then the largest delay ratio.
func (a *AgentResilience) Worst(n int) []ElementOutcome {
	w := slices.Clone(a.Elements)
	slices.SortStableFunc(w, func(x, y ElementOutcome) int {
		return cmp.Or(cmp.Compare(nanLow(y.LostReachable), nanLow(x.LostReachable)),
			cmp.Compare(nanLow(y.Reconnect), nanLow(x.Reconnect)), cmp.Compare(nanLow(y.DelayRatio), nanLow(x.DelayRatio)))
	})
	return w[:min(n, len(w))]
}

func nanLow(x float64) float64 {
	if math.IsNaN(x) {
		return math.Inf(-1)
	}
	return x
}

// resilienceMeasures are the panels of the resilience chart.
var resilienceMeasures = []struct {
	label string
	get   func(e *ElementOutcome) float64
	time  bool
}{
	{"reconnect time", func(e *ElementOutcome) float64 { return e.Reconnect }, true},
	{"settle time", func(e *ElementOutcome) float64 { return e.Settle }, true},
	{"reachable packets lost", func(e *ElementOutcome) float64 { return e.LostReachable }, false},
	{"delay ratio (new / old level)", func(e *ElementOutcome) float64 { return e.DelayRatio }, false},
}

// ecdf returns the steps of the empirical distribution function of the
// non-NaN values of x over all len(x) of them (a NaN, such as "never
// settled", counts in the denominator only, so the curve ends below 1).
// With floor > 0 the values are drawn on a log axis: x is log10(max(v,
// floor)).
func ecdf(x []float64, scale, floor float64) plotter.XYs {
	var v []float64
	for _, y := range x {
		if !math.IsNaN(y) {
			y *= scale
			if floor > 0 {
				y = math.Log10(math.Max(y, floor))
			}
			v = append(v, y)
		}
	}
	slices.Sort(v)
	n := float64(len(x))
	var pts plotter.XYs
	for i, y := range v {
		pts = append(pts, plotter.XY{X: y, Y: float64(i) / n}, plotter.XY{X: y, Y: float64(i+1) / n})
	}
	return pts
}

// resilienceChart draws, per agent, the empirical distribution over every
// single failure of each measure: one panel per measure.
func resilienceChart(res []AgentResilience, agents []string, load float64) *chart {
	idx := agentIndex(agents)
	n := 0
	for _, a := range res {
		n = max(n, len(a.Elements))
	}
	caption := fmt.Sprintf("Empirical distribution over every single failure (each down event of each schedule, at load %s; mean over its replicates) of each agent: the fraction of failures with a value at most x. "+
		"A curve that ends below 1 has failures without a value (never settled, or no level to compare). Up to %d failures per agent.", fmtNum(load), n)
	legend := agentLegend(agents, idx, "steps: fraction of single failures at most x")
	return &chart{ID: "resilience", Title: "Every single failure: reconnect, settle, loss and delay ratio", Caption: caption, build: func(th theme) *figure {
		f := &figure{panelW: panelW, panelH: panelH, legend: legend}
		f.legendH = legendHeight(legend, vg.Length(len(resilienceMeasures))*panelW)
		row := make([]*plot.Plot, len(resilienceMeasures))
		for m, ms := range resilienceMeasures {
			var hi float64
			lo := math.Inf(1) // least positive value
			for _, a := range res {
				for i := range a.Elements {
					if v := ms.get(&a.Elements[i]); !math.IsNaN(v) {
						hi = math.Max(hi, v)
						if v > 0 {
							lo = math.Min(lo, v)
						}
					}
				}
			}
			scale, unit := 1.0, ""
			if ms.time {
				scale, unit = timeUnit(hi)
				unit = " (" + unit
			}
			// times spanning more than a factor 30 go on a log axis, zeros
			// drawn at half the least positive value
			floor := 0.0
			if ms.time && hi > 30*lo {
				floor = lo * scale / 2
				unit += ", log scale; 0 drawn at the left edge"
			}
			if ms.time {
				unit += ")"
			}
			p := newPanel(th, ms.label, ms.label+unit, "fraction of single failures")
			for _, a := range res {
				vals := make([]float64, len(a.Elements))
				for i := range a.Elements {
					vals[i] = ms.get(&a.Elements[i])
				}
				pts := ecdf(vals, scale, floor)
				if len(pts) == 0 {
					continue
				}
				if l, err := plotter.NewLine(pts); err == nil {
					l.LineStyle = styleFor(idx[a.Agent]).line
					p.Add(l)
				}
			}
			if floor > 0 {
				setRange(&p.X, floor*1.25, hi*scale, true) // setRange pads by 1.25 either side
			} else {
				setRange(&p.X, 0, hi*scale*1.05, false)
			}
			setRange(&p.Y, 0, 1, false)
			row[m] = p
		}
		f.panels = [][]*plot.Plot{row}
		return f
	}}
}

// worstView is one row of a worst-failures table on the page.
type worstView struct {
	Topology, Failure, Element                       string
	Reconnect, Settle, LostReachable, DelayRatio, Of string
}

// worstTable is one agent's worst single failures on the page.
type worstTable struct {
	Agent string
	Rows  []worstView
}

func worstTables(res []AgentResilience, n int) []worstTable {
	var out []worstTable
	for i := range res {
		wt := worstTable{Agent: res[i].Agent}
		for _, e := range res[i].Worst(n) {
			v := worstView{Topology: e.Topology, Failure: e.Failure, Element: e.Element,
				Reconnect: sigOr(e.Reconnect, " s"), LostReachable: sigOr(e.LostReachable, ""), DelayRatio: sigOr(e.DelayRatio, ""),
				Settle: sigOr(e.Settle, " s"), Of: fmt.Sprint(e.Replicates)}
			if e.Unsettled > 0 {
				v.Settle += fmt.Sprintf(" (%d of %d never)", e.Unsettled, e.Replicates)
			}
			wt.Rows = append(wt.Rows, v)
		}
		out = append(out, wt)
	}
	return out
}

func sigOr(x float64, unit string) string {
	if math.IsNaN(x) {
		return "–"
	}
	return stats.Sig(x, 3) + unit
}
