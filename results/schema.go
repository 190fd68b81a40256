package results

import (
	"fmt"
	"reflect"
	"strings"
)

// Summary says how summary.parquet summarises a runs.parquet column across
// the replicates of a cell.
type Summary uint8

const (
	// NotSummarized leaves the column out of summary.parquet.
	NotSummarized Summary = iota
	// MeanCI95 gives <name>_mean, the mean of the replicates' non-null
	// values, and <name>_ci95, the half-width of its 95% Student t
	// confidence interval (stats.MeanCI95); null when there is no value,
	// the half-width null for fewer than two.
	MeanCI95
	// Sum gives <name>_sum, the total of the replicates' non-null values;
	// null when there is none.
	Sum
	// Same is for a value of the cell, the same in every replicate (the
	// model optimum): summary.parquet holds it under the column's own name,
	// from the first replicate that holds one; null when none does.
	Same
)

// Suffixes returns the suffixes of the summary.parquet columns that s makes
// from one runs.parquet column, in file order.
func (s Summary) Suffixes() []string {
	switch s {
	case MeanCI95:
		return []string{"_mean", "_ci95"}
	case Sum:
		return []string{"_sum"}
	case Same:
		return []string{""}
	}
	return nil
}

// Column describes one column of a result table.
type Column struct {
	Name string // Parquet column name
	// Unit is the unit of the stored value: "s", "bit/s", "B" (bytes),
	// "packets", "events", "1" for a ratio or fraction; "" for labels,
	// indices and counts of things without a unit.
	Unit string
	// Summary says how summary.parquet summarises the column (runs.parquet
	// columns only).
	Summary Summary
	// Charted columns are drawn against load by the report and tested by
	// compare (runs.parquet columns only).
	Charted bool
	// OneRunCI names the runs.parquet column holding the half-width of a
	// 95% interval for this column from one run alone (a steady-state
	// interval by batch means); summary.parquet's <name>_ci95 takes it for
	// a cell of one replicate instead of leaving it null.
	OneRunCI string
	// FlowOnly columns describe flow traffic: text tables show them and
	// the report draws them (against load, like Charted ones) only when
	// some run holds a value; compare tests report.FlowCompareMetrics.
	FlowOnly bool
	// Label is a short name for table heads and chart axes, without unit.
	Label string
	// Doc says what the column holds, in one sentence.
	Doc string

	index  []int // path of the field in the row struct
	number bool  // numeric (integer or float, nullable or not)
}

// Number reports whether the column holds numbers (integers or floats,
// nullable or not) rather than labels.
func (c *Column) Number() bool { return c.number }

// Display returns the factor that turns a value of the column into the
// unit tables and charts show, and that unit's name: seconds as
// milliseconds, ratios as percent, bit/s as Mbit/s; others unchanged.
func (c *Column) Display() (scale float64, unit string) {
	switch c.Unit {
	case "s":
		return 1e3, "ms"
	case "1":
		return 100, "%"
	case "bit/s":
		return 1e-6, "Mbit/s"
	}
	return 1, c.Unit
}

// Table describes one result table: its file and its columns.
type Table struct {
	Name string // stored under KeyTable in every file of the table
	File string // file name in a result folder
	Doc  string // what one row is
	// Columns lists the table's columns but the dimensions (see DimColumns
	// and CellColumns), in declaration order: the order of summary.parquet's
	// columns and of the report's charts. The order of the Parquet file's
	// columns is that of the row struct's fields.
	Columns []Column

	byName map[string]int
}

// Column returns the column called name.
func (t *Table) Column(name string) (*Column, bool) {
	i, ok := t.byName[name]
	if !ok {
		return nil, false
	}
	return &t.Columns[i], true
}

// Index returns the index in t.Columns of the column called name, -1 if
// there is none.
func (t *Table) Index(name string) int {
	if i, ok := t.byName[name]; ok {
		return i
	}
	return -1
}

// Names returns the table's column names, dimensions left out, in
// declaration order.
func (t *Table) Names() []string {
	out := make([]string, len(t.Columns))
	for i := range t.Columns {
		out[i] = t.Columns[i].Name
	}
	return out
}

