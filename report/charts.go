package report

import (
	"fmt"
	"image/color"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"hoplore/results"
)

const (
	panelW = 3.7 * vg.Inch
	panelH = 2.7 * vg.Inch
)

var loadLabel = "offered load (normalised: 1 = busiest channel saturated)"

// metricAxis describes a runs.parquet metric on a y axis.
type metricAxis struct {
	label string  // without unit
	scale float64 // display units per stored unit
	unit  string
	logY  bool
}

// axisLabels name the y axis of a charted column where its schema label
// (results.Column.Label) reads too tersely on an axis.
var axisLabels = map[string]string{
	"delivery_mean_s": "mean delivery time",
	"delivery_p95_s":  "delivery time, p95",
	"loss_rate":       "loss rate",
}

// axisFor returns the y axis of column c: times in a unit fitting the
// largest value, on a log scale when they span more than a factor 30;
// loss rate in percent of packets; other columns in their display unit
// (results.Column.Display).
func axisFor(c *results.Column, curves []Curve) metricAxis {
	lo, hi := valueRange(curves)
	label := c.Label
	if l, ok := axisLabels[c.Name]; ok {
		label = l
	}
	switch {
	case c.Name == "loss_rate":
		return metricAxis{label: label, scale: 100, unit: "% of packets"}
	case c.Unit == "s":
		scale, unit := timeUnit(hi)
		return metricAxis{label: label, scale: scale, unit: unit, logY: lo > 0 && hi/lo > 30}
	}
	scale, unit := c.Display()
	return metricAxis{label: label, scale: scale, unit: unit}
}

// setRange fixes an axis range, padding a degenerate one.
func setRange(ax *plot.Axis, lo, hi float64, logScale bool) {
	if math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		lo, hi = 0, 1
	}
	if logScale {
		// A log axis is a linear axis of log10 values with ticks labelled
		// in the values: plot.LogScale would misplace the axis label's
		// bounding box (it centres it on the mean of Min and Max, not on
		// the middle of the axis) and leave a wide gap above the panel.
		ax.Tick.Marker = logAxisTicks{}
		ax.Min, ax.Max = math.Log10(lo/1.25), math.Log10(hi*1.25)
		return
	}
	if hi <= lo {
		hi = lo + math.Max(1, math.Abs(lo))*0.1
	}
	ax.Min, ax.Max = lo, hi
}

// agentIndex fixes each agent's style by its place in the sorted list.
func agentIndex(agents []string) map[string]int {
	m := map[string]int{}
	for i, a := range agents {
		m[a] = i
	}
	return m
}

