package report

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"html/template"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"hoplore/results"
	"hoplore/stats"
)

// Options choose what Write draws. The zero value gives the defaults.
type Options struct {
	// Out is the folder written; default DIR/report.
	Out string
	// LinkTopology, LinkLoad and LinkFailure choose the cell (all agents)
	// whose link utilisation is drawn. Unset fields are free; among the
	// matching cells the busiest (highest mean channel utilisation) is used.
	LinkTopology string
	LinkLoad     *float64
	LinkFailure  string
	// EventLoad is the load whose runs the failure-event charts show;
	// default the highest load not above 1 that has failure events, else
	// the lowest.
	EventLoad *float64
	// MaxEvents caps the events drawn per topology and failure schedule
	// (default 4).
	MaxEvents int
	// MaxChannels caps the channels of the utilisation chart (default 48,
	// the busiest).
	MaxChannels int
	// EmbedFonts embeds the fonts in the SVG files (about 0.5 MB each);
	// otherwise they name Liberation Sans with metric-compatible fallbacks.
	EmbedFonts bool
	// DPI of the PNG files (default 144).
	DPI float64
	// ExpectedRuns is the number of runs of the whole experiment (from the
	// folder's manifest, see results.CheckTables); when the tables hold
	// fewer, the page says how many are missing. 0: unknown.
	ExpectedRuns int
}

func (o Options) withDefaults(dir string) Options {
	if o.Out == "" {
		o.Out = filepath.Join(dir, "report")
	}
	if o.MaxEvents <= 0 {
		o.MaxEvents = 4
	}
	if o.MaxChannels <= 0 {
		o.MaxChannels = 48
	}
	if o.DPI <= 0 {
		o.DPI = 144
	}
	return o
}

// Report is everything the HTML page shows, built from Data by Build.
type Report struct {
	Data   *Data
	Events []EventPanel // the failure events drawn, with recovery times
	// Resilience is every agent's outcome of every single failure at the
	// events' load (see Resilience).
	Resilience []AgentResilience
	Glance     []GlanceRow // the fastest agent per cell against the runner-up
	// FlowGlance is, per cell, the agent whose flows were slowed least
	// among those not completing clearly fewer flows, against the
	// runner-up, when the runs had flow traffic (FlowGlanceRow).
	FlowGlance []FlowGlanceRow
	Notes      []string // what the page leaves out and why

	charts  []*chart
	tables  []htmlTable
	worst   []worstTable
	options Options
}

// MaxLearningPanels is how many panels the learning-curve chart draws.
const MaxLearningPanels = 6

// WorstShown is how many of each agent's worst single failures the page
// lists.
const WorstShown = 5

// ChartIDs returns the ids of the charts, in page order: the element id in
// index.html and the stem of the SVG and PNG files.
func (r *Report) ChartIDs() []string {
	ids := make([]string, len(r.charts))
	for i, c := range r.charts {
		ids[i] = c.ID
	}
	return ids
}

// chartText is the wording of a charted column's chart and table.
type chartText struct{ id, title, caption, table string }

// chartTexts words the charts of the charted runs.parquet columns
// (results.Charted); a column missing here gets textFor's generic wording.
var chartTexts = map[string]chartText{
	"delivery_mean_s": {"delivery-mean", "Mean delivery time against load",
		"Mean delivery time of the packets delivered in the measured window, per agent, against offered load. One panel per topology (rows) and failure schedule (columns).",
		"Mean delivery time"},
	"delivery_p95_s": {"delivery-p95", "95th percentile of delivery time against load",
		"The tail: 95th percentile of the delivery time of packets delivered in the measured window.",
		"95th percentile of delivery time"},
	"loss_rate": {"loss", "Loss rate against load",
		"Share of the packets generated in the measured window that were dropped (any reason).",
		"Loss rate"},
}

// textFor returns the wording of column c's chart and table.
func textFor(c *results.Column) chartText {
	if t, ok := chartTexts[c.Name]; ok {
		return t
	}
	label := strings.ToUpper(c.Label[:1]) + c.Label[1:]
	t := chartText{id: slug(c.Name), title: label + " against load",
		caption: c.Doc + " (runs.parquet column " + c.Name + "), per agent, against offered load.", table: label}
	if share, which := completedShareOf(c.Name); share != "" {
		sc, _ := results.Runs.Column(share)
		t.title = label + " against load (completed flows only)"
		t.caption += " Completed flows only: an agent that fails or leaves unfinished some " + which +
			" is averaged over the rest and can look fast by failing its slow ones; read it beside the chart " +
			strings.ToUpper(sc.Label[:1]) + sc.Label[1:] + " against load (" + share + ")."
		t.table += " (completed flows only)"
	}
	return t
}