// Charted returns the runs.parquet columns the report charts and compare
// tests, in declaration order.
func Charted() []*Column {
	var out []*Column
	for i := range Runs.Columns {
		if Runs.Columns[i].Charted {
			out = append(out, &Runs.Columns[i])
		}
	}
	return out
}

// Summarized returns the runs.parquet columns summary.parquet summarises,
// in declaration order (the order of summary.parquet's columns).
func Summarized() []*Column {
	var out []*Column
	for i := range Runs.Columns {
		if Runs.Columns[i].Summary != NotSummarized {
			out = append(out, &Runs.Columns[i])
		}
	}
	return out
}

// Float returns the value of the numeric column c in row, a *RunRow,
// *SeriesRow, *LinkRow or *RecoveryRow of c's table, and false when it is
// null. It panics on a label column or a row of another table (programming
// mistakes). Cost: a reflective field access; not for a hot loop.
func (c *Column) Float(row any) (float64, bool) {
	if !c.number {
		panic("results: column " + c.Name + " holds no numbers")
	}
	v := reflect.ValueOf(row).Elem().FieldByIndex(c.index)
	switch v.Kind() {
	case reflect.Int, reflect.Int64:
		return float64(v.Int()), true
	case reflect.Uint64:
		return float64(v.Uint()), true
	case reflect.Float64:
		return v.Float(), true
	case reflect.Pointer:
		if v.IsNil() {
			return 0, false
		}
		return v.Elem().Float(), true
	}
	panic("results: column " + c.Name + " has no numeric type")
}

// DimColumns are the dimension columns every table but summary.parquet
// starts with (Dims); CellColumns those of summary.parquet (CellDims).
var DimColumns = []Column{
	{Name: "experiment", Label: "experiment", Doc: "name of the experiment"},
	{Name: "topology", Label: "topology", Doc: "label of the topology"},
	{Name: "agent", Label: "agent", Doc: "the agent's label: its label: field, else its kind and the parameters that differ from defaults"},
	{Name: "load", Unit: "1", Label: "load", Doc: "normalised offered load (1 = busiest channel saturated under hop-count shortest path)"},
	{Name: "failure", Label: "failure", Doc: "name of the failure schedule"},
	{Name: "replicate", Label: "replicate", Doc: "replicate index within the cell, from 0"},
	{Name: "seed", Label: "seed", Doc: "the run's seed, unsigned 64-bit"},
	{Name: "run_id", Label: "run", Doc: "the run's identifier, unique within the experiment"},
	{Name: "run_index", Label: "run index", Doc: "the run's position in the full, unsharded grid order"},
}

// CellColumns are the dimension columns of summary.parquet.
var CellColumns = DimColumns[:5]

