package report

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strings"

	"hoplore/results"
)

// Cell identifies one cell of an experiment grid: a topology, an agent, a
// normalised load and a failure schedule.
type Cell struct {
	Topology string
	Agent    string
	Load     float64
	Failure  string
}

// Panel identifies the cells shared by all agents: a cell without its agent.
type Panel struct {
	Topology string
	Load     float64
	Failure  string
}

// Run is one row of runs.parquet. Values holds every numeric column the
// results schema declares (results.Runs), at the column's index in
// results.Runs.Columns, in the column's stored unit (times in seconds); a
// null value, or a column the file lacks, is NaN. Value reads one by name.
type Run struct {
	Cell
	Replicate int
	Seed      uint64 // 0 when the table has no seed column
	Values    []float64
	// WarmupDetection is the run's warmup_detection label ("detected",
	// "not settled", "too few bins"); "" when the table lacks it.
	WarmupDetection string
}

// NewRun returns a run of cell c with the named runs.parquet values and NaN
// for every other column. It panics on a name that is not a numeric column
// of results.Runs (a programming mistake).
func NewRun(c Cell, replicate int, values map[string]float64) Run {
	r := Run{Cell: c, Replicate: replicate, Values: make([]float64, len(results.Runs.Columns))}
	for i := range r.Values {
		r.Values[i] = math.NaN()
	}
	for name, v := range values {
		i, err := metricIndex(name)
		if err != nil {
			panic(err)
		}
		r.Values[i] = v
	}
	return r
}

// Value returns the value of the runs.parquet column name, NaN when it is
// null, absent or not a numeric column.
func (r *Run) Value(name string) float64 {
	return r.at(results.Runs.Index(name))
}

// at returns Values[k], NaN when r holds no such value.
func (r *Run) at(k int) float64 {
	if k < 0 || k >= len(r.Values) {
		return math.NaN()
	}
	return r.Values[k]
}

// metricIndex returns the index in Run.Values of the numeric runs.parquet
// column name, or an input error listing the known ones.
func metricIndex(name string) (int, error) {
	i := results.Runs.Index(name)
	if i >= 0 && results.Runs.Columns[i].Number() {
		return i, nil
	}
	var known []string
	for _, c := range results.Runs.Columns {
		if c.Number() {
			known = append(known, c.Name)
		}
	}
	return -1, inputErr("report: no numeric runs.parquet column %q (known: %s)", name, strings.Join(known, ", "))
}

// Bin is one row of series.parquet.
type Bin struct {
	Cell
	Replicate    int
	Start, End   float64 // s
	Generated    int64
	Delivered    int64
	Dropped      int64
	DeliveryMean float64 // s, NaN if nothing delivered
	DeliveryP95  float64 // s, NaN if nothing delivered
	UtilMax      float64
	RouteChanges float64 // route changes the agent made within the bin; NaN in tables without the column
}

// Loss returns the fraction of the bin's generated packets that were
// dropped, or NaN for an empty bin.
func (b Bin) Loss() float64 {
	if b.Generated == 0 {
		return math.NaN()
	}
	return float64(b.Dropped) / float64(b.Generated)
}

// Channel is one row of links.parquet: one directed channel in one run.
type Channel struct {
	Cell
	Replicate int
	From, To  string
	Bandwidth float64 // bit/s
	Util      float64 // fraction of the measured window spent transmitting
	Packets   int64
	Dropped   int64   // queue_full + link_down
	Down      float64 // s
}

// Recovery is one row of recoveries.parquet: one failure event in one run.
type Recovery struct {
	Cell
	Replicate int
	At        float64 // s
	Element   string
	Action    string
	Lost      int64
	Recovery  float64 // s after At; NaN when the run never recovered
	// The exact per-event measures (NaN when the tables predate them or the
	// value is null): see the README's "Recovery".
	LostReachable float64
	Reconnect     float64 // s
	Settle        float64 // s; NaN when it did not settle
	DelayRatio    float64
}

