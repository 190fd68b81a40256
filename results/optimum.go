package results

// OptimumFile is the table of the model optimum per cell and topology
// state, written beside the five tables of a result folder when the runs
// carry the optimum (RunTables.Optimum, filled by a sweep that computes it:
// package sweep); a merge writes it from the runs it merges.
const OptimumFile = "optimum.parquet"

// TableOptimum is optimum.parquet's KeyTable value.
const TableOptimum = "optimum"

// Values of OptimumRow.States.
const (
	StatesAll    = "all"
	StatesIntact = "intact"
)

// OptimumRow is one row of optimum.parquet: the model optimum (package
// optimum) of one cell's offered matrix in one topology state of its
// failure schedule, over [TStartS, TEndS). State 0 is the intact topology
// from time 0 (the values of runs.parquet's opt_* columns); each later
// state starts at a scheduled failure event that changes what is down.
// The cell is the dimensions but the agent: the optimum does not depend on
// it. Values are null when not computed, as in runs.parquet.
type OptimumRow struct {
	Experiment string  `parquet:"experiment,dict"`
	Topology   string  `parquet:"topology,dict"`
	Load       float64 `parquet:"load"`
	Failure    string  `parquet:"failure,dict"`
	State      int     `parquet:"state"`
	TStartS    float64 `parquet:"t_start_s"`
	TEndS      float64 `parquet:"t_end_s"`
	// Down names the elements down in the state ("c-d", node "g"), comma
	// separated in element order; empty when intact.
	Down string `parquet:"down,dict"`
	// UnroutableShare is the share of the offered demand that no routing
	// could deliver in the state (to or from a down node, or between parts
	// the failure disconnected); the optimum routes the rest.
	UnroutableShare float64 `parquet:"unroutable_share"`
	// UnsentShare is the part of UnroutableShare whose source is down: a
	// down node sends nothing, so that demand is neither carried nor lost
	// (the simulator generates no packet at a down node).
	UnsentShare float64 `parquet:"unsent_share"`
	// States says which states the cell's rows cover: StatesAll (every
	// state of the schedule) or StatesIntact (random failures differ from
	// one replicate to the next: the intact state only).
	States        string   `parquet:"states,dict"`
	OptUtilMax    *float64 `parquet:"opt_util_max,optional"`
	OptLoadLimit  *float64 `parquet:"opt_load_limit,optional"`
	OptDelayMeanS *float64 `parquet:"opt_delay_mean_s,optional"`
	OptUtilGap    *float64 `parquet:"opt_util_gap,optional"`
	OptDelayGap   *float64 `parquet:"opt_delay_gap,optional"`
}

// ReadOptimum reads optimum.parquet.
func ReadOptimum(path string) ([]OptimumRow, error) {
	return readTable[OptimumRow](path, TableOptimum)
}

// optimumCell identifies the cell of an optimum.parquet row: a run's cell
// without its agent.
type optimumCell struct {
	experiment, topology, failure string
	load                          float64
}

func optimumCellOf(d Dims) optimumCell {
	return optimumCell{d.Experiment, d.Topology, d.Failure, d.Load}
}

func (r *OptimumRow) cell() optimumCell {
	return optimumCell{r.Experiment, r.Topology, r.Failure, r.Load}
}