// Runs is runs.parquet: one row per run (RunRow).
//
// Add a column to it, or to any table, in two steps: a field in the row
// struct (RunRow) with its parquet tag, and an entry here; then compute its
// value where the row is filled (FromRun). The package panics at start-up
// if a field has no entry or an entry no field. Summary and Charted then
// put it in summary.parquet, the sweep's summary table, the report's charts
// and compare's metrics without more code; parts written before the column
// existed read it as zero or null.
var Runs = &Table{Name: "runs", File: RunsFile, Doc: "one run", Columns: []Column{
	// summarised and charted columns first: their order here is the order
	// of summary.parquet's columns and of the report's charts
	{Name: "delivery_mean_s", Unit: "s", Summary: MeanCI95, Charted: true, OneRunCI: "delivery_mean_s_ci95", Label: "delivery mean", Doc: "exact mean delivery time of the measured delivered packets; null if none"},
	{Name: "delivery_p95_s", Unit: "s", Summary: MeanCI95, Charted: true, Label: "delivery p95", Doc: "95th percentile of delivery time (histogram, relative error ≤ 0.1%); null if none"},
	{Name: "loss_rate", Unit: "1", Summary: MeanCI95, Charted: true, Label: "loss", Doc: "dropped / generated over the measured window; null if nothing was generated"},
	{Name: "throughput_bps", Unit: "bit/s", Summary: MeanCI95, Label: "throughput", Doc: "delivered measured bits over the measured window (duration − warmup)"},
	{Name: "completed_share", Unit: "1", Summary: MeanCI95, FlowOnly: true, Label: "flows completed", Doc: "flows_completed / flows_started: the share of the measured flows whose every packet was delivered, the flows the completion times and slowdowns describe (the rest failed or were unfinished at the end); null without flow traffic"},
	{Name: "completed_mice_share", Unit: "1", Summary: MeanCI95, FlowOnly: true, Label: "flows completed, mice", Doc: "completed_share of the mice; null if none started"},
	{Name: "completed_elephant_share", Unit: "1", Summary: MeanCI95, FlowOnly: true, Label: "flows completed, elephants", Doc: "completed_share of the elephants; null if none started"},
	{Name: "fct_mean_s", Unit: "s", Summary: MeanCI95, FlowOnly: true, Label: "flow completion time", Doc: "mean completion time (first packet sent to last delivered) of the flows started after the warm-up that completed; null without flow traffic"},
	{Name: "fct_mice_mean_s", Unit: "s", Summary: MeanCI95, FlowOnly: true, Label: "flow completion time, mice", Doc: "fct_mean_s of the mice (flows of at most mice_bytes); null if none completed"},
	{Name: "fct_elephant_mean_s", Unit: "s", Summary: MeanCI95, FlowOnly: true, Label: "flow completion time, elephants", Doc: "fct_mean_s of the elephants (flows of at least elephant_bytes); null if none completed"},
	{Name: "slowdown_mean", Summary: MeanCI95, FlowOnly: true, Label: "slowdown", Doc: "mean over completed flows of completion time / completion time alone on the idle network along the best candidate path (the hop-count shortest path, or the least-delay path over channels of at least one of a few bandwidths); null without flow traffic"},
	{Name: "slowdown_mice_mean", Summary: MeanCI95, FlowOnly: true, Label: "slowdown, mice", Doc: "slowdown_mean of the mice; null if none completed"},
	{Name: "slowdown_elephant_mean", Summary: MeanCI95, FlowOnly: true, Label: "slowdown, elephants", Doc: "slowdown_mean of the elephants; null if none completed"},
	{Name: "reordered_fraction", Unit: "1", Summary: MeanCI95, FlowOnly: true, Label: "reordered", Doc: "delivered packets of measured flows that arrived below the next expected sequence number (reordered, RFC 4737), over those delivered; null without flow traffic"},

	{Name: "nodes", Label: "nodes", Doc: "nodes of the topology"},
	{Name: "links", Label: "links", Doc: "links of the topology (each two directed channels)"},
	{Name: "duration_s", Unit: "s", Label: "duration", Doc: "simulated time of the run"},
	{Name: "warmup_s", Unit: "s", Label: "warm-up", Doc: "packets generated before this time are not measured"},
	{Name: "bin_s", Unit: "s", Label: "bin", Doc: "width of a series.parquet time bin"},
	{Name: "generated", Unit: "packets", Label: "generated", Doc: "packets generated in the measured window"},
	{Name: "delivered", Unit: "packets", Label: "delivered", Doc: "measured packets delivered"},
	{Name: "dropped", Unit: "packets", Label: "dropped", Doc: "measured packets dropped, any reason"},
	{Name: "in_flight", Unit: "packets", Label: "in flight", Doc: "measured packets still in the network at the end (generated = delivered + dropped + in_flight)"},
	{Name: "dropped_queue_full", Unit: "packets", Label: "dropped, queue full", Doc: "measured packets dropped at a full output queue"},
	{Name: "dropped_link_down", Unit: "packets", Label: "dropped, link down", Doc: "measured packets lost on or sent into a failed channel"},
	{Name: "dropped_no_route", Unit: "packets", Label: "dropped, no route", Doc: "measured packets the agent had no channel for"},
	{Name: "dropped_hop_limit", Unit: "packets", Label: "dropped, hop limit", Doc: "measured packets dropped at the hop limit"},
	{Name: "dropped_node_down", Unit: "packets", Label: "dropped, node down", Doc: "measured packets lost at or sent to a failed node"},
	{Name: "dropped_link_loss", Unit: "packets", Label: "dropped, link loss", Doc: "measured packets lost on a channel with a loss probability (link conditions)"},
	{Name: "dropped_unreachable", Unit: "packets", Label: "dropped, unreachable", Doc: "dropped packets (also counted under their reason) whose destination was down or cut off from them"},
	{Name: "loss_rate_reachable", Unit: "1", Label: "loss, reachable", Doc: "(dropped − dropped_unreachable) / (generated − dropped_unreachable): the loss routing could have avoided; null if nothing reachable was generated"},
	{Name: "delivery_p50_s", Unit: "s", Label: "delivery p50", Doc: "median delivery time (histogram, relative error ≤ 0.1%); null if none"},
	{Name: "delivery_p99_s", Unit: "s", Label: "delivery p99", Doc: "99th percentile of delivery time (histogram, relative error ≤ 0.1%); null if none"},
	{Name: "delivery_mean_s_ci95", Unit: "s", Label: "delivery mean ± (one run)", Doc: "half-width of the 95% steady-state interval for delivery_mean_s from this run alone (non-overlapping batch means over the measured window, see delivery_mean_ci_method); null when the run is too short for one"},
	{Name: "delivery_mean_ci_method", Label: "interval method", Doc: `how delivery_mean_s_ci95 was made: "batch means: K batches of M packets", or "none: " and why there is none`},
	{Name: "warmup_detected_s", Unit: "s", Label: "transient detected", Doc: "end of the initial transient by MSER-5 (MSER-m with 10 batches below 50 bins) over the run's binned mean delivery times, warm-up included; 0 when none beyond noise; null when not detected (see warmup_detection)"},
	{Name: "warmup_detection", Label: "transient detection", Doc: `"detected"; "not settled" (a significant transient with no end in the first half of the run); "too few bins" (fewer than 10 bins with a delivery time)`},
	{Name: "delivery_max_s", Unit: "s", Label: "delivery max", Doc: "exact maximum delivery time; null if none"},
	{Name: "hops_mean", Label: "hops", Doc: "mean hops of the measured delivered packets; null if none"},
	{Name: "stretch_mean", Unit: "1", Label: "stretch", Doc: "mean of hops taken / intact shortest hops; null if none"},
	{Name: "util_mean", Unit: "1", Label: "utilisation, mean", Doc: "mean utilisation over directed channels"},
	{Name: "util_max", Unit: "1", Label: "utilisation, max", Doc: "utilisation of the busiest directed channel"},
	{Name: "control_packets", Unit: "packets", Label: "control packets", Doc: "control packets sent (consensus and link-state messages)"},
	{Name: "control_bytes", Unit: "B", Label: "control bytes", Doc: "bytes of the control packets sent"},
	{Name: "control_dropped", Unit: "packets", Label: "control dropped", Doc: "control packets lost"},
	{Name: "route_changes", Label: "route changes", Doc: "route changes made at or after the warm-up (what one is depends on the agent kind: README, Results)"},
	{Name: "opt_util_max", Unit: "1", Summary: Same, Label: "optimum: max utilisation", Doc: "least maximum channel utilisation of any splittable routing of the cell's offered traffic (packets and flows, as mean bit rates) on the intact topology (maximum concurrent flow; README, Model optimum); null when not computed"},
	{Name: "opt_load_limit", Unit: "1", Summary: Same, Label: "optimum: load limit", Doc: "load / opt_util_max: the highest normalised load of this traffic any routing could carry (with flow arrivals, whose load column counts the packets alone, the whole traffic's normalised load / opt_util_max); null when not computed or the traffic offers nothing"},
	{Name: "opt_delay_mean_s", Unit: "s", Summary: Same, Label: "optimum: delivery mean", Doc: "least mean delivery time of any splittable routing under the model of independent M/G/1 channels (service-time variability from the run's packet sizes: M/D/1 for a fixed size) with propagation; null when no routing keeps every channel below saturation, or not computed"},
	{Name: "opt_util_gap", Unit: "1", Summary: Same, Label: "optimum: max utilisation gap", Doc: "certified relative gap of opt_util_max: opt_util_max / (its proven lower bound) − 1"},
	{Name: "opt_delay_gap", Unit: "1", Summary: Same, Label: "optimum: delivery mean gap", Doc: "certified relative gap of opt_delay_mean_s: opt_delay_mean_s / (its proven lower bound) − 1; null with opt_delay_mean_s"},
	{Name: "flows_started", Label: "flows started", Doc: "flows started at or after the warm-up (0 without flow traffic)"},
	{Name: "flows_completed", Label: "flows completed", Doc: "measured flows whose every packet was delivered"},
	{Name: "flows_failed", Label: "flows failed", Doc: "measured flows that lost a packet or whose source failed while sending; the rest were unfinished at the end"},
	{Name: "fct_p99_s", Unit: "s", Label: "flow completion time p99", Doc: "99th percentile of the completed measured flows' completion times (histogram, relative error ≤ 0.1%); null if none"},
	{Name: "slowdown_p99", Label: "slowdown p99", Doc: "99th percentile of the completed measured flows' slowdowns (histogram, relative error ≤ 0.1%); null if none"},
	{Name: "failure_events", Label: "failure events", Doc: "failure events in the run"},
	{Name: "events", Unit: "events", Label: "events", Doc: "simulation events processed"},
	{Name: "wall_s", Unit: "s", Label: "wall time", Doc: "wall-clock time of the run: the one column that differs between two executions"},
	{Name: "version", Label: "version", Doc: "tool version that ran it"},
}}

