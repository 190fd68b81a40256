package report

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"hoplore/results"
	"hoplore/stats"
)

// Point is one estimate at one x value.
type Point struct {
	X   float64
	Est stats.Estimate
}

// Curve is one agent's line in a panel.
type Curve struct {
	Agent  string
	Points []Point
}

// LoadPanel holds, for one topology and failure schedule, each agent's
// curve of a runs.parquet metric against normalised load: the mean across
// replicates and its 95% confidence half-width.
type LoadPanel struct {
	Topology string
	Failure  string
	Curves   []Curve // one per agent, in Data.Agents order; agents absent from the panel are left out
}

// LoadCurves aggregates metric, a numeric runs.parquet column, by
// topology, failure schedule, agent and load. It is an input error if the
// metric is not such a column.
func LoadCurves(d *Data, metricName string) ([]LoadPanel, error) {
	k, err := metricIndex(metricName)
	if err != nil {
		return nil, err
	}
	return loadCurves(d, k), nil
}

// cellEstimates returns, per cell, the mean of Run.Values[k] across its
// replicates with its 95% Student t half-width (stats.MeanCI95); for a cell
// of one run and a column with a one-run interval (results.Column.OneRunCI)
// the half-width is that run's own.
func cellEstimates(d *Data, k int) map[Cell]stats.Estimate {
	vals := map[Cell][]float64{}
	one := map[Cell]float64{}
	ci := -1
	if k >= 0 && k < len(results.Runs.Columns) && results.Runs.Columns[k].OneRunCI != "" {
		ci = results.Runs.Index(results.Runs.Columns[k].OneRunCI)
	}
	for _, r := range d.Runs {
		vals[r.Cell] = append(vals[r.Cell], r.at(k))
		one[r.Cell] = r.at(ci)
	}
	out := make(map[Cell]stats.Estimate, len(vals))
	for c, v := range vals {
		e := stats.MeanCI95(v)
		if len(v) == 1 && e.N == 1 && ci >= 0 {
			e.CI95 = one[c]
		}
		out[c] = e
	}
	return out
}

// loadCurves aggregates Run.Values[k].
func loadCurves(d *Data, k int) []LoadPanel {
	vals := cellEstimates(d, k)
	var out []LoadPanel
	for _, topo := range d.Topologies() {
		for _, fail := range d.Failures() {
			lp := LoadPanel{Topology: topo, Failure: fail}
			for _, ag := range d.Agents() {
				c := Curve{Agent: ag}
				for _, load := range d.Loads() {
					e, ok := vals[Cell{topo, ag, load, fail}]
					if !ok {
						continue
					}
					c.Points = append(c.Points, Point{X: load, Est: e})
				}
				if len(c.Points) > 0 {
					lp.Curves = append(lp.Curves, c)
				}
			}
			if len(lp.Curves) > 0 {
				out = append(out, lp)
			}
		}
	}
	return out
}

// Event is a failure event as recorded in recoveries.parquet.
type Event struct {
	Topology string
	Failure  string
	At       float64 // s
	Element  string
	Action   string
}

// String describes the event, e.g. "c–d down at 300 s".
func (e Event) String() string {
	return fmt.Sprintf("%s %s at %s s", e.Element, e.Action, fmtNum(e.At))
}

// AgentRecovery summarises one agent's recovery from an event across the
// replicates in which the event happened.
type AgentRecovery struct {
	Agent        string
	Runs         int            // replicates with the event
	NotRecovered int            // of which never recovered (recovery_s null)
	Recovery     stats.Estimate // s, over the recovered replicates
	Lost         stats.Estimate // packets lost, over all replicates with the event
}

// EventPanel holds, for one event at one load, each agent's delivery time
// and loss per bin around the event, as mean and 95% CI across the
// replicates in which the event happened. X is the bin's midpoint minus the
// event time, in seconds.
type EventPanel struct {
	Event
	Load     float64
	Bin      float64 // bin width, s
	Delivery []Curve // mean delivery time per bin, s
	Loss     []Curve // dropped/generated per bin
	Others   []Event // other events of the same schedule inside the window
	Recovery []AgentRecovery
}

