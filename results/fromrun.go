package results

import (
	"fmt"
	"math"

	"hoplore/sim"
	"hoplore/stats"
)

// FromRun converts one run's Result into rows of every per-run table. d are
// the run's dimensions, net and cfg what it ran on, wall its wall-clock time
// in seconds, version the tool version. Means and rates of nothing (no
// delivered or no generated packet) are null. FromRun panics if r does not
// belong to net (a programming mistake). Cost: O(channels + bins + events·bins).
func FromRun(d Dims, net *sim.Net, cfg *sim.Config, r *sim.Result, wall float64, version string) *RunTables {
	if len(r.Channels) != len(net.Channels) {
		panic(fmt.Sprintf("results: result has %d channels, net has %d", len(r.Channels), len(net.Channels)))
	}
	t := &RunTables{}
	run := &t.Run
	run.Dims = d
	run.Nodes = net.NumNodes()
	run.Links = len(net.Graph.Links)
	run.DurationS = cfg.Duration.Seconds()
	run.WarmupS = cfg.Warmup.Seconds()
	run.BinS = cfg.Bin.Seconds()
	run.Generated = r.Generated
	run.Delivered = r.Delivered
	run.Dropped = r.DroppedTotal()
	run.InFlight = r.InFlight
	run.DroppedQueueFull = r.Dropped[sim.QueueFull]
	run.DroppedLinkDown = r.Dropped[sim.LinkDown]
	run.DroppedLinkLoss = r.Dropped[sim.LinkLoss]
	run.DroppedNoRoute = r.Dropped[sim.NoRouteDrop]
	run.DroppedHopLimit = r.Dropped[sim.HopLimit]
	run.DroppedNodeDown = r.Dropped[sim.NodeDown]
	run.LossRate = ratio(float64(run.Dropped), r.Generated)
	run.DroppedUnreachable = r.DroppedUnreachable()
	run.LossRateReachable = ratio(float64(run.Dropped-run.DroppedUnreachable), r.Generated-run.DroppedUnreachable)
	run.DeliveryMeanS = ratio(r.DeliverySum, r.Delivered)
	run.DeliveryMeanSCI95, run.DeliveryMeanCIMethod = runInterval(&r.DeliveryBatches)
	at, how := DetectWarmup(beforeFailures(r.Series, r.Failures))
	run.WarmupDetectedS, run.WarmupDetection = finite(at), how
	if r.Delivered > 0 {
		run.DeliveryMaxS = f64(r.DeliveryMax)
	}
	run.DeliveryP50S = quantile(r.Delivery, 0.50)
	run.DeliveryP95S = quantile(r.Delivery, 0.95)
	run.DeliveryP99S = quantile(r.Delivery, 0.99)
	run.HopsMean = ratio(float64(r.HopsSum), r.Delivered)
	run.StretchMean = ratio(r.StretchSum, r.Delivered)
	if w := (cfg.Duration - cfg.Warmup).Seconds(); w > 0 {
		run.ThroughputBps = r.DeliveredBits / w
	}
	for i := range r.Channels {
		u := r.Channels[i].Util
		run.UtilMean += u
		run.UtilMax = max(run.UtilMax, u)
	}
	if n := len(r.Channels); n > 0 {
		run.UtilMean /= float64(n)
	}
	run.ControlPackets = r.ControlPackets
	run.ControlBytes = r.ControlBytes
	run.ControlDropped = r.ControlDropped
	run.RouteChanges = r.RouteChanges
	if f := r.Flows; f != nil {
		flowColumns(run, f)
	}
	run.FailureEvents = len(r.Failures)
	run.Events = r.Events
	run.WallS = wall
	run.Version = version

	t.Series = makeRows[SeriesRow](len(r.Series))
	for i := range r.Series {
		b := &r.Series[i]
		t.Series[i] = SeriesRow{
			Dims:          d,
			Bin:           i,
			TStartS:       b.Start.Seconds(),
			TEndS:         b.End.Seconds(),
			Generated:     b.Generated,
			Delivered:     b.Delivered,
			Dropped:       b.Dropped,
			LossRate:      ratio(float64(b.Dropped), b.Generated),
			DeliveryMeanS: ratio(b.DelaySum, b.Delivered),
			DeliveryP95S:  quantile(b.Delivery, 0.95),
			UtilMax:       b.UtilMax,
			RouteChanges:  b.RouteChanges,
		}
	}

	t.Links = makeRows[LinkRow](len(net.Channels))
	for i := range net.Channels {
		c := &net.Channels[i]
		cr := &r.Channels[i]
		t.Links[i] = LinkRow{
			Dims:             d,
			Channel:          c.ID,
			Link:             c.Link,
			From:             net.Name(c.From),
			To:               net.Name(c.To),
			BandwidthBps:     c.Bandwidth,
			DelayS:           c.Delay.Seconds(),
			Util:             cr.Util,
			Packets:          cr.Packets,
			DroppedQueueFull: cr.DroppedQueueFull,
			DroppedLinkDown:  cr.DroppedLinkDown,
			DroppedLinkLoss:  cr.DroppedLinkLoss,
			DownS:            cr.Down.Seconds(),
		}
	}

	if r.Flows != nil {
		t.Flows = flowRows(d, net, r.Flows.Sample)
	}
	t.Recoveries = makeRows[RecoveryRow](len(r.Failures))
	for k := range r.Failures {
		ev := &r.Failures[k]
		rec := Recover(r.Series, r.Failures, k, cfg.Warmup)
		row := RecoveryRow{
			Dims:        d,
			Event:       k,
			AtS:         ev.At.Seconds(),
			Element:     ev.Element,
			Action:      "down",
			LostPackets: rec.LostPackets,
			WindowEndS:  rec.WindowEnd.Seconds(),
		}
		if ev.Up {
			row.Action = "up"
		}
		if rec.Recovered {
			row.RecoveryS = f64(rec.RecoveryS)
		}
		if rec.PreOK {
			row.PreDeliveryMeanS = f64(rec.PreDeliveryMean)
			row.PreLossRate = f64(rec.PreLossRate)
		}
		if k < len(r.Outcomes) {
			o := &r.Outcomes[k]
			row.LostReachable, row.LostUnreachable, row.LostQueueFull = o.LostReachable, o.LostUnreachable, o.LostQueueFull
			if o.LastReachable >= 0 {
				row.ReconnectS = max(0, (o.LastReachable - ev.At).Seconds())
			}
		}
		if rec.Settled {
			row.SettleS = f64(rec.SettleS)
		}
		if rec.NewOK {
			row.NewDeliveryMeanS = f64(rec.NewDeliveryMean)
		}
		if v, ok := rec.DelayRatio(); ok {
			row.DelayRatio = f64(v)
		}
		if rec.PeakOK {
			row.PeakDelayS = f64(rec.PeakDeliveryMean)
		}
		t.Recoveries[k] = row
	}
	return t
}

