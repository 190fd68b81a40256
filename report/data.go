package report

import (
	"cmp"
	"errors"
	"math"
	"path/filepath"
	"slices"
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

// Run is one row of runs.parquet, reduced to what the report uses. Times are
// in seconds; a null statistic (no packet delivered) is NaN.
type Run struct {
	Cell
	Replicate    int
	Seed         uint64 // 0 when the table has no seed column
	Generated    int64
	Delivered    int64
	Dropped      int64
	LossRate     float64
	DeliveryMean float64 // s
	DeliveryP95  float64 // s
	Throughput   float64 // bit/s
	UtilMax      float64
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
}

// Data holds the result tables of one experiment folder.
type Data struct {
	Dir        string
	Experiment string
	Runs       []Run
	Series     []Bin
	Channels   []Channel
	Recoveries []Recovery
}

var dimCols = []string{"topology", "agent", "load", "failure", "replicate"}

func cellOf(t *table, i int) Cell {
	return Cell{Topology: t.s("topology", i), Agent: t.s("agent", i), Load: t.f("load", i), Failure: t.s("failure", i)}
}

// Load reads the result tables in dir. runs.parquet is required; the other
// tables are optional and read as empty when absent.
func Load(dir string) (*Data, error) {
	d := &Data{Dir: dir}
	rt, err := readTable(filepath.Join(dir, "runs.parquet"),
		append(slices.Clone(dimCols), "generated", "delivered", "dropped", "loss_rate", "delivery_mean_s", "delivery_p95_s"),
		[]string{"experiment", "seed", "throughput_bps", "util_max"})
	if err != nil {
		return nil, err
	}
	for i := range rt.rows {
		if d.Experiment == "" {
			d.Experiment = rt.s("experiment", i)
		}
		d.Runs = append(d.Runs, Run{
			Cell: cellOf(rt, i), Replicate: int(rt.i("replicate", i)), Seed: rt.bits("seed", i),
			Generated: rt.i("generated", i), Delivered: rt.i("delivered", i), Dropped: rt.i("dropped", i),
			LossRate: rt.f("loss_rate", i), DeliveryMean: rt.f("delivery_mean_s", i), DeliveryP95: rt.f("delivery_p95_s", i),
			Throughput: rt.f("throughput_bps", i), UtilMax: rt.f("util_max", i),
		})
	}
	st, err := readTable(filepath.Join(dir, "series.parquet"),
		append(slices.Clone(dimCols), "t_start_s", "t_end_s", "generated", "delivered", "dropped", "delivery_mean_s"),
		[]string{"delivery_p95_s", "util_max"})
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
			})
		}
	}
	lt, err := readTable(filepath.Join(dir, "links.parquet"),
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
	vt, err := readTable(filepath.Join(dir, "recoveries.parquet"),
		append(slices.Clone(dimCols), "at_s", "element", "action", "recovery_s"),
		[]string{"lost_packets"})
	if err != nil && !errors.Is(err, errNoFile) {
		return nil, err
	}
	if err == nil {
		for i := range vt.rows {
			d.Recoveries = append(d.Recoveries, Recovery{
				Cell: cellOf(vt, i), Replicate: int(vt.i("replicate", i)),
				At: vt.f("at_s", i), Element: vt.s("element", i), Action: vt.s("action", i),
				Lost: vt.i("lost_packets", i), Recovery: vt.f("recovery_s", i),
			})
		}
	}
	if len(d.Runs) == 0 {
		return nil, inputErr("report: %s: no runs", filepath.Join(dir, "runs.parquet"))
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