// EventOptions chooses what EventCurves shows.
type EventOptions struct {
	Load      float64 // normalised load of the runs shown
	PreBins   int     // bins shown before the event
	PostBins  int     // bins shown after the event
	MaxEvents int     // per topology and schedule; the events present in most replicates, then earliest
}

// EventCurves aggregates series.parquet around each failure event of
// recoveries.parquet at load o.Load. Bins are aligned on the event:
// bin k holds the bins whose start s satisfies k = floor((s − at)/w + ε).
func EventCurves(d *Data, o EventOptions) []EventPanel {
	// events and the replicates they happened in, per agent
	type runKey struct {
		Cell
		Replicate int
	}
	evReps := map[Event]map[string][]Recovery{}
	var events []Event
	for _, r := range d.Recoveries {
		if r.Load != o.Load {
			continue
		}
		e := Event{r.Topology, r.Failure, r.At, r.Element, r.Action}
		if evReps[e] == nil {
			evReps[e] = map[string][]Recovery{}
			events = append(events, e)
		}
		evReps[e][r.Agent] = append(evReps[e][r.Agent], r)
	}
	count := func(e Event) int {
		n := 0
		for _, rs := range evReps[e] {
			n += len(rs)
		}
		return n
	}
	slices.SortFunc(events, func(a, b Event) int {
		return cmp.Or(cmp.Compare(a.Topology, b.Topology), compareFailure(a.Failure, b.Failure),
			cmp.Compare(a.At, b.At), cmp.Compare(a.Element, b.Element), cmp.Compare(a.Action, b.Action))
	})
	// choose up to MaxEvents per (topology, failure)
	var chosen []Event
	for i := 0; i < len(events); {
		j := i
		for j < len(events) && events[j].Topology == events[i].Topology && events[j].Failure == events[i].Failure {
			j++
		}
		group := slices.Clone(events[i:j])
		slices.SortStableFunc(group, func(a, b Event) int { return cmp.Compare(count(b), count(a)) })
		if o.MaxEvents > 0 && len(group) > o.MaxEvents {
			group = group[:o.MaxEvents]
		}
		slices.SortStableFunc(group, func(a, b Event) int { return cmp.Compare(a.At, b.At) })
		chosen = append(chosen, group...)
		i = j
	}
	bins := map[runKey][]Bin{}
	for _, b := range d.Series {
		if b.Load == o.Load {
			k := runKey{b.Cell, b.Replicate}
			bins[k] = append(bins[k], b)
		}
	}
	var out []EventPanel
	for _, e := range chosen {
		ep := EventPanel{Event: e, Load: o.Load}
		// bin width from the first run's series
		for _, ag := range d.Agents() {
			for _, rec := range evReps[e][ag] {
				if bs := bins[runKey{rec.Cell, rec.Replicate}]; len(bs) > 0 && ep.Bin == 0 {
					ep.Bin = bs[0].End - bs[0].Start
				}
			}
		}
		if ep.Bin <= 0 {
			continue
		}
		lo, hi := -float64(o.PreBins)*ep.Bin, float64(o.PostBins)*ep.Bin
		for _, other := range events {
			if other != e && other.Topology == e.Topology && other.Failure == e.Failure &&
				other.At-e.At >= lo && other.At-e.At <= hi && count(other) > 0 {
				ep.Others = append(ep.Others, other)
			}
		}
		for _, ag := range d.Agents() {
			recs := evReps[e][ag]
			if len(recs) == 0 {
				continue
			}
			ar := AgentRecovery{Agent: ag, Runs: len(recs)}
			var rec, lost []float64
			delay, loss := map[int][]float64{}, map[int][]float64{}
			for _, r := range recs {
				lost = append(lost, float64(r.Lost))
				if math.IsNaN(r.Recovery) {
					ar.NotRecovered++
				} else {
					rec = append(rec, r.Recovery)
				}
				for _, b := range bins[runKey{r.Cell, r.Replicate}] {
					k := int(math.Floor((b.Start-e.At)/ep.Bin + 1e-9))
					if k < -o.PreBins || k >= o.PostBins {
						continue
					}
					delay[k] = append(delay[k], b.DeliveryMean)
					loss[k] = append(loss[k], b.Loss())
				}
			}
			ar.Recovery, ar.Lost = stats.MeanCI95(rec), stats.MeanCI95(lost)
			ep.Recovery = append(ep.Recovery, ar)
			ep.Delivery = append(ep.Delivery, binCurve(ag, delay, ep.Bin))
			ep.Loss = append(ep.Loss, binCurve(ag, loss, ep.Bin))
		}
		out = append(out, ep)
	}
	return out
}