// Series is series.parquet: one row per run and time bin (SeriesRow).
var Series = &Table{Name: "series", File: SeriesFile, Doc: "one time bin of one run", Columns: []Column{
	{Name: "bin", Label: "bin", Doc: "index of the bin, from 0"},
	{Name: "t_start_s", Unit: "s", Label: "start", Doc: "start of the bin"},
	{Name: "t_end_s", Unit: "s", Label: "end", Doc: "end of the bin"},
	{Name: "generated", Unit: "packets", Label: "generated", Doc: "packets generated in the bin (warm-up included)"},
	{Name: "delivered", Unit: "packets", Label: "delivered", Doc: "packets generated in the bin and delivered"},
	{Name: "dropped", Unit: "packets", Label: "dropped", Doc: "packets generated in the bin and dropped"},
	{Name: "loss_rate", Unit: "1", Label: "loss", Doc: "dropped / generated; null if nothing was generated"},
	{Name: "delivery_mean_s", Unit: "s", Label: "delivery mean", Doc: "mean delivery time of the bin's delivered packets; null if none"},
	{Name: "delivery_p95_s", Unit: "s", Label: "delivery p95", Doc: "95th percentile of their delivery time; null if none"},
	{Name: "util_max", Unit: "1", Label: "utilisation, max", Doc: "utilisation of the busiest directed channel in the bin"},
	{Name: "route_changes", Label: "route changes", Doc: "route changes the agent made within the bin"},
}}