// classSlowdown names the mean slowdown of the flows each share-completed
// column counts: it breaks ties between the agents completing most.
var classSlowdown = map[string]string{"completed_share": "slowdown_mean",
	"completed_mice_share": "slowdown_mice_mean", "completed_elephant_share": "slowdown_elephant_mean"}

// completedShareOf returns the runs.parquet column holding the share of
// flows completed that the completion-time or slowdown column name
// averages over, and what those flows are called; "" for other columns.
func completedShareOf(name string) (share, which string) {
	if !strings.HasPrefix(name, "fct_") && !strings.HasPrefix(name, "slowdown_") {
		return "", ""
	}
	switch {
	case strings.Contains(name, "_mice_"):
		return "completed_mice_share", "mice"
	case strings.Contains(name, "_elephant_"):
		return "completed_elephant_share", "elephants"
	}
	return "completed_share", "flows"
}

// Build aggregates d into charts and tables. It fails only on an option
// that names nothing in d.
func Build(d *Data, o Options) (*Report, error) {
	o = o.withDefaults(d.Dir)
	r := &Report{Data: d, options: o}
	agents := d.Agents()
	for _, c := range chartedColumns(d) {
		t := textFor(c)
		panels, refs := loadCurves(d, results.Runs.Index(c.Name)), optimumRefs(d, c.Name)
		caption := t.caption
		if c.Name == "delivery_mean_s" && belowOptimum(panels, refs) {
			caption += " " + belowOptimumText
		}
		var ringed map[Cell]bool
		share, which := completedShareOf(c.Name)
		if share != "" {
			ringed = fewerCompleted(d, share, classSlowdown[share])
			caption += " A ring marks the points of an agent completing clearly fewer " + which +
				" than the agent completing most in that cell (the first step of the flows-at-a-glance ranking)."
		}
		r.charts = append(r.charts, loadChart(t.id, t.title, caption, panels, agents, c, refs, ringed, which))
	}
	if o.ExpectedRuns > len(d.Runs) {
		r.Notes = append(r.Notes, fmt.Sprintf("Incomplete: the tables hold %d of the experiment's %d runs (%d missing: a shard not merged, or a sweep not finished). Means and intervals cover the runs present only.",
			len(d.Runs), o.ExpectedRuns, o.ExpectedRuns-len(d.Runs)))
	}
	// failure events
	if len(d.Recoveries) > 0 {
		load, ok := eventLoad(d, o.EventLoad)
		if !ok {
			return nil, inputErr("report: no failure events at load %s", fmtNum(*o.EventLoad))
		}
		eps := EventCurves(d, EventOptions{Load: load, PreBins: 10, PostBins: 30, MaxEvents: o.MaxEvents})
		r.Events = eps
		for i := 0; i < len(eps); {
			j := i
			for j < len(eps) && eps[j].Topology == eps[i].Topology && eps[j].Failure == eps[i].Failure {
				j++
			}
			e := eps[i]
			r.charts = append(r.charts, eventChart("event-"+slug(e.Topology)+"-"+slug(e.Failure),
				fmt.Sprintf("Around each failure event: %s, schedule %s, load %s", e.Topology, e.Failure, fmtNum(load)),
				"Delivery time and loss per time bin, aligned on each failure event, mean across the replicates in which the event happened.",
				eps[i:j], agents))
			i = j
		}
		if res := Resilience(d, load); len(res) > 0 {
			r.Resilience = res
			r.charts = append(r.charts, resilienceChart(res, agents, load))
			r.worst = worstTables(res, WorstShown)
		}
	} else {
		r.Notes = append(r.Notes, "No failure events in this experiment (recoveries.parquet is absent or empty).")
	}
	// link utilisation
	if p, ok, err := linkPanel(d, o); err != nil {
		return nil, err
	} else if ok {
		h := ChannelHeat(d, p, o.MaxChannels)
		if len(h.Rows) > 0 && len(h.Cols) > 0 {
			r.charts = append(r.charts, channelChart("links", "Link utilisation per channel",
				fmt.Sprintf("Mean utilisation of each directed channel across replicates, per agent, in the cell %s, load %s, failures %s (the busiest channels, up to %d).",
					p.Topology, fmtNum(p.Load), p.Failure, o.MaxChannels), p, h))
		}
		th, starts := TimeHeat(d, p)
		if len(th.Rows) > 0 && len(starts) > 0 {
			bin := binWidth(d)
			r.charts = append(r.charts, timeChart("util-time", "Busiest channel over time",
				fmt.Sprintf("Utilisation of the busiest channel in each time bin (mean across replicates), per agent, same cell (%s, load %s, failures %s).",
					p.Topology, fmtNum(p.Load), p.Failure), p, th, starts, bin))
		}
	} else {
		r.Notes = append(r.Notes, "No link table (links.parquet is absent): no utilisation chart.")
	}
	// learning curves: the whole run, warm-up included
	if lps, _ := LearningCurves(d, math.MaxInt); len(lps) > 0 {
		caption := "Delivery time and loss per time bin over the whole run, warm-up included: how each agent settles (a learning agent learns here). Mean across replicates."
		drawn := lps[:min(len(lps), MaxLearningPanels)]
		if len(drawn) < len(lps) {
			caption += fmt.Sprintf(" The first %d panels (failure schedule none first); %d more are not drawn.", len(drawn), len(lps)-len(drawn))
		}
		r.charts = append(r.charts, learningChart("learning", "Learning curves: the whole run, warm-up included", caption, drawn, agents))
		for _, lp := range lps {
			if n := lp.transientNote(); n != "" {
				r.Notes = append(r.Notes, "Warm-up: "+n+" Lengthen warmup (or the run) so that the measured window starts after the transient.")
			}
		}
	}
	// route changes over time: route oscillation, comparable across kinds
	if cps, more := RouteChangeCurves(d, MaxLearningPanels); len(cps) > 0 {
		caption := "Route changes per time bin over the whole run, warm-up included (mean across replicates): how much each agent's routes move, and when."
		if more > 0 {
			caption += fmt.Sprintf(" The first %d panels (failure schedule none first); %d more are not drawn.", len(cps), more)
		}
		r.charts = append(r.charts, routeChangesChart("route-changes", "Route changes over time", caption, cps, agents))
	}
	uniqueIDs(r.charts)
	r.Glance = Glance(d)
	r.FlowGlance = FlowGlance(d)
	for _, c := range chartedColumns(d) {
		t := textFor(c)
		tab := makeTable("table-"+t.id, t.table, c, agents, cellTable(d, results.Runs.Index(c.Name)))
		if share, which := completedShareOf(c.Name); share != "" {
			tab.addShares(which, cellTable(d, results.Runs.Index(share)))
		}
		r.tables = append(r.tables, tab)
	}
	return r, nil
}