// Data holds the result tables of one experiment folder.
type Data struct {
	Dir        string
	Experiment string
	// Meta is the key-value metadata of runs.parquet: the experiment's
	// name and hash and the version that wrote it.
	Meta       results.Meta
	Runs       []Run
	Series     []Bin
	Channels   []Channel
	Recoveries []Recovery
	// OptimumStates holds optimum.parquet (empty when absent).
	OptimumStates []OptimumState
}

var dimCols = []string{"topology", "agent", "load", "failure", "replicate"}

// readResult reads the named columns of result table t in dir (see
// readTable). Every name must be a column the results schema declares for
// t or a dimension: the report reads the tables by the schema's names, and
// a name it does not declare is a programming mistake (a panic), caught by
// the first test rather than read as a missing column.
func readResult(dir string, t *results.Table, required, optional []string) (*table, error) {
	for _, names := range [][]string{required, optional} {
		for _, n := range names {
			if t.Index(n) < 0 && !slices.ContainsFunc(results.DimColumns, func(c results.Column) bool { return c.Name == n }) {
				panic(fmt.Sprintf("report: %s has no column %q in the results schema", t.File, n))
			}
		}
	}
	return readTable(filepath.Join(dir, t.File), required, optional)
}

func cellOf(t *table, i int) Cell {
	return Cell{Topology: t.s("topology", i), Agent: t.s("agent", i), Load: t.f("load", i), Failure: t.s("failure", i)}
}

