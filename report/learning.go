package report

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"hoplore/results"
	"hoplore/stats"
)

// LearningPanel holds the learning curves of one panel (topology, load,
// failure schedule): each agent's delivery time and loss per bin over the
// whole run, warm-up included, the mean across replicates with its 95%
// confidence half-width, and where the initial transient was detected.
type LearningPanel struct {
	Panel
	Bin       float64 // bin width, s
	Warmup    float64 // the configured warm-up, s
	Delivery  []Curve // x: middle of the bin, s; mean delivery time, s
	Loss      []Curve // dropped / generated
	Transient []AgentTransient
}

// AgentTransient is what MSER-5 found in one agent's runs of a panel
// (runs.parquet's warmup_detected_s and warmup_detection).
type AgentTransient struct {
	Agent string
	// Longest is the longest transient detected among the runs, s; NaN
	// when none was.
	Longest   float64
	Runs      int // runs of the agent in the panel
	Unsettled int // runs whose transient was not seen to end
	TooShort  int // runs with too few bins to tell
}

// Short reports whether the agent's transient outlasts the warm-up, or
// some run never settled.
func (a AgentTransient) Short(warmup float64) bool {
	return a.Unsettled > 0 || a.Longest > warmup
}

// LearningCurves aggregates series.parquet into learning curves, one
// LearningPanel per panel in panel order (failure schedule "none" first),
// at most max of them; more is how many were left out.
func LearningCurves(d *Data, max int) (panels []LearningPanel, more int) {
	agents := d.Agents()
	type key struct {
		p     Panel
		agent string
		start float64
	}
	type vals struct{ del, loss []float64 }
	acc := map[key]*vals{}
	width := map[Panel]float64{}
	for _, b := range d.Series {
		k := key{Panel{b.Topology, b.Load, b.Failure}, b.Agent, b.Start}
		v := acc[k]
		if v == nil {
			v = &vals{}
			acc[k] = v
		}
		v.del = append(v.del, b.DeliveryMean)
		v.loss = append(v.loss, b.Loss())
		width[k.p] = math.Max(width[k.p], b.End-b.Start)
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
	wi, di := results.Runs.Index("warmup_s"), results.Runs.Index("warmup_detected_s")
	for _, p := range ps {
		lp := LearningPanel{Panel: p, Bin: width[p], Warmup: math.NaN()}
		for _, a := range agents {
			dc, lc := Curve{Agent: a}, Curve{Agent: a}
			for _, k := range keys {
				if k.p != p || k.agent != a {
					continue
				}
				x := k.start + lp.Bin/2
				if e := stats.MeanCI95(acc[k].del); e.N > 0 {
					dc.Points = append(dc.Points, Point{X: x, Est: e})
				}
				if e := stats.MeanCI95(acc[k].loss); e.N > 0 {
					lc.Points = append(lc.Points, Point{X: x, Est: e})
				}
			}
			if len(dc.Points) > 0 || len(lc.Points) > 0 {
				lp.Delivery, lp.Loss = append(lp.Delivery, dc), append(lp.Loss, lc)
			}
			t := AgentTransient{Agent: a, Longest: math.NaN()}
			for i := range d.Runs {
				r := &d.Runs[i]
				if r.Agent != a || (Panel{r.Topology, r.Load, r.Failure}) != p {
					continue
				}
				t.Runs++
				if w := r.at(wi); !math.IsNaN(w) {
					lp.Warmup = nanMax(lp.Warmup, w)
				}
				switch r.WarmupDetection {
				case results.WarmupUnsettled:
					t.Unsettled++
				case results.WarmupTooFewBins, "":
					t.TooShort++
				}
				if v := r.at(di); !math.IsNaN(v) {
					t.Longest = nanMax(t.Longest, v)
				}
			}
			if t.Runs > 0 {
				lp.Transient = append(lp.Transient, t)
			}
		}
		panels = append(panels, lp)
	}
	return panels, more
}

func nanMax(a, b float64) float64 {
	if math.IsNaN(a) {
		return b
	}
	return math.Max(a, b)
}

// transientNote says, in a sentence, which agents' transients outlast the
// warm-up in lp; "" when none does.
func (lp LearningPanel) transientNote() string {
	var out string
	for _, t := range lp.Transient {
		if !t.Short(lp.Warmup) {
			continue
		}
		if out != "" {
			out += "; "
		}
		out += t.Agent + ": "
		switch {
		case t.Longest > lp.Warmup:
			out += fmt.Sprintf("transient detected up to %s s", stats.Sig(t.Longest, 3))
			if t.Unsettled > 0 {
				out += fmt.Sprintf(", %d of %d runs never settled", t.Unsettled, t.Runs)
			}
		default:
			out += fmt.Sprintf("%d of %d runs never settled", t.Unsettled, t.Runs)
		}
	}
	if out == "" {
		return ""
	}
	return fmt.Sprintf("%s, load %s, failures %s: warm-up %s s is too short (%s).", lp.Topology, fmtNum(lp.Load), lp.Failure, stats.Sig(lp.Warmup, 3), out)
}

// transientMarks draws the configured warm-up as a solid line labelled
// "warm-up" and, dashed in each agent's colour, the longest transient
// MSER-5 detected in its runs.
type transientMarks struct {
	th     theme
	warmup float64
	marks  []AgentTransient
	idx    map[string]int
}

func (m transientMarks) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	if !math.IsNaN(m.warmup) {
		x := trX(m.warmup)
		c.StrokeLine2(draw.LineStyle{Color: m.th.muted, Width: vg.Points(1.1)}, x, c.Min.Y, x, c.Max.Y)
		ts := textStyle(m.th.muted, 7)
		ts.XAlign, ts.YAlign = draw.XLeft, draw.YTop
		c.FillText(ts, vg.Point{X: x + vg.Points(2), Y: c.Max.Y - vg.Points(2)}, "warm-up")
	}
	for _, t := range m.marks {
		if math.IsNaN(t.Longest) || t.Longest <= 0 {
			continue
		}
		x := trX(t.Longest)
		c.StrokeLine2(draw.LineStyle{Color: styleFor(m.idx[t.Agent]).color, Width: vg.Points(1.1), Dashes: []vg.Length{vg.Points(4), vg.Points(2)}}, x, c.Min.Y, x, c.Max.Y)
	}
}