// Links is links.parquet: one row per run and directed channel (LinkRow).
var Links = &Table{Name: "links", File: LinksFile, Doc: "one directed channel of one run, over the measured window", Columns: []Column{
	{Name: "channel", Label: "channel", Doc: "channel ID: link i has channels 2i (a→b) and 2i+1 (b→a)"},
	{Name: "link", Label: "link", Doc: "index of the link in the topology"},
	{Name: "from", Label: "from", Doc: "sending node"},
	{Name: "to", Label: "to", Doc: "receiving node"},
	{Name: "bandwidth_bps", Unit: "bit/s", Label: "bandwidth", Doc: "bandwidth of the channel at the start of the run (link conditions may change it later)"},
	{Name: "delay_s", Unit: "s", Label: "delay", Doc: "propagation delay of the channel"},
	{Name: "util", Unit: "1", Label: "utilisation", Doc: "fraction of the measured window spent transmitting"},
	{Name: "packets", Unit: "packets", Label: "packets", Doc: "packets transmitted"},
	{Name: "dropped_queue_full", Unit: "packets", Label: "dropped, queue full", Doc: "packets dropped at its full queue"},
	{Name: "dropped_link_down", Unit: "packets", Label: "dropped, link down", Doc: "packets lost on it while down"},
	{Name: "dropped_link_loss", Unit: "packets", Label: "dropped, link loss", Doc: "packets lost on it by its loss probability (link conditions)"},
	{Name: "down_s", Unit: "s", Label: "down", Doc: "time it spent down"},
}}

