package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/parquet-go/parquet-go"
)

// Synthetic result tables in the column layout of the results contract,
// written with parquet-go's typed writer. The numbers are invented (a
// smooth delay-versus-load shape with noise) and only serve the report.

type synRun struct {
	Experiment   string   `parquet:"experiment"`
	Topology     string   `parquet:"topology"`
	Agent        string   `parquet:"agent"`
	Load         float64  `parquet:"load"`
	Failure      string   `parquet:"failure"`
	Replicate    int64    `parquet:"replicate"`
	Seed         int64    `parquet:"seed"`
	RunID        string   `parquet:"run_id"`
	Generated    int64    `parquet:"generated"`
	Delivered    int64    `parquet:"delivered"`
	Dropped      int64    `parquet:"dropped"`
	InFlight     int64    `parquet:"in_flight"`
	LossRate     float64  `parquet:"loss_rate"`
	DeliveryMean *float64 `parquet:"delivery_mean_s,optional"`
	DeliveryP95  *float64 `parquet:"delivery_p95_s,optional"`
	Throughput   float64  `parquet:"throughput_bps"`
	UtilMax      float64  `parquet:"util_max"`
	OptDelay     *float64 `parquet:"opt_delay_mean_s,optional"`
	OptLimit     *float64 `parquet:"opt_load_limit,optional"`
}

type synBin struct {
	Experiment   string   `parquet:"experiment"`
	Topology     string   `parquet:"topology"`
	Agent        string   `parquet:"agent"`
	Load         float64  `parquet:"load"`
	Failure      string   `parquet:"failure"`
	Replicate    int64    `parquet:"replicate"`
	Seed         int64    `parquet:"seed"`
	RunID        string   `parquet:"run_id"`
	TStart       float64  `parquet:"t_start_s"`
	TEnd         float64  `parquet:"t_end_s"`
	Generated    int64    `parquet:"generated"`
	Delivered    int64    `parquet:"delivered"`
	Dropped      int64    `parquet:"dropped"`
	DeliveryMean *float64 `parquet:"delivery_mean_s,optional"`
	DeliveryP95  *float64 `parquet:"delivery_p95_s,optional"`
	UtilMax      float64  `parquet:"util_max"`
}

type synLink struct {
	Experiment string  `parquet:"experiment"`
	Topology   string  `parquet:"topology"`
	Agent      string  `parquet:"agent"`
	Load       float64 `parquet:"load"`
	Failure    string  `parquet:"failure"`
	Replicate  int64   `parquet:"replicate"`
	Seed       int64   `parquet:"seed"`
	RunID      string  `parquet:"run_id"`
	From       string  `parquet:"from"`
	To         string  `parquet:"to"`
	Bandwidth  float64 `parquet:"bandwidth_bps"`
	Delay      float64 `parquet:"delay_s"`
	Util       float64 `parquet:"util"`
	Packets    int64   `parquet:"packets"`
	DropQF     int64   `parquet:"dropped_queue_full"`
	DropLD     int64   `parquet:"dropped_link_down"`
	Down       float64 `parquet:"down_s"`
}

type synRecovery struct {
	Experiment string   `parquet:"experiment"`
	Topology   string   `parquet:"topology"`
	Agent      string   `parquet:"agent"`
	Load       float64  `parquet:"load"`
	Failure    string   `parquet:"failure"`
	Replicate  int64    `parquet:"replicate"`
	Seed       int64    `parquet:"seed"`
	RunID      string   `parquet:"run_id"`
	At         float64  `parquet:"at_s"`
	Element    string   `parquet:"element"`
	Action     string   `parquet:"action"`
	Lost       int64    `parquet:"lost_packets"`
	Recovery   *float64 `parquet:"recovery_s,optional"`
}

type synOptimum struct {
	Experiment string   `parquet:"experiment"`
	Topology   string   `parquet:"topology"`
	Load       float64  `parquet:"load"`
	Failure    string   `parquet:"failure"`
	State      int64    `parquet:"state"`
	TStart     float64  `parquet:"t_start_s"`
	TEnd       float64  `parquet:"t_end_s"`
	Down       string   `parquet:"down"`
	Unroutable float64  `parquet:"unroutable_share"`
	Unsent     float64  `parquet:"unsent_share"`
	States     string   `parquet:"states"`
	OptUtil    *float64 `parquet:"opt_util_max,optional"`
	OptLimit   *float64 `parquet:"opt_load_limit,optional"`
	OptDelay   *float64 `parquet:"opt_delay_mean_s,optional"`
}