// runInterval returns the half-width of the 95% batch-means interval for
// the mean of the series kept in b (stats.RunInterval) and the method that
// made it, "batch means: K batches of M packets"; nil and a reason when
// there is none.
func runInterval(b *sim.Batches) (*float64, string) {
	means, size := b.Means()
	iv, err := stats.RunInterval(means, 0.95)
	switch {
	case len(means) < stats.MinBatches:
		return nil, "none: too few packets delivered"
	case err != nil:
		return nil, "none: batch means correlated (run too short)"
	}
	return finite(iv.Half), fmt.Sprintf("batch means: %d batches of %d packets", iv.Batches, int64(iv.Size)*size)
}

// makeRows returns n zero rows, nil for none (as parts read back).
func makeRows[T any](n int) []T {
	if n == 0 {
		return nil
	}
	return make([]T, n)
}

// ratio returns num/den, or nil when den is 0 or the ratio is not finite.
func ratio(num float64, den int64) *float64 {
	if den == 0 {
		return nil
	}
	return finite(num / float64(den))
}

func quantile(h *sim.Histogram, p float64) *float64 {
	if h == nil || h.Count() == 0 {
		return nil
	}
	return finite(h.Quantile(p))
}

func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// flowRows returns the rows of flows.parquet of a run's sampled flows.
func flowRows(d Dims, net *sim.Net, sample []sim.FlowRecord) []FlowRow {
	rows := makeRows[FlowRow](len(sample))
	for i := range sample {
		f := &sample[i]
		row := FlowRow{
			Dims:             d,
			FlowID:           f.ID,
			Source:           net.Name(f.Src),
			Destination:      net.Name(f.Dst),
			SizeBytes:        f.Size,
			Class:            f.Class.String(),
			StartS:           f.Start.Seconds(),
			Packets:          int64(f.Packets),
			DeliveredPackets: int64(f.Delivered),
			ReorderedPackets: int64(f.Reordered),
			Outcome:          f.Outcome.String(),
		}
		if f.Ideal >= 0 {
			row.IdealFCTS = f64(f.Ideal.Seconds())
		}
		if f.Outcome == sim.FlowCompleted {
			fct := (f.End - f.Start).Seconds()
			row.EndS, row.FCTS = f64(f.End.Seconds()), f64(fct)
			if f.Ideal > 0 {
				row.Slowdown = f64(fct / f.Ideal.Seconds())
			}
		}
		rows[i] = row
	}
	return rows
}

