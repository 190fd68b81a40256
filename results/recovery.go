package results

import (
	"math"

	"hoplore/sim"
)

// Recovery band parameters; see Recover.
const (
	// PreBins is the most bins the pre-event level is taken over.
	PreBins = 10
	// RecoveredBins is how many bins in a row must lie within the band.
	RecoveredBins = 3
	// DeliveryRelBand is the band's smallest width above the pre-event mean
	// delivery time, relative to that mean.
	DeliveryRelBand = 0.25
	// LossAbsBand is the band's smallest width above the pre-event loss
	// rate, as an absolute rate.
	LossAbsBand = 0.01
	// BandSDs is the band's width in bin-to-bin standard deviations of the
	// pre-event bins, when that is wider than the floors above.
	BandSDs = 3
)

// Recovery is what Recover measured for one failure event.
type Recovery struct {
	// LostPackets counts the dropped packets among those generated in the
	// bins from the event's bin up to the recovery (or to the end of the
	// window when it never recovers).
	LostPackets int64
	// Recovered reports whether the band was reached; RecoveryS is then the
	// recovery time in seconds.
	Recovered bool
	RecoveryS float64
	// The pre-event level and the band's upper edges; PreOK is false when
	// no bin qualified for the pre-event level (then Recovered is false).
	PreOK           bool
	PreDeliveryMean float64 // seconds
	PreLossRate     float64
	MaxDeliveryMean float64 // seconds
	MaxLossRate     float64
	// WindowEnd is where the search stopped: the next event's time, or the
	// end of the last bin.
	WindowEnd sim.Time

	// The post-event level (see Recover): NewOK is false when the window is
	// shorter than SettleMinBins or its second half delivered nothing.
	NewOK           bool
	NewDeliveryMean float64 // seconds
	// Settled reports whether delivery time settled at the new level within
	// the first half of the window; SettleS is then the settle time in
	// seconds.
	Settled bool
	SettleS float64
	// PeakOK is false when no window bin delivered a packet; PeakDeliveryMean
	// is then undefined.
	PeakOK           bool
	PeakDeliveryMean float64 // seconds, the largest bin mean in the window
}

// SettleMinBins is the fewest window bins a post-event level is taken
// from; see Recover.
const SettleMinBins = 2 * RecoveredBins

// DelayRatio returns the new level over the pre-event level of delivery
// time, and whether both exist.
func (rec *Recovery) DelayRatio() (float64, bool) {
	if !rec.NewOK || !rec.PreOK || rec.PreDeliveryMean <= 0 {
		return 0, false
	}
	return rec.NewDeliveryMean / rec.PreDeliveryMean, true
}

// reachableLoss returns a bin's loss rate over its reachable packets (see
// sim.Result.Unreachable), and false when it generated no reachable packet.
func reachableLoss(b *sim.Bin) (float64, bool) {
	gen := b.Generated - b.Unreachable
	if gen <= 0 {
		return 0, false
	}
	return float64(b.Dropped-b.Unreachable) / float64(gen), true
}