func binCurve(agent string, vals map[int][]float64, w float64) Curve {
	ks := make([]int, 0, len(vals))
	for k := range vals {
		ks = append(ks, k)
	}
	slices.Sort(ks)
	c := Curve{Agent: agent}
	for _, k := range ks {
		c.Points = append(c.Points, Point{X: (float64(k) + 0.5) * w, Est: stats.MeanCI95(vals[k])})
	}
	return c
}

// Heat is a grid of values, rows by columns, each the mean across
// replicates; NaN where no run reported the pair.
type Heat struct {
	Rows   []string
	Cols   []string
	Values [][]float64 // [row][col]
}

// BusiestPanel returns the panel (topology, load, failure) whose channels
// are busiest: the highest mean utilisation over all channels, agents and
// replicates in links.parquet (ties: the first in sorted order). ok is
// false when there is no link table.
func BusiestPanel(d *Data) (p Panel, ok bool) {
	sum, n := map[Panel]float64{}, map[Panel]int{}
	for _, c := range d.Channels {
		k := Panel{c.Topology, c.Load, c.Failure}
		if !math.IsNaN(c.Util) {
			sum[k] += c.Util
			n[k]++
		}
	}
	var ps []Panel
	for k := range n {
		ps = append(ps, k)
	}
	slices.SortFunc(ps, comparePanel)
	best := math.Inf(-1)
	for _, k := range ps {
		if m := sum[k] / float64(n[k]); m > best {
			best, p, ok = m, k, true
		}
	}
	return p, ok
}

// ChannelHeat returns the mean utilisation of each directed channel (columns,
// "from→to") under each agent (rows) in panel p, across replicates. Columns
// are sorted by their highest utilisation under any agent, descending, and
// cut to the first maxCols (all when maxCols <= 0).
func ChannelHeat(d *Data, p Panel, maxCols int) Heat {
	type key struct {
		agent, ch string
	}
	vals := map[key][]float64{}
	chSet := map[string]bool{}
	for _, c := range d.Channels {
		if c.Topology != p.Topology || c.Load != p.Load || c.Failure != p.Failure {
			continue
		}
		ch := c.From + "→" + c.To
		chSet[ch] = true
		vals[key{c.Agent, ch}] = append(vals[key{c.Agent, ch}], c.Util)
	}
	h := Heat{}
	for _, ag := range d.Agents() {
		for k := range vals {
			if k.agent == ag {
				h.Rows = append(h.Rows, ag)
				break
			}
		}
	}
	peak := map[string]float64{}
	for ch := range chSet {
		h.Cols = append(h.Cols, ch)
		peak[ch] = math.Inf(-1)
	}
	mean := map[key]float64{}
	for k, v := range vals {
		m := stats.MeanCI95(v).Mean
		mean[k] = m
		if m > peak[k.ch] {
			peak[k.ch] = m
		}
	}
	slices.SortFunc(h.Cols, func(a, b string) int { return cmp.Or(cmp.Compare(peak[b], peak[a]), cmp.Compare(a, b)) })
	if maxCols > 0 && len(h.Cols) > maxCols {
		h.Cols = h.Cols[:maxCols]
	}
	for _, ag := range h.Rows {
		row := make([]float64, len(h.Cols))
		for j, ch := range h.Cols {
			if m, ok := mean[key{ag, ch}]; ok {
				row[j] = m
			} else {
				row[j] = math.NaN()
			}
		}
		h.Values = append(h.Values, row)
	}
	return h
}