// Synthetic model optimum: intact, the busiest channel at synOptUtil; with
// c–d cut (300 s to 450 s) it carries synCutFactor times more, and
// synCutUnroutable of the demand has no path.
const (
	synCutFactor     = 1.25
	synCutUnroutable = 0.04
)

func synOptUtil(load float64, ti int) float64 { return 0.8 * load * (1 + 0.1*float64(ti)) }

// synOptDelay is the optimum's mean delivery time at busiest utilisation u
// (nil when u ≥ 1: no stable routing).
func synOptDelay(u float64) *float64 {
	if u >= 1 {
		return nil
	}
	return ptr(0.9 * 0.012 / (1 - u))
}

// synSpec sizes a synthetic experiment.
type synSpec struct {
	topologies []string
	agents     []string
	loads      []float64
	failures   []string // "none" or "cut" (link c–d down at 300 s, up at 450 s)
	replicates int
	duration   float64
	bin        float64
	channels   int
	seed       uint64
}

var demoSpec = synSpec{
	topologies: []string{"two-region", "harbour-ring"},
	agents:     []string{"shortest-path", "q-routing lr=0.5", "central-adaptive"},
	loads:      []float64{0.2, 0.6, 1.0, 1.4},
	failures:   []string{"none", "cut"},
	replicates: 3, duration: 600, bin: 5, channels: 16, seed: 7,
}

var smallSpec = synSpec{
	topologies: []string{"two-region"},
	agents:     []string{"shortest-path", "q-routing"},
	loads:      []float64{0.5, 1.0},
	failures:   []string{"none", "cut"},
	replicates: 3, duration: 200, bin: 10, channels: 6, seed: 3,
}

func ptr(x float64) *float64 { return &x }