// meanRange returns the smallest and largest mean of the curves' points:
// with few replicates a 95% band can be far wider than the curves, and
// axes that followed it would flatten them.
func meanRange(curves []Curve) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, c := range curves {
		for _, p := range c.Points {
			if v := p.Est.Mean; !math.IsNaN(v) && !math.IsInf(v, 0) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
	}
	return lo, hi
}

// learningChart draws, one row per panel, each agent's delivery time (left)
// and loss (right) per bin over the whole run, with the warm-up and the
// detected transients marked.
func learningChart(id, title, caption string, lps []LearningPanel, agents []string) *chart {
	idx := agentIndex(agents)
	var delays []Curve
	for _, lp := range lps {
		delays = append(delays, lp.Delivery...)
	}
	_, dhi := meanRange(delays)
	scale, unit := timeUnit(dhi)
	legend := agentLegend(agents, idx,
		"lines: mean across replicates per bin (warm-up included); bands: 95% CI (cut at the panel's edge: the axes follow the means)",
		"solid vertical: the warm-up; dashed, in an agent's colour: the longest initial transient MSER-5 detected in its runs")
	return &chart{ID: id, Title: title, Caption: caption, build: func(th theme) *figure {
		f := &figure{panelW: panelW, panelH: panelH, legend: legend}
		f.legendH = legendHeight(legend, 2*panelW)
		for _, lp := range lps {
			head := fmt.Sprintf("%s · load %s · failures: %s", lp.Topology, fmtNum(lp.Load), lp.Failure)
			xhi := 0.0
			for _, c := range append(slices.Clone(lp.Delivery), lp.Loss...) {
				for _, p := range c.Points {
					xhi = math.Max(xhi, p.X+lp.Bin/2)
				}
			}
			marks := transientMarks{th: th, warmup: lp.Warmup, marks: lp.Transient, idx: idx}
			pd := newPanel(th, head+": delivery time", "time since the start of the run (s)", "mean delivery time per bin ("+unit+")")
			for _, c := range lp.Delivery {
				addCurve(pd, c, styleFor(idx[c.Agent]), scale, false, false)
			}
			lo, hi := meanRange(lp.Delivery)
			setRange(&pd.X, 0, xhi, false)
			setRange(&pd.Y, math.Min(0, lo*scale), hi*scale*1.1, false)
			pd.Add(marks)
			pl := newPanel(th, head+": loss", "time since the start of the run (s)", "loss per bin (% of packets generated)")
			for _, c := range lp.Loss {
				addCurve(pl, c, styleFor(idx[c.Agent]), 100, false, false)
			}
			_, lhi := meanRange(lp.Loss)
			setRange(&pl.X, 0, xhi, false)
			setRange(&pl.Y, 0, math.Min(math.Max(lhi*100*1.1, 1), 100), false)
			pl.Add(marks)
			f.panels = append(f.panels, []*plot.Plot{pd, pl})
		}
		return f
	}}
}