func uniqueIDs(cs []*chart) {
	seen := map[string]int{}
	for _, c := range cs {
		seen[c.ID]++
		if n := seen[c.ID]; n > 1 {
			c.ID = fmt.Sprintf("%s-%d", c.ID, n)
		}
	}
}

func binWidth(d *Data) float64 {
	for _, b := range d.Series {
		if w := b.End - b.Start; w > 0 {
			return w
		}
	}
	return 1
}

func eventLoad(d *Data, want *float64) (float64, bool) {
	var loads []float64
	for _, r := range d.Recoveries {
		if !slices.Contains(loads, r.Load) {
			loads = append(loads, r.Load)
		}
	}
	slices.Sort(loads)
	if want != nil {
		return *want, slices.Contains(loads, *want)
	}
	best := loads[0]
	for _, l := range loads {
		if l <= 1 {
			best = l
		}
	}
	return best, true
}

func linkPanel(d *Data, o Options) (Panel, bool, error) {
	if len(d.Channels) == 0 {
		return Panel{}, false, nil
	}
	sub := &Data{Dir: d.Dir}
	for _, c := range d.Channels {
		if (o.LinkTopology == "" || c.Topology == o.LinkTopology) && (o.LinkLoad == nil || c.Load == *o.LinkLoad) &&
			(o.LinkFailure == "" || c.Failure == o.LinkFailure) {
			sub.Channels = append(sub.Channels, c)
		}
	}
	p, ok := BusiestPanel(sub)
	if !ok {
		load := "any"
		if o.LinkLoad != nil {
			load = fmtNum(*o.LinkLoad)
		}
		return p, false, inputErr("report: no link results for topology %q, load %s, failures %q",
			orDefault(o.LinkTopology, "any"), load, orDefault(o.LinkFailure, "any"))
	}
	return p, true, nil
}