// Recover measures the recovery from failures[k] in a run's time series.
// failures must be sorted by time; series bins are contiguous and in order;
// warmup is the run's warm-up time.
//
// Definitions (each a design choice of hoplore, common practice in spirit:
// a level, a noise band, and a persistence rule against lucky bins):
//
//   - The event's bin e is the first bin ending after the event time t.
//     Bins count packets by generation time, so bin e may still hold packets
//     sent before the event.
//   - Pre-event level: over the at most PreBins bins just before bin e that
//     start at or after the warm-up and at or after the previous event (so
//     that the level is not an earlier disturbance's). If none starts after
//     the warm-up, the warm-up condition is dropped. The level is the pooled
//     mean delivery time D0 = ΣDelaySum/ΣDelivered and the pooled reachable
//     loss rate L0 = Σ(Dropped − Unreachable)/Σ(Generated − Unreachable)
//     (a packet whose destination is down or cut off is a loss no routing
//     can recover: see sim.Result.Unreachable); sD and sL are the sample standard
//     deviations of the per-bin mean delivery times and loss rates (0 with
//     fewer than two bins).
//   - Band: a bin is within it when its reachable loss rate is at most
//     L0 + max(LossAbsBand, BandSDs·sL) and its mean delivery time is at most
//     D0 + max(DeliveryRelBand·D0, BandSDs·sD). A bin with no generated reachable
//     packet is within the band (no evidence either way); a bin with
//     generated but no delivered packets is not. The band is one-sided: a
//     bin faster or less lossy than before is not a disturbance, and after
//     an "up" event the network usually settles to a better level than the
//     degraded one before it, which a two-sided band would report as never
//     recovered. The relative floor (25%) keeps histogram and bin noise at
//     light load from counting as disturbance; the 3 s.d. term widens the
//     band near saturation, where 5 s bins of queueing delay vary by more
//     than that; the 1% loss floor keeps a loss-free baseline from turning
//     a single drop into a disturbance.
//   - Window: the bins from e that end no later than the next event (by
//     time) or the end of the series. Recovery is the first bin r of the
//     first run of RecoveredBins window bins in a row within the band;
//     recovery_s = max(0, start of r − t). Its resolution is one bin; 0
//     means the event's own bin was already within the band.
//   - lost_packets: the dropped packets among those generated in bins e to
//     r−1, always including bin e (packets queued on a failing element are
//     lost there even when the bin stays within the band); when never
//     recovered, in every window bin. It counts baseline drops in those
//     bins too (compare pre_loss_rate), and unreachable ones. Events sharing
//     a bin share it.
//
// recovery_s answers "back to the old level?"; after a failure that leaves a
// longer path the answer is rightly never. The settle time answers "stable
// at the new level, whatever it is?":
//
//   - New level: over the window bins e..end−1 (n of them); with
//     n < SettleMinBins there is none (too short to tell a level from a
//     transient). The second half of the window, bins m = e + ⌊n/2⌋ ..
//     end−1, is taken as the post-event steady state: D1 = ΣDelaySum/
//     ΣDelivered over them (none if they delivered nothing), s1 the sample
//     standard deviation of their bin means.
//   - Settle band: a bin is within it when |mean − D1| ≤ max(DeliveryRelBand·D1,
//     BandSDs·s1), two-sided since a new level may lie above or below; a bin
//     with no generated packet is within it, one with generated but no
//     delivered packets is not.
//   - Settle bin: the first bin j ≥ e from which every window bin to end−1 is
//     within the settle band; settle_s = max(0, start of j − t). When j > m
//     (the level itself was still moving) it did not settle: null.
//   - delay_ratio = D1/D0; peak_delay_s is the largest bin mean delivery
//     time over the window bins.
//
// Cost: O(len(series)).
func Recover(series []sim.Bin, failures []sim.FailureEvent, k int, warmup sim.Time) Recovery {
	t := failures[k].At
	prevAt := sim.Time(math.MinInt64)
	for j := k - 1; j >= 0; j-- {
		if failures[j].At < t {
			prevAt = failures[j].At
			break
		}
	}
	nextAt := sim.Time(math.MaxInt64)
	for j := k + 1; j < len(failures); j++ {
		if failures[j].At > t {
			nextAt = failures[j].At
			break
		}
	}
	var rec Recovery
	rec.WindowEnd = t
	if len(series) > 0 {
		rec.WindowEnd = min(nextAt, max(t, series[len(series)-1].End))
	}
	e := 0
	for e < len(series) && series[e].End <= t {
		e++
	}
	if e == len(series) {
		return rec
	}

	lo := max(0, e-PreBins)
	first := e
	for j := e - 1; j >= lo && series[j].Start >= prevAt && series[j].Start >= warmup; j-- {
		first = j
	}
	if first == e { // nothing after the warm-up: drop that condition
		for j := e - 1; j >= lo && series[j].Start >= prevAt; j-- {
			first = j
		}
	}
	rec.PreOK = rec.pre(series[first:e])

	// window: bins e..end-1
	end := e
	for end < len(series) && series[end].End <= nextAt {
		end++
	}
	stop := end // first bin past the disturbance
	if rec.PreOK {
		run := 0
		for j := e; j < end; j++ {
			if !rec.inBand(&series[j]) {
				run = 0
				continue
			}
			run++
			if run == RecoveredBins {
				r := j - RecoveredBins + 1
				rec.Recovered = true
				rec.RecoveryS = max(0, (series[r].Start - t).Seconds())
				stop = r
				break
			}
		}
	}
	stop = max(stop, e+1)
	for j := e; j < stop; j++ {
		rec.LostPackets += series[j].Dropped
	}
	rec.settle(series[e:end], t)
	return rec
}