// loadChart draws column col against load: rows are topologies, columns
// failure schedules. refs, by topology, add the model optimum (nil: none).
//
// ringed, when not nil, marks a chart of means over completed flows: the
// legend says so, and the points of the cells in ringed (agents completing
// clearly fewer flows, fewerCompleted) are ringed.
func loadChart(id, title, caption string, panels []LoadPanel, agents []string, col *results.Column, refs map[refKey]optimumRef, ringed map[Cell]bool, which string) *chart {
	idx := agentIndex(agents)
	var topos, fails []string
	var all []Curve
	for _, lp := range panels {
		if !slices.Contains(topos, lp.Topology) {
			topos = append(topos, lp.Topology)
		}
		if !slices.Contains(fails, lp.Failure) {
			fails = append(fails, lp.Failure)
		}
		all = append(all, lp.Curves...)
	}
	withRefs := all
	for _, lp := range panels {
		if ref, ok := refs[refKey{lp.Topology, lp.Failure}]; ok && len(ref.line) > 0 {
			withRefs = append(withRefs, Curve{Points: ref.line})
		}
	}
	ax := axisFor(col, withRefs)
	lo, hi := valueRange(withRefs)
	xlo, xhi := math.Inf(1), math.Inf(-1)
	for _, c := range all {
		for _, p := range c.Points {
			xlo, xhi = math.Min(xlo, p.X), math.Max(xhi, p.X)
		}
	}
	if !ax.logY {
		lo = math.Min(lo, 0)
	}
	notes := []string{"lines: mean across replicates; bands: 95% confidence interval (Student t)"}
	if len(refs) > 0 {
		notes = append(notes, "grey dashed: model optimum (best routing of each topology state)",
			"grey dotted: load limit, the highest load any routing could carry")
	}
	if ringed != nil {
		notes = append(notes, "completed "+which+" only: the share completed has its own chart",
			"ringed: completes clearly fewer "+which+" than the agent completing most")
	}
	legend := agentLegend(agents, idx, notes...)
	return &chart{ID: id, Title: title, Caption: caption, build: func(th theme) *figure {
		f := &figure{panelW: panelW, panelH: panelH, legend: legend}
		f.legendH = legendHeight(legend, vg.Length(len(fails))*panelW)
		f.panels = make([][]*plot.Plot, len(topos))
		for j := range f.panels {
			f.panels[j] = make([]*plot.Plot, len(fails))
		}
		for _, lp := range panels {
			unit := ax.unit
			if ax.logY {
				unit += ", log scale"
			}
			p := newPanel(th, lp.Topology+" · failures: "+lp.Failure, loadLabel, fmt.Sprintf("%s (%s)", ax.label, unit))
			for _, c := range lp.Curves {
				addCurve(p, c, styleFor(idx[c.Agent]), ax.scale, ax.logY, true)
			}
			addRings(p, th, lp, ringed, ax.scale, ax.logY)
			setRange(&p.X, xlo, xhi, false)
			setRange(&p.Y, lo*ax.scale, hi*ax.scale, ax.logY)
			if ref, ok := refs[refKey{lp.Topology, lp.Failure}]; ok {
				addOptimum(p, th, ref, ax.scale, ax.logY, xlo, xhi, p.Y.Min, p.Y.Max)
			}
			f.panels[slices.Index(topos, lp.Topology)][slices.Index(fails, lp.Failure)] = p
		}
		return f
	}}
}

// eventMarks draws the event line at x = 0, the other events of the window,
// and one recovery bar per agent near the top of the panel.
type eventMarks struct {
	th       theme
	others   []Event
	at       float64
	recovery []AgentRecovery
	idx      map[string]int
}

func (m eventMarks) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	x0 := trX(0)
	c.StrokeLine2(draw.LineStyle{Color: m.th.ink, Width: vg.Points(1.2)}, x0, c.Min.Y, x0, c.Max.Y)
	ts := textStyle(m.th.muted, 7)
	ts.XAlign, ts.YAlign = draw.XLeft, draw.YBottom
	for _, o := range m.others {
		x := trX(o.At - m.at)
		c.StrokeLine2(draw.LineStyle{Color: m.th.muted, Width: vg.Points(0.9), Dashes: []vg.Length{vg.Points(3), vg.Points(2)}}, x, c.Min.Y, x, c.Max.Y)
		lt, dx := ts, vg.Points(2)
		if x > (c.Min.X+c.Max.X)/2 {
			lt.XAlign, dx = draw.XRight, -dx
		}
		c.FillText(lt, vg.Point{X: x + dx, Y: c.Min.Y + vg.Points(2)}, o.Element+" "+o.Action)
	}
	lt := textStyle(m.th.muted, 6.5)
	lt.XAlign, lt.YAlign = draw.XLeft, draw.YCenter
	for i, r := range m.recovery {
		st := styleFor(m.idx[r.Agent])
		y := c.Max.Y - vg.Points(5) - vg.Length(i)*vg.Points(7)
		line := draw.LineStyle{Color: st.color, Width: vg.Points(2.2)}
		if r.Recovery.N == 0 {
			// never recovered in any replicate: a dotted bar to the edge
			line.Dashes = []vg.Length{vg.Points(1), vg.Points(2)}
			c.StrokeLine2(line, x0, y, c.Max.X, y)
			continue
		}
		x := trX(r.Recovery.Mean)
		if x > c.Max.X {
			x = c.Max.X
		}
		c.StrokeLine2(line, x0, y, x, y)
		c.StrokeLine2(draw.LineStyle{Color: st.color, Width: vg.Points(1.2)}, x, y-vg.Points(2.6), x, y+vg.Points(2.6))
		label := fmt.Sprintf("%.3g s", r.Recovery.Mean)
		if r.NotRecovered > 0 {
			label += fmt.Sprintf(" (%d of %d never)", r.NotRecovered, r.Runs)
		}
		if w := lt.Width(label); x+vg.Points(3)+w > c.Max.X {
			lr := lt
			lr.XAlign = draw.XRight
			c.FillText(lr, vg.Point{X: c.Max.X, Y: y - vg.Points(4)}, label)
		} else {
			c.FillText(lt, vg.Point{X: x + vg.Points(3), Y: y}, label)
		}
	}
}

