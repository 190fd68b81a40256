package experiments

import (
	"math"

	"hoplore/demands"
	"hoplore/sim"
)

// conditions reads the conditions file, whose rows every run applies.
func (c *checker) conditions(e *Experiment) error {
	r := &c.raw.Conditions
	if !r.Set {
		return nil
	}
	if !r.File.Set || r.File.S == "" {
		return c.errf(pos(r.Pos), "conditions.file: required: a table of t, a, b and bandwidth, delay or loss (CSV or Parquet)")
	}
	scale := 1.0
	if r.BandwidthScale.Set {
		if !(r.BandwidthScale.V > 0) || math.IsInf(r.BandwidthScale.V, 0) {
			return c.errf(r.BandwidthScale.Pos, "conditions.bandwidth_scale: must be a positive number, got %g", r.BandwidthScale.V)
		}
		scale = r.BandwidthScale.V
	}
	p := c.files.resolve(c.file, r.File.S)
	data, err := c.files.read(p)
	if err != nil {
		return c.errf(r.File.Pos, "conditions.file: cannot read %q: %v", r.File.S, unwrapPathErr(err))
	}
	tab, err := demands.ReadConditions(p, data)
	if err != nil {
		return err
	}
	for _, row := range tab.Rows {
		e.Conditions = append(e.Conditions, Condition{
			At: sim.FromSeconds(row.T), A: row.A, B: row.B, Bandwidth: row.Bandwidth * scale,
			Delay: sim.FromSeconds(row.Delay), SetDelay: row.SetDelay, Loss: row.Loss, SetLoss: row.SetLoss,
			at: func(format string, args ...any) error { return tab.Errorf(row, format, args...) },
		})
	}
	return nil
}