// settle sets the post-event level, settle time and peak from the window
// bins w of the event at t; see Recover.
func (rec *Recovery) settle(w []sim.Bin, t sim.Time) {
	for i := range w {
		if w[i].Delivered > 0 {
			if m := w[i].DeliveryMean(); !rec.PeakOK || m > rec.PeakDeliveryMean {
				rec.PeakDeliveryMean = m
			}
			rec.PeakOK = true
		}
	}
	n := len(w)
	if n < SettleMinBins {
		return
	}
	m := n / 2
	var del int64
	var sum float64
	var ms []float64
	for i := m; i < n; i++ {
		del += w[i].Delivered
		sum += w[i].DelaySum
		if w[i].Delivered > 0 {
			ms = append(ms, w[i].DeliveryMean())
		}
	}
	if del == 0 {
		return
	}
	rec.NewOK = true
	rec.NewDeliveryMean = sum / float64(del)
	half := max(DeliveryRelBand*rec.NewDeliveryMean, BandSDs*sampleSD(ms))
	j := n // first bin of the in-band run that reaches the end
	for i := n - 1; i >= 0; i-- {
		b := &w[i]
		if b.Generated > 0 && (b.Delivered == 0 || math.Abs(b.DeliveryMean()-rec.NewDeliveryMean) > half) {
			break
		}
		j = i
	}
	if j > m {
		return
	}
	rec.Settled = true
	rec.SettleS = max(0, (w[j].Start - t).Seconds())
}

// pre sets the pre-event level and band from the bins pre; false if they
// hold no delivered packet.
func (rec *Recovery) pre(pre []sim.Bin) bool {
	var gen, del, drop int64
	var sum float64
	var ds, ls []float64
	for i := range pre {
		b := &pre[i]
		gen += b.Generated - b.Unreachable
		del += b.Delivered
		drop += b.Dropped - b.Unreachable
		sum += b.DelaySum
		if b.Delivered > 0 {
			ds = append(ds, b.DeliveryMean())
		}
		if l, ok := reachableLoss(b); ok {
			ls = append(ls, l)
		}
	}
	if del == 0 || gen <= 0 {
		return false
	}
	rec.PreDeliveryMean = sum / float64(del)
	rec.PreLossRate = float64(drop) / float64(gen)
	rec.MaxDeliveryMean = rec.PreDeliveryMean + max(DeliveryRelBand*rec.PreDeliveryMean, BandSDs*sampleSD(ds))
	rec.MaxLossRate = rec.PreLossRate + max(LossAbsBand, BandSDs*sampleSD(ls))
	return true
}

func (rec *Recovery) inBand(b *sim.Bin) bool {
	l, ok := reachableLoss(b)
	if !ok {
		return true
	}
	if b.Delivered == 0 {
		return false
	}
	return l <= rec.MaxLossRate && b.DeliveryMean() <= rec.MaxDeliveryMean
}

// sampleSD is the sample standard deviation (n−1 denominator), 0 for fewer
// than two values.
func sampleSD(x []float64) float64 {
	if len(x) < 2 {
		return 0
	}
	var m float64
	for _, v := range x {
		m += v
	}
	m /= float64(len(x))
	var ss float64
	for _, v := range x {
		ss += (v - m) * (v - m)
	}
	return math.Sqrt(ss / float64(len(x)-1))
}