// eventChart draws delivery time and loss per bin around each event of one
// topology and failure schedule: one row per event.
func eventChart(id, title, caption string, eps []EventPanel, agents []string) *chart {
	idx := agentIndex(agents)
	var delays []Curve
	for _, ep := range eps {
		delays = append(delays, ep.Delivery...)
	}
	_, dhi := valueRange(delays)
	scale, unit := timeUnit(dhi)
	legend := agentLegend(agents, idx,
		"lines: mean across replicates per bin; bands: 95% CI; solid vertical: the event; dashed: other events",
		"bars at the top: mean time to recovery per agent, over the replicates that recovered (dotted to the edge: none did)")
	return &chart{ID: id, Title: title, Caption: caption, build: func(th theme) *figure {
		f := &figure{panelW: panelW, panelH: panelH, legend: legend}
		f.legendH = legendHeight(legend, 2*panelW)
		for _, ep := range eps {
			head := fmt.Sprintf("%s %s at %s s · load %s", ep.Element, ep.Action, fmtNum(ep.At), fmtNum(ep.Load))
			xlo, xhi := math.Inf(1), math.Inf(-1)
			for _, c := range append(slices.Clone(ep.Delivery), ep.Loss...) {
				for _, p := range c.Points {
					xlo, xhi = math.Min(xlo, p.X-ep.Bin/2), math.Max(xhi, p.X+ep.Bin/2)
				}
			}
			pd := newPanel(th, head+": delivery time", "time since the event (s)", "mean delivery time per bin ("+unit+")")
			for _, c := range ep.Delivery {
				addCurve(pd, c, styleFor(idx[c.Agent]), scale, false, false)
			}
			lo, hi := valueRange(ep.Delivery)
			setRange(&pd.X, xlo, xhi, false)
			// headroom for one recovery bar per agent above the data
			setRange(&pd.Y, math.Min(0, lo*scale), hi*scale*(1.1+0.05*float64(len(ep.Recovery))), false)
			pd.Add(eventMarks{th: th, others: ep.Others, at: ep.At, recovery: ep.Recovery, idx: idx})
			pl := newPanel(th, head+": loss", "time since the event (s)", "loss per bin (% of packets generated)")
			for _, c := range ep.Loss {
				addCurve(pl, c, styleFor(idx[c.Agent]), 100, false, false)
			}
			_, lhi := valueRange(ep.Loss)
			setRange(&pl.X, xlo, xhi, false)
			setRange(&pl.Y, 0, math.Max(lhi*100, 1), false)
			pl.Add(eventMarks{th: th, others: ep.Others, at: ep.At, idx: idx})
			f.panels = append(f.panels, []*plot.Plot{pd, pl})
		}
		return f
	}}
}

