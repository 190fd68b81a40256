package experiments

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"time"

	"hoplore/demands"
	"hoplore/internal/yamlx"
	"hoplore/sim"
)

// matrixFile reads the traffic-matrix file(s) of traffic.matrix and turns
// them into Traffic.Periods: one matrix, or a replay of consecutive ones.
func (c *checker) matrixFile(e *Experiment) error {
	t := &c.raw.Traffic
	m := t.Matrix.File
	tr := &e.Traffic
	if m.File.Set == m.Files.Set {
		return c.errf(m.Pos, "traffic.matrix: give file: PATH or files: [PATH, ...]")
	}
	var def *demands.Unit
	if m.Unit.Set {
		u, err := demands.ParseUnit(m.Unit.S)
		if err != nil {
			return c.errf(m.Unit.Pos, "traffic.matrix.unit: %v", err)
		}
		def = &u
	}
	speedup := 1.0
	if m.Speedup.Set {
		if !(m.Speedup.V > 0) || math.IsInf(m.Speedup.V, 0) {
			return c.errf(m.Speedup.Pos, "traffic.matrix.speedup: must be a positive number, got %g", m.Speedup.V)
		}
		speedup = m.Speedup.V
	}
	if m.Period.Set && m.Period.D <= 0 {
		return c.errf(m.Period.Pos, "traffic.matrix.period: must be positive, got %v", m.Period.D)
	}
	scale := 1.0
	if m.RateScale.Set {
		if t.Loads.Set {
			return c.errf(m.RateScale.Pos, "traffic.matrix.rate_scale: only without loads (with loads the file gives the shape and the load its scale)")
		}
		if !(m.RateScale.V > 0) || math.IsInf(m.RateScale.V, 0) {
			return c.errf(m.RateScale.Pos, "traffic.matrix.rate_scale: must be a positive number, got %g", m.RateScale.V)
		}
		scale = m.RateScale.V
	}
	read := func(name yamlx.String, field string) (*demands.Table, error) {
		if name.S == "" {
			return nil, c.errf(name.Pos, "%s: empty path", field)
		}
		p := c.files.resolve(c.file, name.S)
		data, err := c.files.read(p)
		if err != nil {
			return nil, c.errf(name.Pos, "%s: cannot read %q: %v", field, name.S, unwrapPathErr(err))
		}
		tb, err := demands.Read(p, data, def)
		if err != nil {
			return nil, err
		}
		return tb, nil
	}
	mean := tr.Size.Mean()
	convert := func(tb *demands.Table, rows []demands.Row) []Demand {
		out := make([]Demand, 0, len(rows))
		for _, r := range rows {
			out = append(out, Demand{From: r.Source, To: r.Target, Rate: r.Unit.PerSecond(r.Rate, mean) * scale,
				at: func(target bool, format string, args ...any) error { return tb.FieldErrorf(r, target, format, args...) }})
		}
		return out
	}
	compress := func(d time.Duration) sim.Time { return sim.FromSeconds(d.Seconds() / speedup) }
	switch {
	case m.Files.Set:
		if len(m.Files.Items) == 0 {
			return c.errf(m.Files.Pos, "traffic.matrix.files: list at least one file")
		}
		if !m.Period.Set {
			return c.errf(m.Files.Pos, "traffic.matrix.period: required with files: how long each file's matrix lasts (e.g. 5m)")
		}
		for i, f := range m.Files.Items {
			tb, err := read(f, fmt.Sprintf("traffic.matrix.files[%d]", i))
			if err != nil {
				return err
			}
			if tb.HasT {
				return c.errf(f.Pos, "traffic.matrix.files[%d]: %q has a t column; give a replay as one file with t or as a list of files without", i, f.S)
			}
			tr.Periods = append(tr.Periods, MatrixPeriod{At: compress(time.Duration(i) * m.Period.D), Demands: convert(tb, tb.Rows)})
		}
		// after the last file's period, nothing
		tr.Periods = append(tr.Periods, MatrixPeriod{At: compress(time.Duration(len(m.Files.Items)) * m.Period.D)})
		tr.Replay = true
	default:
		tb, err := read(m.File, "traffic.matrix.file")
		if err != nil {
			return err
		}
		if !tb.HasT {
			if m.Period.Set || m.Speedup.Set {
				p := m.Period.Pos
				if !m.Period.Set {
					p = m.Speedup.Pos
				}
				return c.errf(p, "traffic.matrix: period and speedup are for replays (a file with a t column, or files: [...]); %q has one matrix", m.File.S)
			}
			tr.Periods = []MatrixPeriod{{Demands: convert(tb, tb.Rows)}}
			break
		}
		// Rows with the same t form one matrix, in time order.
		rows := slices.Clone(tb.Rows)
		slices.SortStableFunc(rows, func(a, b demands.Row) int {
			switch {
			case a.T < b.T:
				return -1
			case a.T > b.T:
				return 1
			}
			return 0
		})
		for i := 0; i < len(rows); {
			j := i
			for j < len(rows) && rows[j].T == rows[i].T {
				j++
			}
			start := time.Duration(math.Round(rows[i].T * 1e9))
			if m.Period.Set && len(tr.Periods) > 0 {
				prev := time.Duration(math.Round(rows[i-1].T * 1e9))
				switch {
				case start-prev < m.Period.D:
					return tb.Errorf(rows[i], "t: overlapping periods: %v starts %v after the period at %v, which lasts period %v", start, start-prev, prev, m.Period.D)
				case start-prev > m.Period.D:
					// a gap: nothing between the two periods
					tr.Periods = append(tr.Periods, MatrixPeriod{At: compress(prev + m.Period.D)})
				}
			}
			tr.Periods = append(tr.Periods, MatrixPeriod{At: compress(start), Demands: convert(tb, rows[i:j])})
			i = j
		}
		if m.Period.Set {
			last := time.Duration(math.Round(rows[len(rows)-1].T * 1e9))
			tr.Periods = append(tr.Periods, MatrixPeriod{At: compress(last + m.Period.D)})
		}
		tr.Replay = true
	}
	tr.Absolute = !t.Loads.Set
	return nil
}

// matrixFilePeriods resolves the periods' node names on topology t into
// rate matrices (packets per second, before any load scaling).
func (c *checker) matrixFilePeriods(e *Experiment, t *Topology) error {
	N := len(t.Graph.Nodes)
	if b := ReplayBytes(len(e.Traffic.Periods), N); e.Traffic.Replay && b > MaxReplayBytes {
		return c.errf(c.at.traffic, "traffic.matrix: a replay of %d periods on topology %q (%d nodes) takes %.3g GB as dense matrices, each run a copy; at most %.3g GB: use fewer periods (a longer period, or fewer files) or a smaller topology",
			len(e.Traffic.Periods), t.Label, N, b/1e9, MaxReplayBytes/1e9)
	}
	index := make(map[string]int, N)
	for i, n := range t.Graph.Nodes {
		index[n.Name] = i
	}
	t.periods = make([][][]float64, len(e.Traffic.Periods))
	for k, p := range e.Traffic.Periods {
		m := make([][]float64, N)
		for i := range m {
			m[i] = make([]float64, N)
		}
		for _, d := range p.Demands {
			s, ok := index[d.From]
			if !ok {
				return d.at(false, "source: topology %q has no node %q", t.Label, d.From)
			}
			v, ok := index[d.To]
			if !ok {
				return d.at(true, "target: topology %q has no node %q", t.Label, d.To)
			}
			m[s][v] += d.Rate
		}
		t.periods[k] = m
	}
	if len(t.periods) == 0 {
		return errors.New("experiments: a matrix file without periods")
	}
	return nil
}
