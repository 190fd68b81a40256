package results

// Dims are the dimension columns every table but summary repeats, so that a
// notebook needs no joins. Seed is stored as an unsigned 64-bit integer
// (Parquet INT64 with the logical type INTEGER(64, unsigned); arrow reads it
// as uint64, DuckDB as UBIGINT), so every seed keeps its exact value.
type Dims struct {
	Experiment string  `parquet:"experiment,dict"`
	Topology   string  `parquet:"topology,dict"`
	Agent      string  `parquet:"agent,dict"`
	Load       float64 `parquet:"load"`
	Failure    string  `parquet:"failure,dict"`
	Replicate  int     `parquet:"replicate"`
	Seed       uint64  `parquet:"seed"`
	// RunID names the run. It must be unique within an experiment; any
	// string works (part folders escape it).
	RunID string `parquet:"run_id,dict"`
	// Index is the run's position in the experiment's full, unsharded grid
	// order. Finalize without an explicit order and Merge sort runs by it
	// (then by RunID), so merged shards come out in grid order.
	Index int `parquet:"run_index"`
}

// Cell returns the dimensions that identify d's cell.
func (d Dims) Cell() CellDims {
	return CellDims{Experiment: d.Experiment, Topology: d.Topology, Agent: d.Agent, Load: d.Load, Failure: d.Failure}
}

// CellDims are the dimension columns of summary.parquet: those of Dims but
// replicate, seed, run_id and run_index.
type CellDims struct {
	Experiment string  `parquet:"experiment,dict"`
	Topology   string  `parquet:"topology,dict"`
	Agent      string  `parquet:"agent,dict"`
	Load       float64 `parquet:"load"`
	Failure    string  `parquet:"failure,dict"`
}

// RunRow is one row of runs.parquet: one run. Times are float64 seconds.
// Pointer fields are nullable: a statistic of no values (a mean delivery time
// with no delivered packet, a loss rate with no generated packet) is null,
// never NaN.
type RunRow struct {
	Dims
	Nodes     int     `parquet:"nodes"`
	Links     int     `parquet:"links"`
	DurationS float64 `parquet:"duration_s"`
	WarmupS   float64 `parquet:"warmup_s"`
	BinS      float64 `parquet:"bin_s"`
	// WarmupDetectedS is where the run's initial transient ends by MSER-5
	// over its binned delivery times (DetectWarmup); null when it was not
	// seen to end or the run had too few bins to tell (WarmupDetection).
	WarmupDetectedS *float64 `parquet:"warmup_detected_s,optional"`
	WarmupDetection string   `parquet:"warmup_detection,dict"` // WarmupDetected, WarmupUnsettled or WarmupTooFewBins

	Generated        int64 `parquet:"generated"`
	Delivered        int64 `parquet:"delivered"`
	Dropped          int64 `parquet:"dropped"`
	InFlight         int64 `parquet:"in_flight"`
	DroppedQueueFull int64 `parquet:"dropped_queue_full"`
	DroppedLinkDown  int64 `parquet:"dropped_link_down"`
	DroppedNoRoute   int64 `parquet:"dropped_no_route"`
	DroppedHopLimit  int64 `parquet:"dropped_hop_limit"`
	DroppedNodeDown  int64 `parquet:"dropped_node_down"`
	DroppedLinkLoss  int64 `parquet:"dropped_link_loss"`
	// DroppedUnreachable counts the dropped packets (any reason, also
	// counted there) whose destination was down or cut off from them: see
	// sim.Result.Unreachable.
	DroppedUnreachable int64 `parquet:"dropped_unreachable"`

	LossRate *float64 `parquet:"loss_rate,optional"` // dropped / generated
	// LossRateReachable is (dropped − dropped_unreachable) / (generated −
	// dropped_unreachable): the loss routing could have avoided.
	LossRateReachable *float64 `parquet:"loss_rate_reachable,optional"`
	DeliveryMeanS     *float64 `parquet:"delivery_mean_s,optional"` // exact mean
	// DeliveryMeanSCI95 is the half-width of a 95% steady-state confidence
	// interval for the mean delivery time from this run alone: batch means
	// over the measured window (DeliveryMeanCIMethod says how many batches
	// of how many packets); null when the run is too short for one.
	DeliveryMeanSCI95    *float64 `parquet:"delivery_mean_s_ci95,optional"`
	DeliveryMeanCIMethod string   `parquet:"delivery_mean_ci_method,dict"`
	DeliveryP50S         *float64 `parquet:"delivery_p50_s,optional"` // histogram, relative error ≤ 0.1%
	DeliveryP95S         *float64 `parquet:"delivery_p95_s,optional"`
	DeliveryP99S         *float64 `parquet:"delivery_p99_s,optional"`
	DeliveryMaxS         *float64 `parquet:"delivery_max_s,optional"` // exact maximum
	HopsMean             *float64 `parquet:"hops_mean,optional"`
	StretchMean          *float64 `parquet:"stretch_mean,optional"` // hops taken / intact shortest hops
	// ThroughputBps is the delivered measured bits over the measured window
	// (duration − warmup), bit/s.
	ThroughputBps float64 `parquet:"throughput_bps"`
	UtilMean      float64 `parquet:"util_mean"` // mean over directed channels
	UtilMax       float64 `parquet:"util_max"`  // busiest directed channel

	ControlPackets int64 `parquet:"control_packets"`
	ControlBytes   int64 `parquet:"control_bytes"`
	ControlDropped int64 `parquet:"control_dropped"`
	RouteChanges   int64 `parquet:"route_changes"` // route changes after the warm-up; meaning per agent kind in the README
	// The model optimum of the cell's offered matrix on the intact
	// topology (package optimum), the same for every run of the cell; null
	// when not computed. OptDelayMeanS and OptDelayGap are null when no
	// routing keeps every channel below saturation.
	OptUtilMax    *float64 `parquet:"opt_util_max,optional"`
	OptLoadLimit  *float64 `parquet:"opt_load_limit,optional"`
	OptDelayMeanS *float64 `parquet:"opt_delay_mean_s,optional"`
	OptUtilGap    *float64 `parquet:"opt_util_gap,optional"`
	OptDelayGap   *float64 `parquet:"opt_delay_gap,optional"`
	// Flow traffic (sim.FlowResult): flows started at or after the
	// warm-up; completion times and slowdowns of the completed ones, all
	// and by size class; null without flow traffic or with none completed.
	FlowsStarted   int64 `parquet:"flows_started"`
	FlowsCompleted int64 `parquet:"flows_completed"`
	FlowsFailed    int64 `parquet:"flows_failed"`
	// CompletedShare and the per-class shares are flows completed over
	// flows started: the part of the flows the completion times and
	// slowdowns describe.
	CompletedShare         *float64 `parquet:"completed_share,optional"`
	CompletedMiceShare     *float64 `parquet:"completed_mice_share,optional"`
	CompletedElephantShare *float64 `parquet:"completed_elephant_share,optional"`
	FCTMeanS               *float64 `parquet:"fct_mean_s,optional"`
	FCTP99S                *float64 `parquet:"fct_p99_s,optional"`
	FCTMiceMeanS           *float64 `parquet:"fct_mice_mean_s,optional"`
	FCTElephantMeanS       *float64 `parquet:"fct_elephant_mean_s,optional"`
	SlowdownMean           *float64 `parquet:"slowdown_mean,optional"`
	SlowdownP99            *float64 `parquet:"slowdown_p99,optional"`
	SlowdownMiceMean       *float64 `parquet:"slowdown_mice_mean,optional"`
	SlowdownElephantMean   *float64 `parquet:"slowdown_elephant_mean,optional"`
	ReorderedFraction      *float64 `parquet:"reordered_fraction,optional"`
	FailureEvents          int      `parquet:"failure_events"`
	Events                 int64    `parquet:"events"`
	// WallS is the run's wall-clock time in seconds: the one column that
	// differs between two executions of the same run. Compare tables with
	// it masked.
	WallS   float64 `parquet:"wall_s"`
	Version string  `parquet:"version,dict"`
}

