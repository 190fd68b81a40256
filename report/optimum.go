package report

import (
	"cmp"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"hoplore/results"
	"hoplore/stats"
)

// Optimum is the model optimum of one topology at one load, read from the
// opt_* columns of its runs (the same in every run of the cell): the least
// mean delivery time of any splittable routing under the model of
// independent M/G/1 channels (NaN when none is finite or it was not
// computed) and the highest load of the matrix any routing could carry
// (NaN when not computed).
type Optimum struct {
	Topology  string
	Load      float64
	DelayMean float64 // s
	LoadLimit float64 // normalised load
}

// Optima returns the model optimum of every (topology, load) of d whose
// runs carry one, by topology then load.
func Optima(d *Data) []Optimum {
	kDelay, kLimit := results.Runs.Index("opt_delay_mean_s"), results.Runs.Index("opt_load_limit")
	type key struct {
		topo string
		load float64
	}
	seen := map[key]int{}
	var out []Optimum
	for _, r := range d.Runs {
		k := key{r.Topology, r.Load}
		i, ok := seen[k]
		if !ok {
			i = len(out)
			seen[k] = i
			out = append(out, Optimum{Topology: r.Topology, Load: r.Load, DelayMean: math.NaN(), LoadLimit: math.NaN()})
		}
		o := &out[i]
		if v := r.at(kDelay); math.IsNaN(o.DelayMean) && !math.IsNaN(v) {
			o.DelayMean = v
		}
		if v := r.at(kLimit); math.IsNaN(o.LoadLimit) && !math.IsNaN(v) {
			o.LoadLimit = v
		}
	}
	out = slices.DeleteFunc(out, func(o Optimum) bool { return math.IsNaN(o.DelayMean) && math.IsNaN(o.LoadLimit) })
	slices.SortStableFunc(out, func(a, b Optimum) int {
		if a.Topology != b.Topology {
			return cmp.Compare(a.Topology, b.Topology)
		}
		return cmp.Compare(a.Load, b.Load)
	})
	return out
}

// estimateOf is a single exact value as an estimate (no interval).
func estimateOf(v float64) stats.Estimate { return stats.Estimate{Mean: v, CI95: math.NaN()} }

// optimumRef is what a load chart draws of the model optimum in one panel
// (topology and failure schedule): a reference line (nil: none) and the
// load limit (NaN: none).
type optimumRef struct {
	line  []Point
	limit float64
}

// refKey identifies a load chart's panel: a topology and a failure
// schedule.
type refKey struct{ Topology, Failure string }

// optimumRefs returns, per panel, the reference of the charted column col,
// from the Reference of each load (the optimum of each topology state of
// the panel's failure schedule over the measured window; without failures
// the intact optimum): for delivery_mean_s its delivery time, for
// loss_rate its loss (zero without failures) where known — below the load
// limit of every state —, and for both and for delivery_p95_s the load
// limit, the smallest of the states' in the window. Other columns get none.
func optimumRefs(d *Data, col string) map[refKey]optimumRef {
	if col != "delivery_mean_s" && col != "loss_rate" && col != "delivery_p95_s" {
		return nil
	}
	intact := map[Panel]Optimum{}
	for _, o := range Optima(d) {
		intact[Panel{Topology: o.Topology, Load: o.Load}] = o
	}
	states := optimumStates(d)
	byPanel := map[Panel][]Run{}
	var panels []Panel
	for _, r := range d.Runs {
		p := Panel{r.Topology, r.Load, r.Failure}
		if _, ok := byPanel[p]; !ok {
			panels = append(panels, p)
		}
		byPanel[p] = append(byPanel[p], r)
	}
	slices.SortFunc(panels, comparePanel)
	out := map[refKey]optimumRef{}
	for _, p := range panels {
		o, ok := intact[Panel{Topology: p.Topology, Load: p.Load}]
		if !ok && len(states[p]) == 0 {
			continue
		}
		if !ok {
			o = Optimum{Topology: p.Topology, Load: p.Load, DelayMean: math.NaN(), LoadLimit: math.NaN()}
		}
		k := refKey{p.Topology, p.Failure}
		ref, seen := out[k]
		if !seen {
			ref.limit = math.NaN()
		}
		rf := reference(p, byPanel[p], states[p], o)
		if !math.IsNaN(rf.LoadLimit) {
			ref.limit = rf.LoadLimit
		}
		switch {
		case col == "delivery_mean_s" && !math.IsNaN(rf.DelayMean):
			ref.line = append(ref.line, Point{X: p.Load, Est: estimateOf(rf.DelayMean)})
		case col == "loss_rate" && !math.IsNaN(rf.Loss) && !math.IsNaN(rf.DelayMean):
			ref.line = append(ref.line, Point{X: p.Load, Est: estimateOf(rf.Loss)})
		}
		out[k] = ref
	}
	return out
}