// Load reads the result tables in dir. runs.parquet is required; the other
// tables are optional and read as empty when absent.
func Load(dir string) (*Data, error) {
	d := &Data{Dir: dir}
	// the charted columns must be there; every other numeric column is
	// read when present
	required := slices.Clone(dimCols)
	optional := []string{"experiment", "seed", "warmup_detection"}
	for _, c := range results.Runs.Columns {
		switch {
		case c.Charted:
			required = append(required, c.Name)
		case c.Number():
			optional = append(optional, c.Name)
		}
	}
	rt, err := readResult(dir, results.Runs, required, optional)
	if err != nil {
		return nil, err
	}
	if d.Meta, err = results.ReadMeta(filepath.Join(dir, results.RunsFile)); err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	d.Runs = make([]Run, rt.rows)
	cols := results.Runs.Columns
	for i := range rt.rows {
		if d.Experiment == "" {
			d.Experiment = rt.s("experiment", i)
		}
		r := &d.Runs[i]
		r.Cell, r.Replicate, r.Seed = cellOf(rt, i), int(rt.i("replicate", i)), rt.bits("seed", i)
		r.WarmupDetection = rt.s("warmup_detection", i)
		r.Values = make([]float64, len(cols))
		for k := range cols {
			r.Values[k] = rt.f(cols[k].Name, i)
		}
	}
	st, err := readResult(dir, results.Series,
		append(slices.Clone(dimCols), "t_start_s", "t_end_s", "generated", "delivered", "dropped", "delivery_mean_s"),
		[]string{"delivery_p95_s", "util_max", "route_changes"})
	if err != nil && !errors.Is(err, errNoFile) {
		return nil, err
	}
	if err == nil {
		for i := range st.rows {
			d.Series = append(d.Series, Bin{
				Cell: cellOf(st, i), Replicate: int(st.i("replicate", i)),
				Start: st.f("t_start_s", i), End: st.f("t_end_s", i),
				Generated: st.i("generated", i), Delivered: st.i("delivered", i), Dropped: st.i("dropped", i),
				DeliveryMean: st.f("delivery_mean_s", i), DeliveryP95: st.f("delivery_p95_s", i), UtilMax: st.f("util_max", i),
				RouteChanges: st.f("route_changes", i),
			})
		}
	}
	lt, err := readResult(dir, results.Links,
		append(slices.Clone(dimCols), "from", "to", "util"),
		[]string{"bandwidth_bps", "packets", "dropped_queue_full", "dropped_link_down", "down_s"})
	if err != nil && !errors.Is(err, errNoFile) {
		return nil, err
	}
	if err == nil {
		for i := range lt.rows {
			d.Channels = append(d.Channels, Channel{
				Cell: cellOf(lt, i), Replicate: int(lt.i("replicate", i)),
				From: lt.s("from", i), To: lt.s("to", i), Bandwidth: lt.f("bandwidth_bps", i),
				Util: lt.f("util", i), Packets: lt.i("packets", i),
				Dropped: lt.i("dropped_queue_full", i) + lt.i("dropped_link_down", i), Down: lt.f("down_s", i),
			})
		}
	}
	vt, err := readResult(dir, results.Recoveries,
		append(slices.Clone(dimCols), "at_s", "element", "action", "recovery_s"),
		[]string{"lost_packets", "lost_reachable", "reconnect_s", "settle_s", "delay_ratio"})
	if err != nil && !errors.Is(err, errNoFile) {
		return nil, err
	}
	if err == nil {
		for i := range vt.rows {
			d.Recoveries = append(d.Recoveries, Recovery{
				Cell: cellOf(vt, i), Replicate: int(vt.i("replicate", i)),
				At: vt.f("at_s", i), Element: vt.s("element", i), Action: vt.s("action", i),
				Lost: vt.i("lost_packets", i), Recovery: vt.f("recovery_s", i),
				LostReachable: vt.f("lost_reachable", i), Reconnect: vt.f("reconnect_s", i),
				Settle: vt.f("settle_s", i), DelayRatio: vt.f("delay_ratio", i),
			})
		}
	}
	ot, err := readResult(dir, results.Optimum,
		[]string{"topology", "load", "failure", "state", "t_start_s", "t_end_s"},
		[]string{"down", "unroutable_share", "unsent_share", "states", "opt_delay_mean_s", "opt_load_limit"})
	if err != nil && !errors.Is(err, errNoFile) {
		return nil, err
	}
	if err == nil {
		for i := range ot.rows {
			d.OptimumStates = append(d.OptimumStates, OptimumState{
				Topology: ot.s("topology", i), Load: ot.f("load", i), Failure: ot.s("failure", i),
				State: int(ot.i("state", i)), Start: ot.f("t_start_s", i), End: ot.f("t_end_s", i),
				Down: ot.s("down", i), Unroutable: nanZero(ot.f("unroutable_share", i)), Unsent: nanZero(ot.f("unsent_share", i)),
				States: ot.s("states", i), DelayMean: ot.f("opt_delay_mean_s", i), LoadLimit: ot.f("opt_load_limit", i),
			})
		}
	}
	if len(d.Runs) == 0 {
		return nil, inputErr("report: %s: no runs", filepath.Join(dir, results.RunsFile))
	}
	return d, nil
}

// Agents returns the agent labels, sorted.
func (d *Data) Agents() []string {
	return uniqSorted(d.Runs, func(r Run) string { return r.Agent }, cmp.Compare[string])
}

// Topologies returns the topology names, sorted.
func (d *Data) Topologies() []string {
	return uniqSorted(d.Runs, func(r Run) string { return r.Topology }, cmp.Compare[string])
}

// Loads returns the normalised loads, ascending.
func (d *Data) Loads() []float64 {
	return uniqSorted(d.Runs, func(r Run) float64 { return r.Load }, cmp.Compare[float64])
}

// Failures returns the failure schedule names, "none" first, then sorted.
func (d *Data) Failures() []string {
	return uniqSorted(d.Runs, func(r Run) string { return r.Failure }, compareFailure)
}

func compareFailure(a, b string) int {
	switch {
	case a == b:
		return 0
	case a == "none":
		return -1
	case b == "none":
		return 1
	}
	return cmp.Compare(a, b)
}

func uniqSorted[T any, K comparable](xs []T, key func(T) K, c func(a, b K) int) []K {
	seen := map[K]bool{}
	var out []K
	for _, x := range xs {
		k := key(x)
		if !seen[k] {
			seen[k] = true
			out = append(out, k)
		}
	}
	slices.SortFunc(out, c)
	return out
}