// SeriesRow is one row of series.parquet: one time bin of one run. Packets
// are counted in the bin of their generation time, over the whole run
// (warm-up included, so that the approach to steady state is visible).
type SeriesRow struct {
	Dims
	Bin           int      `parquet:"bin"`
	TStartS       float64  `parquet:"t_start_s"`
	TEndS         float64  `parquet:"t_end_s"`
	Generated     int64    `parquet:"generated"`
	Delivered     int64    `parquet:"delivered"`
	Dropped       int64    `parquet:"dropped"`
	LossRate      *float64 `parquet:"loss_rate,optional"`
	DeliveryMeanS *float64 `parquet:"delivery_mean_s,optional"`
	DeliveryP95S  *float64 `parquet:"delivery_p95_s,optional"`
	UtilMax       float64  `parquet:"util_max"`
	RouteChanges  int64    `parquet:"route_changes"` // route changes the agent made within the bin
}

// LinkRow is one row of links.parquet: one directed channel of one run, over
// the measured window.
type LinkRow struct {
	Dims
	Channel          int     `parquet:"channel"` // channel ID: link i has channels 2i (a→b) and 2i+1 (b→a)
	Link             int     `parquet:"link"`    // index of the link in the topology
	From             string  `parquet:"from,dict"`
	To               string  `parquet:"to,dict"`
	BandwidthBps     float64 `parquet:"bandwidth_bps"`
	DelayS           float64 `parquet:"delay_s"`
	Util             float64 `parquet:"util"`
	Packets          int64   `parquet:"packets"`
	DroppedQueueFull int64   `parquet:"dropped_queue_full"`
	DroppedLinkDown  int64   `parquet:"dropped_link_down"`
	DroppedLinkLoss  int64   `parquet:"dropped_link_loss"`
	DownS            float64 `parquet:"down_s"`
}