// belowOptimumText explains, in the delivery-time chart's caption, an
// agent's mean delivery time below the model optimum's.
const belowOptimumText = "Some agents' means lie below the model optimum (grey dashed): the optimum delivers all the offered traffic through unlimited buffers, so near its load limit its queues approach saturation and its mean grows without bound, while an agent that drops packets at full buffers delivers fewer packets, which waited in bounded queues (see the loss chart); and the model treats channels as independent M/G/1 queues, whereas a packet keeps its size from hop to hop, which shortens queues after the first hop."

// belowOptimum reports whether some agent's mean in panels lies below the
// reference line of its topology at the same load.
func belowOptimum(panels []LoadPanel, refs map[refKey]optimumRef) bool {
	for _, lp := range panels {
		ref, ok := refs[refKey{lp.Topology, lp.Failure}]
		if !ok {
			continue
		}
		for _, c := range lp.Curves {
			for _, p := range c.Points {
				for _, q := range ref.line {
					if q.X == p.X && p.Est.Mean < q.Est.Mean {
						return true
					}
				}
			}
		}
	}
	return false
}

// optimumStyle is the reference line's style: dashed, in the theme's
// muted grey.
func optimumStyle(th theme) draw.LineStyle {
	return draw.LineStyle{Color: th.muted, Width: vg.Points(1.2), Dashes: []vg.Length{vg.Points(5), vg.Points(3)}}
}

// addOptimum draws ref on p: the reference line labelled "model optimum"
// and, when the load limit lies within [xlo, xhi], a dotted vertical line
// labelled "load limit".
func addOptimum(p *plot.Plot, th theme, ref optimumRef, yscale float64, logY bool, xlo, xhi, ylo, yhi float64) {
	var xy plotter.XYs
	for _, pt := range ref.line {
		y := pt.Est.Mean * yscale
		if logY {
			if y <= 0 {
				continue
			}
			y = math.Log10(y)
		}
		xy = append(xy, plotter.XY{X: pt.X, Y: y})
	}
	ts := textStyle(th.muted, 7)
	if len(xy) > 0 {
		if len(xy) >= 2 {
			if l, err := plotter.NewLine(xy); err == nil {
				l.LineStyle = optimumStyle(th)
				p.Add(l)
			}
		} else if s, err := plotter.NewScatter(xy); err == nil {
			s.GlyphStyle = draw.GlyphStyle{Color: th.muted, Radius: vg.Points(2.2), Shape: draw.CrossGlyph{}}
			p.Add(s)
		}
		last := xy[len(xy)-1]
		if lb, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{last}, Labels: []string{"model optimum"}}); err == nil {
			ts.XAlign, ts.YAlign = draw.XRight, draw.YBottom
			lb.TextStyle = []text.Style{ts}
			lb.Offset = vg.Point{Y: vg.Points(2)}
			p.Add(lb)
		}
	}
	lim := ref.limit
	switch {
	case math.IsNaN(lim) || !(yhi > ylo):
	case lim >= xlo && lim <= xhi:
		v := plotter.XYs{{X: lim, Y: ylo}, {X: lim, Y: yhi}}
		if l, err := plotter.NewLine(v); err == nil {
			l.LineStyle = draw.LineStyle{Color: th.muted, Width: vg.Points(0.9), Dashes: []vg.Length{vg.Points(1.5), vg.Points(2)}}
			p.Add(l)
		}
		addNote(p, th, lim, yhi, "load limit", draw.XRight, draw.YTop, -vg.Points(2))
	case lim > xhi: // beyond the loads run: say where, low in the panel
		addNote(p, th, xhi, ylo, "load limit "+fmtNum(lim)+" →", draw.XRight, draw.YBottom, -vg.Points(2))
	default:
		addNote(p, th, xlo, ylo, "← load limit "+fmtNum(lim), draw.XLeft, draw.YBottom, vg.Points(2))
	}
}