// writeSynthetic writes runs, series, links, recoveries and optimum tables into dir.
func writeSynthetic(t testing.TB, dir string, s synSpec) {
	t.Helper()
	rng := rand.New(rand.NewPCG(s.seed, 1))
	var runs []synRun
	var bins []synBin
	var links []synLink
	var recs []synRecovery
	var opt []synOptimum
	const base = 0.012 // s, zero-load delivery time
	for ti, topo := range s.topologies {
		for _, load := range s.loads {
			for _, fail := range s.failures {
				u := synOptUtil(load, ti)
				row := synOptimum{Experiment: "synthetic", Topology: topo, Load: load, Failure: fail, TEnd: s.duration,
					States: "all", OptUtil: ptr(u), OptLimit: ptr(load / u), OptDelay: synOptDelay(u)}
				if fail != "cut" {
					opt = append(opt, row)
					continue
				}
				cut, after := row, row
				row.TEnd = 300
				cut.State, cut.TStart, cut.TEnd, cut.Down, cut.Unroutable = 1, 300, 450, "c–d", synCutUnroutable
				cut.OptUtil, cut.OptLimit, cut.OptDelay = ptr(synCutFactor*u), ptr(load/(synCutFactor*u)), synOptDelay(synCutFactor*u)
				after.State, after.TStart = 2, 450
				opt = append(opt, row, cut, after)
			}
		}
	}
	for ti, topo := range s.topologies {
		for ai, ag := range s.agents {
			gain := []float64{1.0, 0.72, 0.86, 0.8}[ai%4] // effective utilisation factor
			for _, load := range s.loads {
				for _, fail := range s.failures {
					for rep := 0; rep < s.replicates; rep++ {
						seed := int64(1000*ti + 100*rep + int(load*10))
						runID := fmt.Sprintf("%s/%s/%g/%s/%d", topo, ag, load, fail, rep)
						rho := math.Min(load*gain*(1+0.1*float64(ti)), 0.985)
						delay := base / (1 - rho) * (1 + 0.05*rng.NormFloat64())
						loss := math.Max(0, load*gain-0.9) * 0.4 * (1 + 0.1*rng.NormFloat64())
						if fail == "cut" {
							delay *= 1.08
							loss += 0.002 * float64(ai+1)
						}
						gen := int64(20000 * load)
						drop := int64(math.Round(loss * float64(gen)))
						r := synRun{Experiment: "synthetic", Topology: topo, Agent: ag, Load: load, Failure: fail,
							Replicate: int64(rep), Seed: seed, RunID: runID, Generated: gen, Delivered: gen - drop - 3,
							Dropped: drop, InFlight: 3, LossRate: float64(drop) / float64(gen),
							DeliveryMean: ptr(delay), DeliveryP95: ptr(delay * (2.6 + 0.1*rng.NormFloat64())),
							Throughput: 8e3 * float64(gen-drop) / s.duration, UtilMax: rho}
						if ai == 1 && load == s.loads[0] && rep == 0 && fail == "none" {
							r.DeliveryP95 = nil // a null statistic must be skipped, not averaged
						}
						// The model optimum: the same in every run of a topology and
						// load, null where no routing keeps the channels stable.
						optUtil := synOptUtil(load, ti)
						r.OptLimit = ptr(load / optUtil)
						r.OptDelay = synOptDelay(optUtil)
						runs = append(runs, r)
						recovery := map[float64]float64{300: 15 + 10*float64(ai) + 3*rng.Float64(), 450: 8 + 4*float64(ai) + 2*rng.Float64()}
						for t0 := 0.0; t0 < s.duration-1e-9; t0 += s.bin {
							mid := t0 + s.bin/2
							d := delay * (1 + 0.03*rng.NormFloat64())
							l := loss
							if fail == "cut" {
								for at, rec := range recovery {
									if mid > at && mid < at+rec {
										d *= 1 + 1.5*(1-(mid-at)/rec)
										l += 0.05 * (1 - (mid-at)/rec)
									}
								}
							}
							g := int64(20000 * load * s.bin / s.duration)
							dr := int64(math.Round(l * float64(g)))
							b := synBin{Experiment: "synthetic", Topology: topo, Agent: ag, Load: load, Failure: fail,
								Replicate: int64(rep), Seed: seed, RunID: runID, TStart: t0, TEnd: t0 + s.bin,
								Generated: g, Delivered: g - dr, Dropped: dr, DeliveryMean: ptr(d), DeliveryP95: ptr(2.5 * d),
								UtilMax: math.Min(1, rho*(1+0.05*rng.NormFloat64()))}
							if g == dr {
								b.DeliveryMean, b.DeliveryP95 = nil, nil
							}
							bins = append(bins, b)
						}
						for c := 0; c < s.channels; c++ {
							a, z := c/2, (c/2+1)%(s.channels/2)
							from, to := fmt.Sprintf("n%d", a), fmt.Sprintf("n%d", z)
							if c%2 == 1 {
								from, to = to, from
							}
							u := math.Min(1, rho*math.Exp(-0.25*float64(c)*gain)*(1+0.05*rng.NormFloat64()))
							links = append(links, synLink{Experiment: "synthetic", Topology: topo, Agent: ag, Load: load, Failure: fail,
								Replicate: int64(rep), Seed: seed, RunID: runID, From: from, To: to, Bandwidth: 1e6, Delay: 0.002,
								Util: u, Packets: int64(u * 7.5e4), DropQF: int64(c % 3), DropLD: 0})
						}
						if fail == "cut" {
							for _, ev := range []struct {
								at     float64
								action string
							}{{300, "down"}, {450, "up"}} {
								rec := synRecovery{Experiment: "synthetic", Topology: topo, Agent: ag, Load: load, Failure: fail,
									Replicate: int64(rep), Seed: seed, RunID: runID, At: ev.at, Element: "c–d", Action: ev.action,
									Lost: int64(10 * (ai + 1) * (rep + 1)), Recovery: ptr(recovery[ev.at])}
								if ai == 2 && ev.action == "down" && rep == 1 {
									rec.Recovery = nil // never recovered
								}
								recs = append(recs, rec)
							}
						}
					}
				}
			}
		}
	}
	writeTable(t, filepath.Join(dir, "runs.parquet"), runs)
	writeTable(t, filepath.Join(dir, "series.parquet"), bins)
	writeTable(t, filepath.Join(dir, "links.parquet"), links)
	writeTable(t, filepath.Join(dir, "recoveries.parquet"), recs)
	writeTable(t, filepath.Join(dir, "optimum.parquet"), opt)
}

func writeTable[T any](t testing.TB, path string, rows []T) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w := parquet.NewGenericWriter[T](f)
	if _, err := w.Write(rows); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}
