package experiments

import (
	"bytes"
	"math"
	"strconv"
	"strings"

	"hoplore/internal/yamlx"
	"hoplore/sim"
)

// FlowTraffic is an experiment's flow traffic (traffic.flows as a
// mapping). Flows go between the pairs of the traffic matrix, in its
// proportions.
type FlowTraffic struct {
	// Arrivals is the flows per second each source starts (absolute, the
	// same in every cell, on top of the packet traffic); 0 with Share.
	Arrivals float64
	// Share is the fraction of every cell's normalised load that flows
	// carry (the packets carry the rest: 1 means flow traffic alone); 0
	// with Arrivals.
	Share                    float64
	Size                     sim.SizeDist
	RateLimit                float64 // bit/s; 0 means the source's access rate
	PacketBytes              int     // 0 means sim.DefaultFlowPacketBytes
	MiceBytes, ElephantBytes float64 // 0 means the sim defaults
	// Sample is the most flows per run that flows.parquet records
	// (sim.FlowGen.Sample); 0 none. DefaultFlowSample when not given.
	Sample int
}

// DefaultFlowSample is traffic.flows.sample when not given: flows.parquet
// records every measured flow of a run up to this many, a uniform sample
// of this many beyond.
const DefaultFlowSample = 10_000

func (c *checker) flows(e *Experiment) error {
	g := c.raw.Traffic.Flows.Gen
	tr := &e.Traffic
	ft := &FlowTraffic{}
	switch {
	case g.Arrivals.Set && g.Share.Set:
		return c.errf(g.Share.Pos, "traffic.flows: give arrivals (flows per second per source) or share (of each cell's load), not both")
	case !g.Arrivals.Set && !g.Share.Set:
		return c.errf(g.Pos, "traffic.flows: arrivals (flows per second per source, e.g. 20/s) or share (of each cell's load, in (0, 1]) is required")
	case g.Arrivals.Set:
		if !(g.Arrivals.PerSecond > 0) || math.IsInf(g.Arrivals.PerSecond, 0) {
			return c.errf(g.Arrivals.Pos, "traffic.flows.arrivals: must be a positive rate, got %g/s", g.Arrivals.PerSecond)
		}
		ft.Arrivals = g.Arrivals.PerSecond
	default:
		if !(g.Share.V > 0 && g.Share.V <= 1) {
			return c.errf(g.Share.Pos, "traffic.flows.share: must be in (0, 1], got %g", g.Share.V)
		}
		if tr.Absolute {
			return c.errf(g.Share.Pos, "traffic.flows.share: needs traffic.loads (pairs with rates and no loads are absolute); use arrivals")
		}
		ft.Share = g.Share.V
	}
	if tr.Replay {
		return c.errf(g.Pos, "traffic.flows: flow traffic does not follow a replay of traffic matrices")
	}
	if g.RateLimit.Set {
		if !(g.RateLimit.BPS > 0) || math.IsInf(g.RateLimit.BPS, 0) {
			return c.errf(g.RateLimit.Pos, "traffic.flows.rate_limit: must be a positive bandwidth")
		}
		ft.RateLimit = g.RateLimit.BPS
	}
	if g.PacketBytes.Set {
		if g.PacketBytes.V < 1 || g.PacketBytes.V > 1<<24 {
			return c.errf(g.PacketBytes.Pos, "traffic.flows.packet_bytes: must be in 1..16777216, got %d", g.PacketBytes.V)
		}
		ft.PacketBytes = g.PacketBytes.V
	}
	if g.MiceBytes.Set {
		if !(g.MiceBytes.V > 0) || math.IsInf(g.MiceBytes.V, 0) {
			return c.errf(g.MiceBytes.Pos, "traffic.flows.mice_bytes: must be positive, got %g", g.MiceBytes.V)
		}
		ft.MiceBytes = g.MiceBytes.V
	}
	if g.ElephantBytes.Set {
		mice := ft.MiceBytes
		if mice == 0 {
			mice = sim.DefaultMiceBytes
		}
		if !(g.ElephantBytes.V >= mice) || math.IsInf(g.ElephantBytes.V, 0) {
			return c.errf(g.ElephantBytes.Pos, "traffic.flows.elephant_bytes: must be at least mice_bytes (%g), got %g", mice, g.ElephantBytes.V)
		}
		ft.ElephantBytes = g.ElephantBytes.V
	}
	ft.Sample = DefaultFlowSample
	if g.Sample.Set {
		if g.Sample.V < 0 || g.Sample.V > 1<<24 {
			return c.errf(g.Sample.Pos, "traffic.flows.sample: must be in 0..16777216 (flows recorded per run; 0 records none), got %d", g.Sample.V)
		}
		ft.Sample = g.Sample.V
	}
	d, err := c.flowSize(g)
	if err != nil {
		return err
	}
	ft.Size = d
	tr.FlowGen = ft
	return nil
}