// addNote writes a small muted label at (x, y) with the given alignment.
func addNote(p *plot.Plot, th theme, x, y float64, s string, align draw.XAlignment, valign draw.YAlignment, dx vg.Length) {
	lb, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: x, Y: y}}, Labels: []string{s}})
	if err != nil {
		return
	}
	ts := textStyle(th.muted, 7)
	ts.XAlign, ts.YAlign = align, valign
	lb.TextStyle = []text.Style{ts}
	lb.Offset = vg.Point{X: dx, Y: vg.Points(2)}
	p.Add(lb)
}

// OptimumState is one row of optimum.parquet: the model optimum of one
// panel's offered matrix in one topology state of its failure schedule,
// over [Start, End). Null values are NaN.
type OptimumState struct {
	Topology string
	Load     float64
	Failure  string
	State    int
	Start    float64 // s
	End      float64 // s
	Down     string  // elements down, comma separated; "" intact
	// Unroutable is the share of the offered demand no routing could
	// deliver in the state; Unsent the part of it whose source is down (a
	// down node sends nothing: neither carried nor lost).
	Unroutable, Unsent float64
	DelayMean          float64 // s
	LoadLimit          float64
	// States is "all" when the panel's rows cover every state of its
	// schedule, "intact" when random failures left only the intact state
	// solved; "" in tables that predate the column (read as "all").
	States string
}

// Reference is the model optimum an agent of one panel is measured against
// in the at-a-glance table: the routing that is optimal in each topology
// state of the panel's failure schedule, re-solved the instant the state
// changes, over the runs' measured window [warm-up, duration).
//
// An agent's mean delivery time averages over its delivered measured
// packets, and sources emit at constant rates, so the packets the optimum
// delivers in state s are proportional to τ_s·(1 − u_s), τ_s being the
// state's time in the window and u_s its unroutable share. The reference
// delivery time is that packet-weighted mean of the states' optima,
//
//	D = Σ τ_s (1 − u_s) D_s / Σ τ_s (1 − u_s),
//
// and the optimum's loss is the demand no routing can deliver over the
// demand sent (a down node sends nothing: its share z_s counts in neither),
//
//	L = Σ τ_s (u_s − z_s) / Σ τ_s (1 − z_s).
//
// A time-weighted mean of D_s would count a state in which a down node's
// demand is neither sent nor delivered as if all of it were. Neither is
// known when some state in the window carrying traffic has no finite
// optimum (beyond its load limit: no routing keeps the channels stable, and
// the optimum's own loss is not computed), or when the states were not
// solved (random failures, which differ from one replicate to the next).
// Packets in flight across a change, and the agents' reaction time, are
// charged to the agent: the reference reacts at once.
type Reference struct {
	DelayMean float64 // s; NaN when unknown
	Loss      float64 // NaN when unknown
	// Window lists the distinct topology states in the measured window
	// with their share of it, in order of first appearance.
	Window []WindowShare
	// Why says, when DelayMean is NaN, why ("" when known).
	Why string
	// LoadLimit is the smallest load limit among the states in the window
	// that carry traffic: beyond it some state has no finite optimum (NaN
	// when unknown).
	LoadLimit float64
}

// WindowShare is a topology state's share of the measured window.
type WindowShare struct {
	Down  string // "" intact
	Share float64
}

// String describes the states of the window: "intact", or e.g.
// "intact 75%, c–d down 25%".
func (r Reference) String() string {
	if len(r.Window) == 1 && r.Window[0].Down == "" {
		return "intact"
	}
	var parts []string
	for _, w := range r.Window {
		name := "intact"
		if w.Down != "" {
			name = w.Down + " down"
		}
		if len(r.Window) == 1 {
			parts = append(parts, name)
			continue
		}
		parts = append(parts, name+" "+stats.Sig(100*w.Share, 3)+"%")
	}
	return strings.Join(parts, ", ")
}

// optimumStates returns d's optimum.parquet rows by panel, each panel's in
// state order.
func optimumStates(d *Data) map[Panel][]OptimumState {
	out := map[Panel][]OptimumState{}
	for _, s := range d.OptimumStates {
		p := Panel{s.Topology, s.Load, s.Failure}
		out[p] = append(out[p], s)
	}
	for _, ss := range out {
		slices.SortStableFunc(ss, func(a, b OptimumState) int { return cmp.Compare(a.State, b.State) })
	}
	return out
}