// RecoveryRow is one row of recoveries.parquet: one failure event of one run.
// See Recover for the definitions of lost_packets, recovery_s, settle_s,
// delay_ratio and peak_delay_s, and sim.Outcome for the exact per-packet
// counts lost_reachable, lost_unreachable, lost_queue_full and reconnect_s.
type RecoveryRow struct {
	Dims
	Event       int      `parquet:"event"` // index of the event in the run, by time
	AtS         float64  `parquet:"at_s"`
	Element     string   `parquet:"element,dict"`
	Action      string   `parquet:"action,dict"` // "down" or "up"
	LostPackets int64    `parquet:"lost_packets"`
	RecoveryS   *float64 `parquet:"recovery_s,optional"` // null if never recovered
	// PreDeliveryMeanS and PreLossRate are the pre-event level the band is
	// drawn around; null when no bin qualified.
	PreDeliveryMeanS *float64 `parquet:"pre_delivery_mean_s,optional"`
	PreLossRate      *float64 `parquet:"pre_loss_rate,optional"`
	// WindowEndS is where the search for recovery stopped: the next event's
	// time or the end of the series.
	WindowEndS float64 `parquet:"window_end_s"`

	// Exact per-packet counts of the drops attributed to the event (see
	// sim.Outcome), warm-up included: reachable ones from the event to the
	// next, unreachable ones of packets the event cut off, whenever.
	LostReachable   int64 `parquet:"lost_reachable"`   // link_down, no_route, hop_limit, node_down
	LostUnreachable int64 `parquet:"lost_unreachable"` // destination down or cut off, any reason
	LostQueueFull   int64 `parquet:"lost_queue_full"`  // reachable, queue_full (baseline included)
	// ReconnectS is the time from the event to the last drop counted in
	// lost_reachable, exact (not binned); 0 when there was none.
	ReconnectS float64 `parquet:"reconnect_s"`
	// SettleS is the time until delivery time is stable at its new level
	// (NewDeliveryMeanS); null when the window is too short or it did not
	// settle within the window's first half.
	SettleS          *float64 `parquet:"settle_s,optional"`
	NewDeliveryMeanS *float64 `parquet:"new_delivery_mean_s,optional"`
	// DelayRatio is new_delivery_mean_s / pre_delivery_mean_s.
	DelayRatio *float64 `parquet:"delay_ratio,optional"`
	// PeakDelayS is the largest bin mean delivery time in the window.
	PeakDelayS *float64 `parquet:"peak_delay_s,optional"`
}

// FlowRow is one row of flows.parquet: one sampled flow of one run (the
// run's flows started at or after the warm-up, all of them up to the
// sample size, beyond that a uniform sample: sim.FlowGen.Sample). Times
// are seconds from the start of the run; a value that does not apply is
// null.
type FlowRow struct {
	Dims
	FlowID      int64   `parquet:"flow_id"` // the run's flows numbered from 1 in start order, warm-up included
	Source      string  `parquet:"source,dict"`
	Destination string  `parquet:"destination,dict"`
	SizeBytes   int64   `parquet:"size_bytes"`
	Class       string  `parquet:"class,dict"` // mice, medium or elephant
	StartS      float64 `parquet:"start_s"`
	// EndS is the delivery of the last packet; null unless completed.
	EndS *float64 `parquet:"end_s,optional"`
	// FCTS is end_s − start_s; null unless completed.
	FCTS *float64 `parquet:"fct_s,optional"`
	// IdealFCTS is the completion time alone on the idle network along
	// the best of sim.IdealFCT's candidate paths (the hop-count shortest
	// path and the least-delay paths over channels of at least a few
	// bandwidths), with the channels' parameters when the flow started;
	// null when the destination cannot be reached.
	IdealFCTS *float64 `parquet:"ideal_fct_s,optional"`
	// Slowdown is fct_s / ideal_fct_s; null if either is.
	Slowdown         *float64 `parquet:"slowdown,optional"`
	Packets          int64    `parquet:"packets"`           // packets sent
	DeliveredPackets int64    `parquet:"delivered_packets"` // packets delivered
	ReorderedPackets int64    `parquet:"reordered_packets"` // delivered below the next expected sequence number
	Outcome          string   `parquet:"outcome,dict"`      // completed, failed or unfinished
}

// RunTables are one run's rows of every per-run table.
type RunTables struct {
	Run        RunRow
	Series     []SeriesRow
	Links      []LinkRow
	Recoveries []RecoveryRow
	Flows      []FlowRow
	// Optimum holds the rows of optimum.parquet for the run's cell (the
	// same in every run of the cell; empty when the optimum is not
	// computed): parts carry them so that Finalize, and so a merge of
	// shards, writes optimum.parquet without the experiment.
	Optimum []OptimumRow
	// State, for a learning run, is its final state: WritePart stores it
	// under DIR/state before the part (it is not part of the part).
	State *LearnedState
}

// Table file names in a result folder.
const (
	RunsFile       = "runs.parquet"
	SeriesFile     = "series.parquet"
	LinksFile      = "links.parquet"
	RecoveriesFile = "recoveries.parquet"
	FlowsFile      = "flows.parquet"
	SummaryFile    = "summary.parquet"
)

func f64(v float64) *float64 { return &v }