// TimeHeat returns the busiest channel's utilisation per bin (columns: bin
// start in seconds, formatted) under each agent (rows) in panel p, as the
// mean across replicates of series.parquet's util_max.
func TimeHeat(d *Data, p Panel) (h Heat, starts []float64) {
	type key struct {
		agent string
		start float64
	}
	vals := map[key][]float64{}
	startSet := map[float64]bool{}
	agents := map[string]bool{}
	for _, b := range d.Series {
		if b.Topology != p.Topology || b.Load != p.Load || b.Failure != p.Failure {
			continue
		}
		vals[key{b.Agent, b.Start}] = append(vals[key{b.Agent, b.Start}], b.UtilMax)
		startSet[b.Start] = true
		agents[b.Agent] = true
	}
	for s := range startSet {
		starts = append(starts, s)
	}
	slices.Sort(starts)
	for _, ag := range d.Agents() {
		if !agents[ag] {
			continue
		}
		h.Rows = append(h.Rows, ag)
		row := make([]float64, len(starts))
		for j, s := range starts {
			row[j] = stats.MeanCI95(vals[key{ag, s}]).Mean
		}
		h.Values = append(h.Values, row)
	}
	for _, s := range starts {
		h.Cols = append(h.Cols, fmtNum(s))
	}
	return h, starts
}

// TableRow is one panel of a cell table: each agent's estimate of a metric
// (NaN mean where the agent did not run) and which agents are best (lowest
// mean; ties all marked).
type TableRow struct {
	Panel
	Est  []stats.Estimate
	Best []bool
}

// CellTable returns, for every panel, each agent's mean and 95% CI of
// metric, a numeric runs.parquet column, across replicates, agents in
// Data.Agents order. It is an input error if the metric is not such a
// column.
func CellTable(d *Data, metricName string) ([]TableRow, error) {
	k, err := metricIndex(metricName)
	if err != nil {
		return nil, err
	}
	return cellTable(d, k), nil
}

// cellTable tabulates Run.Values[k].
func cellTable(d *Data, k int) []TableRow {
	vals := cellEstimates(d, k)
	panels := map[Panel]bool{}
	for _, r := range d.Runs {
		panels[Panel{r.Topology, r.Load, r.Failure}] = true
	}
	var ps []Panel
	for p := range panels {
		ps = append(ps, p)
	}
	slices.SortFunc(ps, comparePanel)
	agents := d.Agents()
	var out []TableRow
	for _, p := range ps {
		row := TableRow{Panel: p, Est: make([]stats.Estimate, len(agents)), Best: make([]bool, len(agents))}
		best := math.Inf(1)
		for i, ag := range agents {
			e, ok := vals[Cell{p.Topology, ag, p.Load, p.Failure}]
			if !ok {
				row.Est[i] = stats.Estimate{Mean: math.NaN(), CI95: math.NaN()}
				continue
			}
			row.Est[i] = e
			if m := row.Est[i].Mean; !math.IsNaN(m) && m < best {
				best = m
			}
		}
		for i := range agents {
			row.Best[i] = row.Est[i].Mean == best
		}
		out = append(out, row)
	}
	return out
}