func orDefault(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

// shareText formats a share in percent to 3 significant digits, more
// when 3 would round a share below 1 to 100.
func shareText(m float64) string {
	if !(m < 1) {
		return stats.Sig(100*m, 3)
	}
	for sig := 3; ; sig++ {
		if s := stats.Sig(100*m, sig); s != "100" && !strings.HasPrefix(s, "100.") || sig == 8 {
			return s
		}
	}
}

// htmlTable is a cell table ready for the page.
type htmlTable struct {
	ID, Title, Unit string
	Agents          []string
	Rows            []htmlRow
	// Share names the flows whose completed share the cells give beside
	// a mean over completed flows (addShares); "" in other tables.
	Share string
}

// addShares appends to each cell the agent's mean share of flows
// completed (shares, rows and agents as t's) when it is below 1, so that a
// mean over completed flows is never read without it.
func (t *htmlTable) addShares(which string, shares []TableRow) {
	t.Share = which
	for i := range t.Rows {
		if i >= len(shares) {
			break
		}
		for j := range t.Rows[i].Cells {
			if m := shares[i].Est[j].Mean; m < 1 {
				t.Rows[i].Cells[j].Text += " (" + shareText(m) + "% completed)"
			}
		}
	}
}

type htmlRow struct {
	Topology, Load, Failure string
	Cells                   []htmlCell
}

type htmlCell struct {
	Text  string
	Best  bool
	Title string
}

func makeTable(id, title string, c *results.Column, agents []string, rows []TableRow) htmlTable {
	scale, unit := c.Display()
	if c.Unit == "s" {
		var hi float64
		for _, r := range rows {
			for _, e := range r.Est {
				if !math.IsNaN(e.Mean) {
					hi = math.Max(hi, e.Mean)
				}
			}
		}
		scale, unit = timeUnit(hi)
	}
	t := htmlTable{ID: id, Title: title, Unit: unit, Agents: agents}
	for _, r := range rows {
		hr := htmlRow{Topology: r.Topology, Load: fmtNum(r.Load), Failure: r.Failure}
		for i, e := range r.Est {
			c := htmlCell{Best: r.Best[i], Text: e.Format(scale)}
			c.Title = fmt.Sprintf("%s: n = %d replicates", agents[i], e.N)
			hr.Cells = append(hr.Cells, c)
		}
		t.Rows = append(t.Rows, hr)
	}
	return t
}

// Write reads the result tables in dir and writes the report: index.html
// (self-contained: charts as data URLs, no external reference) and each
// chart as ID.svg and ID.png, into opts.Out (default dir/report). Every
// file is written atomically.
func Write(dir string, opts Options) error {
	d, err := Load(dir)
	if err != nil {
		return err
	}
	r, err := Build(d, opts)
	if err != nil {
		return err
	}
	return r.Write()
}

// Write writes the report's files.
func (r *Report) Write() error {
	o := r.options
	if err := os.MkdirAll(o.Out, 0o755); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	for _, c := range r.charts {
		svg := c.svg(lightTheme, o.EmbedFonts)
		if err := writeFile(filepath.Join(o.Out, c.ID+".svg"), svg); err != nil {
			return err
		}
		if err := writeFile(filepath.Join(o.Out, c.ID+".png"), c.png(o.DPI)); err != nil {
			return err
		}
	}
	var page bytes.Buffer
	if err := r.HTML(&page); err != nil {
		return err
	}
	return writeFile(filepath.Join(o.Out, "index.html"), page.Bytes())
}

func writeFile(path string, b []byte) error {
	return atomicWrite(path, func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}

// HTML writes the self-contained page.
func (r *Report) HTML(w io.Writer) error {
	type chartView struct {
		ID, Title, Caption string
		Src                template.URL
		W, H               int
	}
	type recView struct {
		Agent, Recovery, NotRecovered, Lost string
	}
	type eventView struct {
		Topology, Failure, Event, Load string
		Rows                           []recView
	}
	type glanceView struct {
		Topology, Load, Failure        string
		Best, BestMean, BestLoss       string
		Second, SecondMean, SecondLoss string
		Diff, CI, PT, PTHolm, PW       string
		Rel, Verdict                   string
		Clear                          bool
		Opt, OptOver, OptLoss          string
		BestRatio, SecondRatio         string
		BestExtra, SecondExtra         string
	}
	d := r.Data
	var glance []glanceView
	var dhi float64
	for _, g := range r.Glance {
		dhi = math.Max(dhi, nanZero(g.SecondMean.Mean))
	}
	scale, unit := timeUnit(dhi)
	for _, g := range r.Glance {
		c := g.Diff
		v := glanceView{Topology: g.Topology, Load: fmtNum(g.Load), Failure: g.Failure,
			Best: g.Best, BestMean: g.BestMean.Format(scale), BestLoss: g.BestLoss.Format(100),
			Second: g.Second, SecondMean: g.SecondMean.Format(scale), SecondLoss: g.SecondLoss.Format(100),
			Diff: stats.PlusMinus(c.MeanDiff*scale, c.CI95*scale), PT: fmtP(c.PT), PTHolm: fmtP(c.PTHolm), PW: fmtP(c.PW),
			Rel: fmtPercent(c.RelDiff),
			Opt: optText(g.Ref.DelayMean * scale), OptOver: g.Ref.String(), OptLoss: optText(g.Ref.Loss * 100),
			BestRatio: ratioText(g.DelayRatio(g.BestMean.Mean)), SecondRatio: ratioText(g.DelayRatio(g.SecondMean.Mean)),
			BestExtra: optText(g.ExtraLoss(g.BestLoss.Mean) * 100), SecondExtra: optText(g.ExtraLoss(g.SecondLoss.Mean) * 100)}
		if g.Ref.Why != "" {
			v.Opt = "– (" + g.Ref.Why + ")"
		}
		v.Verdict, v.Clear = glanceVerdict(c, "faster")
		glance = append(glance, v)
	}
	flowGlance, fctUnit := r.flowGlanceView()
	var charts []chartView
	for _, c := range r.charts {
		src := "data:image/svg+xml;base64," + base64.StdEncoding.EncodeToString(c.themedSVG(false))
		w, h := c.displaySize()
		charts = append(charts, chartView{ID: c.ID, Title: c.Title, Caption: c.Caption, Src: template.URL(src), W: w, H: h})
	}
	var events []eventView
	for _, ep := range r.Events {
		ev := eventView{Topology: ep.Topology, Failure: ep.Failure, Event: ep.Element + " " + ep.Action + " at " + fmtNum(ep.At) + " s", Load: fmtNum(ep.Load)}
		for _, ar := range ep.Recovery {
			rv := recView{Agent: ar.Agent, NotRecovered: fmt.Sprintf("%d of %d", ar.NotRecovered, ar.Runs)}
			switch {
			case ar.Recovery.N == 0:
				rv.Recovery = "never"
			case math.IsNaN(ar.Recovery.CI95):
				rv.Recovery = stats.Sig(ar.Recovery.Mean, 3) + " s"
			default:
				rv.Recovery = stats.PlusMinus(ar.Recovery.Mean, ar.Recovery.CI95) + " s"
			}
			rv.Lost = stats.Sig(ar.Lost.Mean, 4)
			ev.Rows = append(ev.Rows, rv)
		}
		events = append(events, ev)
	}
	reps := map[int]bool{}
	for _, run := range d.Runs {
		reps[run.Replicate] = true
	}
	name := d.Experiment
	if name == "" {
		name = filepath.Base(filepath.Clean(d.Dir))
	}
	loads := make([]string, 0)
	for _, l := range d.Loads() {
		loads = append(loads, fmtNum(l))
	}
	view := map[string]any{
		"Name":       name,
		"Runs":       len(d.Runs),
		"Topologies": strings.Join(d.Topologies(), ", "),
		"Agents":     d.Agents(),
		"Loads":      strings.Join(loads, ", "),
		"Failures":   strings.Join(d.Failures(), ", "),
		"Replicates": len(reps),
		"Charts":     charts,
		"Tables":     r.tables,
		"Events":     events,
		"Worst":      r.worst,
		"WorstShown": WorstShown,
		"Notes":      r.Notes,
		"Glance":     glance,
		"FlowGlance": flowGlance,
		"FCTUnit":    fctUnit,
		"GlanceUnit": unit,
	}
	if err := pageTemplate.Execute(w, view); err != nil {
		return fmt.Errorf("report: html: %w", err)
	}
	return nil
}

var pageTemplate = template.Must(template.New("page").Parse(pageHTML))

// optText formats a value of the model optimum's columns, "—" when unknown.
func optText(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "–"
	}
	return stats.Sig(v, 3)
}

// ratioText formats a ratio to the optimum as "×1.23", "—" when unknown.
func ratioText(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "–"
	}
	return "×" + stats.Sig(v, 3)
}