// Recoveries is recoveries.parquet: one row per run and failure event
// (RecoveryRow).
var Recoveries = &Table{Name: "recoveries", File: RecoveriesFile, Doc: "one failure event of one run", Columns: []Column{
	{Name: "event", Label: "event", Doc: "index of the event in the run, by time"},
	{Name: "at_s", Unit: "s", Label: "at", Doc: "time of the event"},
	{Name: "element", Label: "element", Doc: "the link (a–b) or node it hit"},
	{Name: "action", Label: "action", Doc: `"down" or "up"`},
	{Name: "lost_packets", Unit: "packets", Label: "lost", Doc: "packets lost because of it (see Recover)"},
	{Name: "recovery_s", Unit: "s", Label: "recovery", Doc: "time until binned delivery time and loss are back in band for three bins (see Recover); null if never"},
	{Name: "pre_delivery_mean_s", Unit: "s", Label: "delivery before", Doc: "pre-event delivery time level; null when no bin qualified"},
	{Name: "pre_loss_rate", Unit: "1", Label: "loss before", Doc: "pre-event loss level; null when no bin qualified"},
	{Name: "window_end_s", Unit: "s", Label: "window end", Doc: "where the search for recovery stopped"},
	{Name: "lost_reachable", Unit: "packets", Label: "lost, reachable", Doc: "exact drops from the event to the next (link_down, no_route, hop_limit, node_down) of packets whose destination stayed reachable"},
	{Name: "lost_unreachable", Unit: "packets", Label: "lost, unreachable", Doc: "exact drops from the event to the next of packets whose destination was down or cut off, any reason"},
	{Name: "lost_queue_full", Unit: "packets", Label: "lost, queue full", Doc: "exact queue_full drops of reachable packets from the event to the next (baseline included)"},
	{Name: "reconnect_s", Unit: "s", Label: "reconnect", Doc: "time from the event to the last drop counted in lost_reachable; 0 when there was none"},
	{Name: "settle_s", Unit: "s", Label: "settle", Doc: "time until delivery time is stable at its new level (see Recover); null if it did not settle"},
	{Name: "new_delivery_mean_s", Unit: "s", Label: "delivery after", Doc: "the level delivery time settled at; null if it did not settle"},
	{Name: "delay_ratio", Unit: "1", Label: "delay ratio", Doc: "new_delivery_mean_s / pre_delivery_mean_s; null if either is"},
	{Name: "peak_delay_s", Unit: "s", Label: "peak delay", Doc: "largest bin mean delivery time in the window"},
}}

// Flows is flows.parquet: one row per run and sampled flow (FlowRow).
// Finalize writes it only when some run sampled a flow.
var Flows = &Table{Name: tableFlows, File: FlowsFile, Doc: "one sampled flow of one run (flows started after the warm-up: all up to traffic.flows.sample per run, beyond that a uniform sample)", Columns: []Column{
	{Name: "flow_id", Label: "flow", Doc: "the run's flows numbered from 1 in the order they started, warm-up included"},
	{Name: "source", Label: "source", Doc: "sending node"},
	{Name: "destination", Label: "destination", Doc: "receiving node"},
	{Name: "size_bytes", Unit: "B", Label: "size", Doc: "bytes of the flow"},
	{Name: "class", Label: "class", Doc: "size class: mice (at most mice_bytes), elephant (at least elephant_bytes) or medium"},
	{Name: "start_s", Unit: "s", Label: "start", Doc: "emission of the first packet"},
	{Name: "end_s", Unit: "s", Label: "end", Doc: "delivery of the last packet; null unless completed"},
	{Name: "fct_s", Unit: "s", Label: "flow completion time", Doc: "end_s − start_s; null unless completed"},
	{Name: "ideal_fct_s", Unit: "s", Label: "idle-network completion time", Doc: "completion time alone on the idle network along the best candidate path (the hop-count shortest path, or the least-delay path over channels of at least one of a few bandwidths), with the channels' parameters when the flow started; null when the destination cannot be reached"},
	{Name: "slowdown", Unit: "1", Label: "slowdown", Doc: "fct_s / ideal_fct_s (1 for a flow alone on its best candidate path); null if either is"},
	{Name: "packets", Unit: "packets", Label: "packets", Doc: "packets the flow sent"},
	{Name: "delivered_packets", Unit: "packets", Label: "delivered", Doc: "packets of the flow delivered"},
	{Name: "reordered_packets", Unit: "packets", Label: "reordered", Doc: "delivered packets that arrived below the next expected sequence number (RFC 4737)"},
	{Name: "outcome", Label: "outcome", Doc: `"completed" (every packet delivered), "failed" (a packet dropped or the source stopped it) or "unfinished" (the run ended first)`},
}}