// measuredWindow returns the measured window [warm-up, duration) of runs
// (the same in every run of a panel); a bound the runs lack is 0 for the
// warm-up and +Inf for the duration.
func measuredWindow(runs []Run) (lo, hi float64) {
	lo, hi = math.NaN(), math.NaN()
	kw, kd := results.Runs.Index("warmup_s"), results.Runs.Index("duration_s")
	for i := range runs {
		if v := runs[i].at(kw); math.IsNaN(lo) && !math.IsNaN(v) {
			lo = v
		}
		if v := runs[i].at(kd); math.IsNaN(hi) && !math.IsNaN(v) {
			hi = v
		}
	}
	if math.IsNaN(lo) {
		lo = 0
	}
	if math.IsNaN(hi) {
		hi = math.Inf(1)
	}
	return lo, hi
}

// reference computes the Reference of panel p whose runs are runs, from
// its optimum.parquet rows states (state order) or, without them, from the
// intact optimum of its runs' opt_* columns when p has no failures.
func reference(p Panel, runs []Run, states []OptimumState, intact Optimum) Reference {
	ref := Reference{DelayMean: math.NaN(), Loss: math.NaN(), LoadLimit: math.NaN()}
	if len(states) == 0 {
		if p.Failure != "none" {
			ref.Why = "no per-state optimum: no optimum.parquet"
			return ref
		}
		if math.IsNaN(intact.DelayMean) && math.IsNaN(intact.LoadLimit) {
			ref.Why = "not computed"
			return ref
		}
	}
	if len(states) > 0 && p.Failure != "none" && states[0].States == results.StatesIntact {
		ref.Why = "random failures: states not solved"
		return ref
	}
	lo, hi := measuredWindow(runs)
	if len(states) == 0 {
		// without failures the intact state is the only one
		states = []OptimumState{{Start: lo, End: hi, DelayMean: intact.DelayMean, LoadLimit: intact.LoadLimit}}
	}
	if math.IsInf(hi, 1) { // runs without duration_s: to the last state's end
		hi = states[len(states)-1].End
	}
	if math.IsInf(hi, 1) {
		hi = lo + 1
		states[0].End = hi
	}
	var tau, wDelay, sDelay, wLost, wSent float64
	known := true
	for _, s := range states {
		t := math.Min(s.End, hi) - math.Max(s.Start, lo)
		if !(t > 0) {
			continue
		}
		tau += t
		if i := slices.IndexFunc(ref.Window, func(w WindowShare) bool { return w.Down == s.Down }); i >= 0 {
			ref.Window[i].Share += t
		} else {
			ref.Window = append(ref.Window, WindowShare{Down: s.Down, Share: t})
		}
		routable := 1 - s.Unroutable
		wLost += t * (s.Unroutable - s.Unsent)
		wSent += t * (1 - s.Unsent)
		if routable <= 0 {
			continue // nothing to carry in this state
		}
		if !math.IsNaN(s.LoadLimit) && !(s.LoadLimit >= ref.LoadLimit) {
			ref.LoadLimit = s.LoadLimit
		}
		if math.IsNaN(s.DelayMean) {
			if known {
				ref.Why = "not computed"
				if !math.IsNaN(s.LoadLimit) && p.Load >= s.LoadLimit {
					ref.Why = "over the load limit (" + stats.Sig(s.LoadLimit, 3) + ")"
					if s.Down != "" {
						ref.Why = "over the load limit with " + s.Down + " down (" + stats.Sig(s.LoadLimit, 3) + ")"
					}
				}
			}
			known = false
			continue
		}
		wDelay += t * routable
		sDelay += t * routable * s.DelayMean
	}
	for i := range ref.Window {
		ref.Window[i].Share /= tau
	}
	if !known {
		return ref
	}
	if tau == 0 {
		ref.Why = "no state in the measured window"
		return ref
	}
	if wDelay > 0 {
		ref.DelayMean = sDelay / wDelay
	} else {
		ref.Why = "nothing routable"
	}
	if wSent > 0 {
		ref.Loss = wLost / wSent
	}
	return ref
}