// chartedColumns returns the runs.parquet columns drawn against load: the
// charted ones, then the flow-traffic ones when some run of d holds a value.
func chartedColumns(d *Data) []*results.Column {
	out := results.Charted()
	for i := range results.Runs.Columns {
		c := &results.Runs.Columns[i]
		if !c.FlowOnly {
			continue
		}
		k := results.Runs.Index(c.Name)
		for j := range d.Runs {
			if !math.IsNaN(d.Runs[j].at(k)) {
				out = append(out, c)
				break
			}
		}
	}
	return out
}

// flowGlanceView is a FlowGlanceRow as the page shows it.
type flowGlanceView struct {
	Topology, Load, Failure       string
	Best, BestShare, BestSD       string
	Second, SecondShare, SecondSD string
	Share, ShareHolm              string
	SD, SDRel, SDPT, SDPTHolm     string
	Verdict                       string
	Clear, Caveat                 bool
	FCT, FCTHolm, P99, P99Holm    string
	Failed, FailedHolm, Excluded  string
}

// flowGlanceView formats r.FlowGlance, completion times in the unit
// returned (ms below a second).
func (r *Report) flowGlanceView() ([]flowGlanceView, string) {
	var hi float64
	for _, g := range r.FlowGlance {
		for _, c := range g.Diffs[2:4] {
			hi = math.Max(hi, math.Max(nanZero(c.MeanA), nanZero(c.MeanB)))
		}
	}
	scale, unit := timeUnit(hi)
	var out []flowGlanceView
	for _, g := range r.FlowGlance {
		share, sd, fct, p99, failed := g.Diffs[0], g.Diffs[1], g.Diffs[2], g.Diffs[3], g.Diffs[4]
		v := flowGlanceView{Topology: g.Topology, Load: fmtNum(g.Load), Failure: g.Failure,
			Best: g.Best, BestShare: g.BestShare.Format(100), BestSD: g.BestSlowdown.Format(1),
			Second: g.Second, SecondShare: g.SecondShare.Format(100), SecondSD: g.SecondSlowdown.Format(1),
			Share: stats.PlusMinus(share.MeanDiff*100, share.CI95*100), ShareHolm: fmtP(share.PTHolm),
			SD: stats.PlusMinus(sd.MeanDiff, sd.CI95), SDRel: fmtPercent(sd.RelDiff), SDPT: fmtP(sd.PT), SDPTHolm: fmtP(sd.PTHolm),
			FCT: stats.PlusMinus(fct.MeanDiff*scale, fct.CI95*scale), FCTHolm: fmtP(fct.PTHolm),
			P99: stats.PlusMinus(p99.MeanDiff*scale, p99.CI95*scale), P99Holm: fmtP(p99.PTHolm),
			Failed: stats.PlusMinus(failed.MeanDiff, failed.CI95), FailedHolm: fmtP(failed.PTHolm), Excluded: "none"}
		v.Verdict, v.Clear = glanceVerdict(sd, "less slowed")
		switch {
		case g.FewerFlows():
			// not clearly fewer (else excluded), but fewer: say so
			v.Verdict += fmt.Sprintf("; but completes fewer flows than %s (%s%% against %s%%, Holm p %s)",
				g.Leader, shareText(g.BestShare.Mean), shareText(g.LeaderShare.Mean), fmtP(g.BestVsLeader.PTHolm))
			v.Clear, v.Caveat = false, true
		case g.BestShare.Mean < g.SecondShare.Mean:
			v.Verdict += fmt.Sprintf("; runner-up completes more flows (%s%% against %s%%)",
				shareText(g.SecondShare.Mean), shareText(g.BestShare.Mean))
			v.Clear, v.Caveat = false, true
		}
		if len(g.Excluded) > 0 {
			var parts []string
			for _, c := range g.Excluded {
				parts = append(parts, fmt.Sprintf("%s (%s%%)", c.AgentA, shareText(c.MeanA)))
			}
			v.Excluded = strings.Join(parts, ", ")
		}
		out = append(out, v)
	}
	return out, unit
}

// glanceVerdict says what comparison c of an at-a-glance table's leader
// against its runner-up shows: clear (the word, true) when the difference's 95% interval lies
// below zero and its Holm-adjusted t-test p is below Alpha, "untested"
// with the reason when no test exists, "unclear" otherwise.
func glanceVerdict(c Comparison, clear string) (string, bool) {
	switch {
	case c.Note != "":
		return "untested: " + c.Note, false
	case c.CI95High < 0 && c.PTHolm < Alpha:
		return clear, true
	}
	return "unclear", false
}
