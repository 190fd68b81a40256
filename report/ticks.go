package report

import (
	"math"
	"strconv"

	"gonum.org/v1/plot"
)

// linearTicks marks four to seven round values (1, 2 or 5 times a power of
// ten apart) with a minor tick between each, returning only ticks inside
// [min, max] so that none widens the plot's margins.
type linearTicks struct{}

func (linearTicks) Ticks(min, max float64) []plot.Tick {
	if !(max > min) {
		return []plot.Tick{{Value: min, Label: strconv.FormatFloat(min, 'g', 4, 64)}}
	}
	raw := (max - min) / 5
	pow := math.Pow10(int(math.Floor(math.Log10(raw))))
	step := pow
	for _, m := range []float64{1, 2, 5, 10} {
		if (max-min)/(m*pow) <= 7 {
			step = m * pow
			break
		}
	}
	decimals := max0(-int(math.Floor(math.Log10(step) + 1e-9)))
	var ts []plot.Tick
	for k := math.Ceil(min / step * 2); k/2*step <= max*(1+1e-12); k++ {
		v := k / 2 * step
		if v < min-step*1e-9 {
			continue
		}
		t := plot.Tick{Value: v}
		if int(k)%2 == 0 {
			if math.Abs(v) < step*1e-9 {
				v = 0
			}
			t.Label = strconv.FormatFloat(v, 'f', decimals, 64)
		}
		ts = append(ts, t)
	}
	return ts
}

func max0(x int) int {
	if x < 0 {
		return 0
	}
	return x
}

// logTicks marks powers of ten with labels and 2..9 times them as minor
// ticks, inside [min, max] only; when the range holds fewer than two powers
// of ten, 2× and 5× are labelled too.
type logTicks struct{}

func (logTicks) Ticks(min, max float64) []plot.Tick {
	lo := int(math.Floor(math.Log10(min)))
	hi := int(math.Ceil(math.Log10(max)))
	few := math.Log10(max/min) < 2 // under two decades: label 2× and 5× too
	var ts []plot.Tick
	for e := lo; e <= hi; e++ {
		p := math.Pow10(e)
		for i := 1; i < 10; i++ {
			v := p * float64(i)
			if v < min*(1-1e-12) || v > max*(1+1e-12) {
				continue
			}
			t := plot.Tick{Value: v}
			if i == 1 || (few && (i == 2 || i == 5)) {
				t.Label = strconv.FormatFloat(v, 'g', -1, 64)
			}
			ts = append(ts, t)
		}
	}
	return ts
}

// logAxisTicks marks an axis of log10 values with logTicks of the values.
type logAxisTicks struct{}

func (logAxisTicks) Ticks(min, max float64) []plot.Tick {
	ts := logTicks{}.Ticks(math.Pow(10, min), math.Pow(10, max))
	for i := range ts {
		ts[i].Value = math.Log10(ts[i].Value)
	}
	return ts
}