// viridis is the perceptually uniform, colour-blind-safe colour map of van
// der Walt & Smith (matplotlib, 2015), ten evenly spaced stops (values from
// memory).
var viridis = []color.NRGBA{
	hex("#440154"), hex("#482878"), hex("#3E4A89"), hex("#31688E"), hex("#26828E"),
	hex("#1F9E89"), hex("#35B779"), hex("#6DCD59"), hex("#B4DE2C"), hex("#FDE725"),
}

// heatColor maps v in [0, 1] (clamped) onto viridis.
func heatColor(v float64) color.NRGBA {
	v = math.Max(0, math.Min(1, v))
	x := v * float64(len(viridis)-1)
	i := int(math.Floor(x))
	if i >= len(viridis)-1 {
		return viridis[len(viridis)-1]
	}
	t := x - float64(i)
	a, b := viridis[i], viridis[i+1]
	mix := func(p, q uint8) uint8 { return uint8(math.Round(float64(p) + t*(float64(q)-float64(p)))) }
	return color.NRGBA{mix(a.R, b.R), mix(a.G, b.G), mix(a.B, b.B), 255}
}

// heatPlotter draws a grid of coloured cells, the first row on top: row i
// spans y in [n−1−i−½, n−1−i+½], column j spans x in [edges[j], edges[j+1]].
type heatPlotter struct {
	values [][]float64
	edges  []float64
	th     theme
}

func (h heatPlotter) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	for i, row := range h.values {
		for j, v := range row {
			if math.IsNaN(v) {
				continue
			}
			y := float64(len(h.values) - 1 - i) // first row on top
			r := vg.Rectangle{
				Min: vg.Point{X: trX(h.edges[j]), Y: trY(y - 0.46)},
				Max: vg.Point{X: trX(h.edges[j+1]) + vg.Points(0.4), Y: trY(y + 0.46)},
			}
			c.SetColor(heatColor(v))
			c.Fill(r.Path())
		}
	}
}

func (h heatPlotter) DataRange() (xmin, xmax, ymin, ymax float64) {
	return h.edges[0], h.edges[len(h.edges)-1], -0.5, float64(len(h.values)) - 0.5
}

// colourBar draws the utilisation scale into a legend strip.
func colourBar(label string) func(draw.Canvas, theme) vg.Length {
	return func(c draw.Canvas, th theme) vg.Length {
		x, y := c.Min.X+vg.Points(10), c.Max.Y-vg.Points(18)
		w, h := vg.Points(160), vg.Points(9)
		const steps = 40
		for k := range steps {
			r := vg.Rectangle{Min: vg.Point{X: x + w*vg.Length(k)/steps, Y: y}, Max: vg.Point{X: x + w*vg.Length(k+1)/steps + vg.Points(0.3), Y: y + h}}
			c.SetColor(heatColor((float64(k) + 0.5) / steps))
			c.Fill(r.Path())
		}
		ts := textStyle(th.muted, 7.5)
		ts.XAlign, ts.YAlign = draw.XCenter, draw.YTop
		for _, v := range []float64{0, 0.25, 0.5, 0.75, 1} {
			c.FillText(ts, vg.Point{X: x + w*vg.Length(v), Y: y - vg.Points(2)}, fmt.Sprint(v))
		}
		lt := textStyle(th.ink, 8.5)
		lt.YAlign = draw.YCenter
		c.FillText(lt, vg.Point{X: x + w + vg.Points(10), Y: y + h/2}, label)
		return vg.Points(36)
	}
}

func heatPanel(th theme, title, xlabel string, h Heat, edges []float64) *plot.Plot {
	p := basePanel(th, title, xlabel, "agent")
	rows := slices.Clone(h.Rows)
	slices.Reverse(rows)
	p.Y.Tick.Marker = nominalTicks(rows)
	p.Y.Tick.Length = 0
	p.Add(heatPlotter{values: h.Values, edges: edges, th: th})
	p.Y.Min, p.Y.Max = -0.5, float64(len(h.Rows))-0.5
	p.X.Min, p.X.Max = edges[0], edges[len(edges)-1]
	return p
}

