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
//     mean delivery time D0 = ΣDelaySum/ΣDelivered and the pooled loss rate
//     L0 = ΣDropped/ΣGenerated; sD and sL are the sample standard
//     deviations of the per-bin mean delivery times and loss rates (0 with
//     fewer than two bins).
//   - Band: a bin is within it when its loss rate is at most
//     L0 + max(LossAbsBand, BandSDs·sL) and its mean delivery time is at most
//     D0 + max(DeliveryRelBand·D0, BandSDs·sD). A bin with no generated
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
//     bins too (compare pre_loss_rate). Events sharing a bin share it.
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
	return rec
}

// pre sets the pre-event level and band from the bins pre; false if they
// hold no delivered packet.
func (rec *Recovery) pre(pre []sim.Bin) bool {
	var gen, del, drop int64
	var sum float64
	var ds, ls []float64
	for i := range pre {
		b := &pre[i]
		gen += b.Generated
		del += b.Delivered
		drop += b.Dropped
		sum += b.DelaySum
		if b.Delivered > 0 {
			ds = append(ds, b.DeliveryMean())
		}
		if b.Generated > 0 {
			ls = append(ls, float64(b.Dropped)/float64(b.Generated))
		}
	}
	if del == 0 || gen == 0 {
		return false
	}
	rec.PreDeliveryMean = sum / float64(del)
	rec.PreLossRate = float64(drop) / float64(gen)
	rec.MaxDeliveryMean = rec.PreDeliveryMean + max(DeliveryRelBand*rec.PreDeliveryMean, BandSDs*sampleSD(ds))
	rec.MaxLossRate = rec.PreLossRate + max(LossAbsBand, BandSDs*sampleSD(ls))
	return true
}

func (rec *Recovery) inBand(b *sim.Bin) bool {
	if b.Generated == 0 {
		return true
	}
	if b.Delivered == 0 {
		return false
	}
	return float64(b.Dropped)/float64(b.Generated) <= rec.MaxLossRate && b.DeliveryMean() <= rec.MaxDeliveryMean
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
