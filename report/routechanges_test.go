package report

import (
	"math"
	"testing"
)

// TestRouteChangeCurves works the per-bin means by hand: two agents, two
// replicates, two 5 s bins; agent a made 3 and 5 changes in the first bin
// (mean 4, 95% half-width t(0.975, 1)·s/√2 = 12.706·1.4142/1.4142 =
// 12.706; Student 1908 via any t table) and none in the second; agent b
// none at all, so its curve is flat at zero. Without any change in the
// whole table there is no panel.
func TestRouteChangeCurves(t *testing.T) {
	d := &Data{}
	for _, a := range []string{"a", "b"} {
		for rep := 0; rep < 2; rep++ {
			d.Runs = append(d.Runs, Run{Cell: Cell{Topology: "t", Agent: a, Load: 1, Failure: "none"}, Replicate: rep})
			for bin := 0; bin < 2; bin++ {
				rc := 0.0
				if a == "a" && bin == 0 {
					rc = float64(3 + 2*rep)
				}
				d.Series = append(d.Series, Bin{Cell: Cell{Topology: "t", Agent: a, Load: 1, Failure: "none"}, Replicate: rep,
					Start: float64(5 * bin), End: float64(5 * (bin + 1)), RouteChanges: rc})
			}
		}
	}
	cps, more := RouteChangeCurves(d, 6)
	if len(cps) != 1 || more != 0 {
		t.Fatalf("%d panels (%d more), want 1", len(cps), more)
	}
	cp := cps[0]
	if cp.Bin != 5 || len(cp.Curves) != 2 {
		t.Fatalf("bin %v, %d curves; want 5 s and 2", cp.Bin, len(cp.Curves))
	}
	a, b := cp.Curves[0], cp.Curves[1]
	if a.Agent != "a" || len(a.Points) != 2 || a.Points[0].X != 2.5 || a.Points[0].Est.Mean != 4 || a.Points[1].Est.Mean != 0 {
		t.Errorf("agent a: %+v, want means 4 at 2.5 s and 0 at 7.5 s", a)
	}
	if hw := a.Points[0].Est.CI95; math.Abs(hw-12.706) > 0.001 {
		t.Errorf("agent a, first bin: half-width %v, want 12.706", hw)
	}
	if b.Agent != "b" || b.Points[0].Est.Mean != 0 || b.Points[1].Est.Mean != 0 {
		t.Errorf("agent b: %+v, want zero in both bins", b)
	}
	for i := range d.Series {
		d.Series[i].RouteChanges = 0
	}
	if cps, _ := RouteChangeCurves(d, 6); len(cps) != 0 {
		t.Errorf("%d panels without any route change, want none", len(cps))
	}
}