func nominalTicks(names []string) plot.ConstantTicks {
	ts := make(plot.ConstantTicks, len(names))
	for i, n := range names {
		ts[i] = plot.Tick{Value: float64(i), Label: n}
	}
	return ts
}

func heatHeight(rows int) vg.Length { return vg.Points(80) + vg.Length(rows)*vg.Points(20) }

// channelChart draws the mean utilisation of each directed channel under
// each agent in one panel.
func channelChart(id, title, caption string, p Panel, h Heat) *chart {
	return &chart{ID: id, Title: title, Caption: caption, build: func(th theme) *figure {
		edges := make([]float64, len(h.Cols)+1)
		for j := range edges {
			edges[j] = float64(j) - 0.5
		}
		pl := heatPanel(th, fmt.Sprintf("%s · load %s · failures: %s", p.Topology, fmtNum(p.Load), p.Failure),
			"directed channel (from→to), busiest first", h, edges)
		pl.X.Tick.Marker = nominalTicks(h.Cols)
		pl.X.Tick.Label.Rotation = math.Pi / 2
		pl.X.Tick.Label.XAlign, pl.X.Tick.Label.YAlign = draw.XRight, draw.YCenter
		longest := vg.Length(0)
		for _, c := range h.Cols {
			longest = max(longest, pl.X.Tick.Label.Width(c))
		}
		legend := colourBar("utilisation (fraction of the measured window spent transmitting)")
		w := max(6*vg.Inch, vg.Points(130)+vg.Length(len(h.Cols))*vg.Points(13))
		return &figure{panels: [][]*plot.Plot{{pl}}, panelW: w, panelH: heatHeight(len(h.Rows)) + longest, legend: legend, legendH: vg.Points(36)}
	}}
}

// timeChart draws the busiest channel's utilisation per bin under each agent.
func timeChart(id, title, caption string, p Panel, h Heat, starts []float64, bin float64) *chart {
	return &chart{ID: id, Title: title, Caption: caption, build: func(th theme) *figure {
		edges := append(slices.Clone(starts), starts[len(starts)-1]+bin)
		pl := heatPanel(th, fmt.Sprintf("%s · load %s · failures: %s", p.Topology, fmtNum(p.Load), p.Failure),
			"simulated time (s)", h, edges)
		legend := colourBar("utilisation of the busiest channel in the bin")
		return &figure{panels: [][]*plot.Plot{{pl}}, panelW: 7.4 * vg.Inch, panelH: heatHeight(len(h.Rows)), legend: legend, legendH: vg.Points(36)}
	}}
}

// slug makes a string safe for element ids and file names.
func slug(s string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(s) {
		switch {
		case r >= 'a' && r <= 'z', r >= '0' && r <= '9':
			b.WriteRune(r)
		default:
			if b.Len() > 0 && !strings.HasSuffix(b.String(), "-") {
				b.WriteByte('-')
			}
		}
	}
	return strings.TrimSuffix(b.String(), "-")
}

// addRings rings the points of lp's curves whose cell is in ringed.
func addRings(p *plot.Plot, th theme, lp LoadPanel, ringed map[Cell]bool, yscale float64, logY bool) {
	var pts plotter.XYs
	for _, c := range lp.Curves {
		for _, pt := range c.Points {
			m := pt.Est.Mean * yscale
			if !ringed[Cell{lp.Topology, c.Agent, pt.X, lp.Failure}] || math.IsNaN(m) || math.IsInf(m, 0) || (logY && m <= 0) {
				continue
			}
			if logY {
				m = math.Log10(m)
			}
			pts = append(pts, plotter.XY{X: pt.X, Y: m})
		}
	}
	if len(pts) == 0 {
		return
	}
	if sc, err := plotter.NewScatter(pts); err == nil {
		sc.GlyphStyle = draw.GlyphStyle{Color: th.ink, Radius: vg.Points(6), Shape: draw.RingGlyph{}}
		p.Add(sc)
	}
}