// Summaries is summary.parquet: one row per cell (SummaryRow). Its columns
// after the cell dimensions are replicates and those every Summarized
// column of Runs makes (Summary.Suffixes).
var Summaries = &Table{Name: "summary", File: SummaryFile, Doc: "one cell, over its replicates"}

// Optimum is optimum.parquet: one row per cell (without its agent) and
// topology state of its failure schedule (OptimumRow). Its dimensions are
// its own, so they are declared here with the other columns.
var Optimum = &Table{Name: TableOptimum, File: OptimumFile, Doc: "the model optimum of one cell's offered matrix in one topology state", Columns: []Column{
	{Name: "experiment", Label: "experiment", Doc: "name of the experiment"},
	{Name: "topology", Label: "topology", Doc: "label of the topology"},
	{Name: "load", Unit: "1", Label: "load", Doc: "normalised offered load"},
	{Name: "failure", Label: "failure", Doc: "name of the failure schedule"},
	{Name: "state", Label: "state", Doc: "topology state: 0 intact from time 0, then one per scheduled event that changes what is down"},
	{Name: "t_start_s", Unit: "s", Label: "start", Doc: "start of the state"},
	{Name: "t_end_s", Unit: "s", Label: "end", Doc: "end of the state"},
	{Name: "down", Label: "down", Doc: "elements down in the state, comma separated; empty when intact"},
	{Name: "unroutable_share", Unit: "1", Label: "unroutable share", Doc: "share of the offered demand no routing could deliver in the state"},
	{Name: "unsent_share", Unit: "1", Label: "unsent share", Doc: "part of unroutable_share whose source is down: a down node sends nothing, so it is neither carried nor lost"},
	{Name: "states", Label: "states", Doc: "states the cell's rows cover: all, or intact (random failures differ from one replicate to the next: the intact state only)"},
	{Name: "opt_util_max", Unit: "1", Label: "optimum: max utilisation", Doc: "least maximum channel utilisation of any splittable routing in the state; null when not computed"},
	{Name: "opt_load_limit", Unit: "1", Label: "optimum: load limit", Doc: "load / opt_util_max; null when not computed or nothing is offered"},
	{Name: "opt_delay_mean_s", Unit: "s", Label: "optimum: delivery mean", Doc: "least mean delivery time of any splittable routing (independent M/G/1 channels of the run's packet-size variability, with propagation); null when none stays below saturation, or not computed"},
	{Name: "opt_util_gap", Unit: "1", Label: "optimum: max utilisation gap", Doc: "certified relative gap of opt_util_max"},
	{Name: "opt_delay_gap", Unit: "1", Label: "optimum: delivery mean gap", Doc: "certified relative gap of opt_delay_mean_s"},
}}

// Tables lists the tables of a finished result folder, in the order a
// folder is described; flows.parquet (Flows) is there only when some run
// sampled a flow. optimum.parquet (Optimum) is there only when the sweep
// computed the optimum.
var Tables = []*Table{Runs, Series, Links, Recoveries, Flows, Summaries}