// GlanceRow answers, for one panel (topology, load, failure schedule),
// which agent delivered fastest and whether the runner-up is clearly
// slower: the paired comparison of the two on delivery_mean_s across
// replicates.
type GlanceRow struct {
	Panel
	Best, Second         string
	BestMean, SecondMean stats.Estimate // delivery_mean_s, s
	BestLoss, SecondLoss stats.Estimate // loss_rate
	// Diff is Best − Second on delivery_mean_s, its p-values adjusted
	// (Holm) across the rows of the table.
	Diff Comparison
	// Optimum is the model optimum of the panel's topology and load on the
	// intact topology (NaN fields when the runs carry none).
	Optimum Optimum
	// Ref is what the agents are measured against: the optimum of each
	// topology state of the panel's failure schedule over the measured
	// window (Reference); without failures, the intact optimum.
	Ref Reference
}

// DelayRatio returns an agent's mean delivery time over the reference's:
// how many times slower than the best splittable routing of each topology
// state in the model; NaN when either is unknown.
func (g *GlanceRow) DelayRatio(mean float64) float64 {
	if !(g.Ref.DelayMean > 0) {
		return math.NaN()
	}
	return mean / g.Ref.DelayMean
}

// ExtraLoss returns an agent's loss rate above the reference's: the loss
// no routing could avoid is the demand a failure leaves with no path (none
// without failures); below the load limit of every state the optimum loses
// nothing else, so the rest is routing's doing. Beyond the limit of a
// state the optimum's own loss is not computed: the result is then NaN.
func (g *GlanceRow) ExtraLoss(loss float64) float64 {
	return loss - g.Ref.Loss
}

// Glance returns a GlanceRow for every panel in which at least two agents
// ran, in panel order. Agents are ranked by mean delivery time across
// replicates (ties: sorted label order).
func Glance(d *Data) []GlanceRow {
	agents := d.Agents()
	delay := cellTable(d, results.Runs.Index("delivery_mean_s"))
	loss := cellTable(d, results.Runs.Index("loss_rate"))
	byPanel := map[Panel][]Run{}
	for _, r := range d.Runs {
		p := Panel{r.Topology, r.Load, r.Failure}
		byPanel[p] = append(byPanel[p], r)
	}
	states := optimumStates(d)
	opt := map[Panel]Optimum{}
	for _, o := range Optima(d) {
		for _, f := range d.Failures() {
			opt[Panel{o.Topology, o.Load, f}] = o
		}
	}
	var out []GlanceRow
	for i, row := range delay {
		var ranked []int
		for j, e := range row.Est {
			if !math.IsNaN(e.Mean) {
				ranked = append(ranked, j)
			}
		}
		if len(ranked) < 2 {
			continue
		}
		slices.SortStableFunc(ranked, func(a, b int) int { return cmp.Compare(row.Est[a].Mean, row.Est[b].Mean) })
		b, s := ranked[0], ranked[1]
		g := GlanceRow{Panel: row.Panel, Best: agents[b], Second: agents[s],
			BestMean: row.Est[b], SecondMean: row.Est[s], BestLoss: loss[i].Est[b], SecondLoss: loss[i].Est[s],
			Optimum: Optimum{Topology: row.Topology, Load: row.Load, DelayMean: math.NaN(), LoadLimit: math.NaN()}}
		if o, ok := opt[row.Panel]; ok {
			g.Optimum = o
		}
		g.Ref = reference(row.Panel, byPanel[row.Panel], states[row.Panel], g.Optimum)
		sub := &Data{Dir: d.Dir, Experiment: d.Experiment, Runs: byPanel[row.Panel]}
		cs, err := Compare(sub, g.Best, g.Second, "delivery_mean_s")
		if err != nil {
			continue // the two never shared a replicate index
		}
		g.Diff = cs[0]
		out = append(out, g)
	}
	// one family: every test the table makes (Holm 1979)
	diffs := make([]Comparison, len(out))
	for i := range out {
		diffs[i] = out[i].Diff
	}
	adjustHolm(diffs, func(*Comparison) bool { return true })
	for i := range out {
		out[i].Diff = diffs[i]
		out[i].Diff.Verdict = verdict(&out[i].Diff)
	}
	return out
}