// flowSize checks traffic.flows.size.
func (c *checker) flowSize(g *flowGenYAML) (sim.SizeDist, error) {
	s := &g.Size
	if !s.Set {
		return sim.SizeDist{}, c.errf(g.Pos, "traffic.flows.size: required: {dist: pareto, shape, mean_bytes}, {dist: lognormal, mu, sigma}, {dist: mix, classes: [{fraction, bytes}, ...]}, {dist: cdf, file} or {dist: fixed, bytes}")
	}
	all := []distField{
		{"bytes", s.Bytes.Set, s.Bytes.Pos},
		{"mean_bytes", s.MeanBytes.Set, s.MeanBytes.Pos},
		{"shape", s.Shape.Set, s.Shape.Pos},
		{"mu", s.Mu.Set, s.Mu.Pos},
		{"sigma", s.Sigma.Set, s.Sigma.Pos},
		{"classes", s.Classes.Set, s.Classes.Pos},
		{"file", s.File.Set, s.File.Pos},
	}
	var want []string
	switch s.Dist.S {
	case "fixed":
		want = []string{"bytes"}
	case "pareto":
		want = []string{"shape", "mean_bytes"}
	case "lognormal":
		want = []string{"mu", "sigma"}
	case "mix":
		want = []string{"classes"}
	case "cdf":
		want = []string{"file"}
	case "":
		return sim.SizeDist{}, c.errf(orPos(s.Dist.Pos, s.Pos), "traffic.flows.size.dist: required (fixed, pareto, lognormal, mix or cdf)")
	default:
		return sim.SizeDist{}, c.errf(s.Dist.Pos, "traffic.flows.size.dist: unknown distribution %q (known: fixed, pareto, lognormal, mix, cdf)", s.Dist.S)
	}
	if err := c.distFields("traffic.flows.size", s.Dist.S, s.Pos, all, want); err != nil {
		return sim.SizeDist{}, err
	}
	finite := func(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
	switch s.Dist.S {
	case "fixed":
		if !(s.Bytes.V >= 1) || s.Bytes.V > 1<<50 || s.Bytes.V != math.Trunc(s.Bytes.V) {
			return sim.SizeDist{}, c.errf(s.Bytes.Pos, "traffic.flows.size.bytes: must be a whole number of bytes, at least 1, got %g", s.Bytes.V)
		}
		return sim.SizeDist{Kind: sim.Classes, Classes: []sim.SizeClass{{Fraction: 1, Bytes: s.Bytes.V}}}, nil
	case "pareto":
		if !(s.Shape.V > 1) || !finite(s.Shape.V) {
			return sim.SizeDist{}, c.errf(s.Shape.Pos, "traffic.flows.size.shape: must exceed 1 (the mean size is infinite otherwise), got %g", s.Shape.V)
		}
		if !(s.MeanBytes.V > 0) || !finite(s.MeanBytes.V) {
			return sim.SizeDist{}, c.errf(s.MeanBytes.Pos, "traffic.flows.size.mean_bytes: must be positive, got %g", s.MeanBytes.V)
		}
		return sim.SizeDist{Kind: sim.Pareto, Shape: s.Shape.V, MeanBytes: s.MeanBytes.V}, nil
	case "lognormal":
		if !finite(s.Mu.V) || math.Abs(s.Mu.V) > 40 {
			return sim.SizeDist{}, c.errf(s.Mu.Pos, "traffic.flows.size.mu: must be in [-40, 40] (the mean of ln bytes), got %g", s.Mu.V)
		}
		if !(s.Sigma.V >= 0) || s.Sigma.V > 10 {
			return sim.SizeDist{}, c.errf(s.Sigma.Pos, "traffic.flows.size.sigma: must be in [0, 10], got %g", s.Sigma.V)
		}
		return sim.SizeDist{Kind: sim.Lognormal, Mu: s.Mu.V, Sigma: s.Sigma.V}, nil
	case "mix":
		if len(s.Classes.Items) == 0 {
			return sim.SizeDist{}, c.errf(s.Classes.Pos, "traffic.flows.size.classes: list at least one {fraction, bytes}")
		}
		d := sim.SizeDist{Kind: sim.Classes}
		var sum float64
		for i, k := range s.Classes.Items {
			if !k.Fraction.Set || !k.Bytes.Set {
				return sim.SizeDist{}, c.errf(k.Pos, "traffic.flows.size.classes[%d]: fraction and bytes are required", i)
			}
			if !(k.Fraction.V >= 0 && k.Fraction.V <= 1) {
				return sim.SizeDist{}, c.errf(k.Fraction.Pos, "traffic.flows.size.classes[%d].fraction: must be in [0, 1], got %g", i, k.Fraction.V)
			}
			if !(k.Bytes.V >= 1) || !finite(k.Bytes.V) {
				return sim.SizeDist{}, c.errf(k.Bytes.Pos, "traffic.flows.size.classes[%d].bytes: must be at least 1 byte, got %g", i, k.Bytes.V)
			}
			sum += k.Fraction.V
			d.Classes = append(d.Classes, sim.SizeClass{Fraction: k.Fraction.V, Bytes: k.Bytes.V})
		}
		if math.Abs(sum-1) > 1e-9 {
			return sim.SizeDist{}, c.errf(s.Classes.Pos, "traffic.flows.size.classes: fractions add up to %g, not 1", sum)
		}
		return d, nil
	default: // cdf
		if s.File.S == "" {
			return sim.SizeDist{}, c.errf(s.File.Pos, "traffic.flows.size.file: empty path")
		}
		p := c.files.resolve(c.file, s.File.S)
		data, err := c.files.read(p)
		if err != nil {
			return sim.SizeDist{}, c.errf(s.File.Pos, "traffic.flows.size.file: cannot read %q: %v", s.File.S, unwrapPathErr(err))
		}
		pts, err := ReadSizeCDF(p, data)
		if err != nil {
			return sim.SizeDist{}, err
		}
		return sim.SizeDist{Kind: sim.Empirical, CDF: pts}, nil
	}
}

// ReadSizeCDF reads a flow-size CDF file named file: CSV lines
// "bytes,probability" (an optional first line of column names; blank lines
// and lines starting with # are skipped), both strictly increasing, the
// probabilities in (0, 1] and the last exactly 1. Errors name FILE:LINE:COL.
func ReadSizeCDF(file string, data []byte) ([]sim.CDFPoint, error) {
	var pts []sim.CDFPoint
	lines := bytes.Split(data, []byte("\n"))
	first := true
	var lastAt yamlx.Pos
	for i, raw := range lines {
		line := strings.TrimRight(string(raw), "\r")
		trimmed := strings.TrimSpace(line)
		if trimmed == "" || strings.HasPrefix(trimmed, "#") {
			continue
		}
		ln := i + 1
		cols := strings.Split(line, ",")
		at := func(k int) yamlx.Pos {
			col := 1
			for j := 0; j < k && j < len(cols); j++ {
				col += len(cols[j]) + 1
			}
			return yamlx.Pos{Line: ln, Col: col}
		}
		if len(cols) != 2 {
			return nil, yamlx.Errorf(file, at(0), "size cdf: a line is bytes,probability; got %d fields", len(cols))
		}
		b, errB := strconv.ParseFloat(strings.TrimSpace(cols[0]), 64)
		if first && errB != nil {
			first = false // column names
			continue
		}
		first = false
		if errB != nil || !(b > 0) || math.IsInf(b, 0) {
			return nil, yamlx.Errorf(file, at(0), "size cdf: bytes: must be a positive number, got %q", strings.TrimSpace(cols[0]))
		}
		q, errP := strconv.ParseFloat(strings.TrimSpace(cols[1]), 64)
		if errP != nil || !(q > 0 && q <= 1) {
			return nil, yamlx.Errorf(file, at(1), "size cdf: probability: must be in (0, 1], got %q", strings.TrimSpace(cols[1]))
		}
		if n := len(pts); n > 0 {
			if b <= pts[n-1].Bytes {
				return nil, yamlx.Errorf(file, at(0), "size cdf: bytes: must increase from line to line (%g after %g)", b, pts[n-1].Bytes)
			}
			if q <= pts[n-1].P {
				return nil, yamlx.Errorf(file, at(1), "size cdf: probability: must increase from line to line (%g after %g)", q, pts[n-1].P)
			}
		}
		pts = append(pts, sim.CDFPoint{Bytes: b, P: q})
		lastAt = at(1)
	}
	if len(pts) == 0 {
		return nil, yamlx.Errorf(file, yamlx.Pos{Line: 1, Col: 1}, "size cdf: no bytes,probability lines")
	}
	if q := pts[len(pts)-1].P; q != 1 {
		return nil, yamlx.Errorf(file, lastAt, "size cdf: probability: the last line must reach 1, got %g", q)
	}
	return pts, nil
}