func init() {
	bindDims(DimColumns, reflect.TypeFor[Dims]())
	bindDims(CellColumns, reflect.TypeFor[CellDims]())
	bind(Runs, reflect.TypeFor[RunRow]())
	bind(Series, reflect.TypeFor[SeriesRow]())
	bind(Links, reflect.TypeFor[LinkRow]())
	bind(Recoveries, reflect.TypeFor[RecoveryRow]())
	bind(Flows, reflect.TypeFor[FlowRow]())
	bind(Optimum, reflect.TypeFor[OptimumRow]())
	Summaries.Columns = []Column{{Name: "replicates", Label: "replicates", Doc: "runs in the cell", number: true}}
	for _, c := range Summarized() {
		for _, suf := range c.Summary.Suffixes() {
			doc := c.Name + ": "
			switch suf {
			case "_mean":
				doc += "mean over the replicates' non-null values"
			case "_ci95":
				doc += "half-width of the mean's 95% Student t confidence interval; null for fewer than two values"
				if c.OneRunCI != "" {
					doc += ", but for one replicate the run's own interval (" + c.OneRunCI + ")"
				}
			case "_sum":
				doc += "total over the replicates' non-null values"
			case "":
				doc = c.Doc
			}
			Summaries.Columns = append(Summaries.Columns, Column{Name: c.Name + suf, Unit: c.Unit, Label: c.Label, Doc: doc, number: true})
		}
	}
	index(Summaries)
	bindSummary()
}

// bind checks that the columns declared for t and the parquet-tagged
// fields of its row struct typ (embedded dimensions left out) are the same
// set, and records each column's field.
func bind(t *Table, typ reflect.Type) {
	index(t)
	seen := make(map[string]bool)
	for i := 0; i < typ.NumField(); i++ {
		f := typ.Field(i)
		if f.Anonymous {
			continue
		}
		name, _, _ := strings.Cut(f.Tag.Get("parquet"), ",")
		c, ok := t.Column(name)
		if !ok {
			panic(fmt.Sprintf("results: %s column %q (%s.%s) has no entry in the %s table's Columns", t.File, name, typ.Name(), f.Name, t.Name))
		}
		c.index = f.Index
		switch k := f.Type.Kind(); {
		case k == reflect.Int || k == reflect.Int64 || k == reflect.Uint64 || k == reflect.Float64:
			c.number = true
		case k == reflect.Pointer && f.Type.Elem().Kind() == reflect.Float64:
			c.number = true
		}
		seen[name] = true
	}
	for _, c := range t.Columns {
		if !seen[c.Name] {
			panic(fmt.Sprintf("results: %s column %q is declared but %s has no field for it", t.File, c.Name, typ.Name()))
		}
		if c.Summary != NotSummarized && (t != Runs || !c.number) {
			panic(fmt.Sprintf("results: %s column %q: only numeric runs columns are summarised", t.File, c.Name))
		}
		if c.Charted && (t != Runs || !c.number) {
			panic(fmt.Sprintf("results: %s column %q: only numeric runs columns are charted", t.File, c.Name))
		}
	}
}

// bindDims checks that cols are the parquet-tagged fields of typ, in order.
func bindDims(cols []Column, typ reflect.Type) {
	if typ.NumField() != len(cols) {
		panic(fmt.Sprintf("results: %s has %d fields, %d dimension columns are declared", typ.Name(), typ.NumField(), len(cols)))
	}
	for i := range cols {
		f := typ.Field(i)
		name, _, _ := strings.Cut(f.Tag.Get("parquet"), ",")
		if name != cols[i].Name {
			panic(fmt.Sprintf("results: %s field %s is column %q, declared %q", typ.Name(), f.Name, name, cols[i].Name))
		}
		cols[i].index = f.Index
		k := f.Type.Kind()
		cols[i].number = k == reflect.Int || k == reflect.Uint64 || k == reflect.Float64
	}
}

func index(t *Table) {
	t.byName = make(map[string]int, len(t.Columns))
	for i, c := range t.Columns {
		if _, dup := t.byName[c.Name]; dup {
			panic(fmt.Sprintf("results: %s column %q declared twice", t.File, c.Name))
		}
		t.byName[c.Name] = i
	}
}