// flowColumns fills the flow-traffic columns of run from f.
func flowColumns(run *RunRow, f *sim.FlowResult) {
	run.FlowsStarted, run.FlowsCompleted, run.FlowsFailed = f.Started, f.Completed, f.Failed
	fct, sd := sim.NewHistogram(), sim.NewHistogram()
	var fctSum, sdSum float64
	for k := range f.Classes {
		c := &f.Classes[k]
		if c.FCT != nil {
			fct.Merge(c.FCT)
			sd.Merge(c.Slowdown)
		}
		fctSum += c.FCTSum
		sdSum += c.SlowdownSum
	}
	run.FCTMeanS = ratio(fctSum, f.Completed)
	run.FCTP99S = quantile(fct, 0.99)
	run.SlowdownMean = ratio(sdSum, sd.Count())
	run.SlowdownP99 = quantile(sd, 0.99)
	mice, el := &f.Classes[sim.Mice], &f.Classes[sim.Elephant]
	run.FCTMiceMeanS = ratio(mice.FCTSum, mice.Completed)
	run.FCTElephantMeanS = ratio(el.FCTSum, el.Completed)
	if mice.Slowdown != nil {
		run.SlowdownMiceMean = ratio(mice.SlowdownSum, mice.Slowdown.Count())
		run.SlowdownElephantMean = ratio(el.SlowdownSum, el.Slowdown.Count())
	}
	run.CompletedShare = ratio(float64(f.Completed), f.Started)
	run.CompletedMiceShare = ratio(float64(mice.Completed), mice.Started)
	run.CompletedElephantShare = ratio(float64(el.Completed), el.Started)
	run.ReorderedFraction = ratio(float64(f.Reordered), f.Delivered)
}

// beforeFailures returns the bins of series that end by the first failure
// event applied (all of them without failures, plus the bin after, which
// DetectWarmup leaves out as the last): a failure starts a transient of
// its own, the subject of recoveries.parquet, not a sign of a short
// warm-up, and a run with a failure mid-run would otherwise read as one
// that never settled.
func beforeFailures(series []sim.Bin, failures []sim.FailureEvent) []sim.Bin {
	if len(failures) == 0 {
		return series
	}
	first := failures[0].At
	for _, f := range failures[1:] {
		first = min(first, f.At)
	}
	n := 0
	for n < len(series) && series[n].End <= first {
		n++
	}
	return series[:min(n+1, len(series))]
}
