package report

import (
	"math"
	"testing"
)

// Every expected value below is worked by hand from the definitions in
// Resilience and Worst.
func TestResilience(t *testing.T) {
	nan := math.NaN()
	rec := func(agent, elem string, rep int, reconnect, settle, lost, ratio float64) Recovery {
		return Recovery{Cell: Cell{Topology: "ring", Agent: agent, Load: 0.5, Failure: "link/" + elem}, Replicate: rep,
			At: 100, Element: elem, Action: "down", Reconnect: reconnect, Settle: settle, LostReachable: lost, DelayRatio: ratio}
	}
	d := &Data{Recoveries: []Recovery{
		rec("sp", "a-b", 0, 0.2, 0, 10, 1.5),
		rec("sp", "a-b", 1, 0.4, nan, 14, 1.7), // settle null in one replicate
		rec("sp", "b-c", 0, 0.1, 2, 3, 1.0),
		rec("sp", "b-c", 1, 0.1, 4, 5, 1.2),
		rec("sp", "c-d", 0, 0.3, 0, 12, nan),
		rec("qr", "a-b", 0, 5, 10, 40, 2),
		// the up event and another load are left out
		{Cell: Cell{Topology: "ring", Agent: "sp", Load: 0.5, Failure: "link/a-b"}, At: 200, Element: "a-b", Action: "up", Reconnect: 9},
		{Cell: Cell{Topology: "ring", Agent: "sp", Load: 0.9, Failure: "link/a-b"}, At: 100, Element: "a-b", Action: "down", Reconnect: 9},
	}}
	res := Resilience(d, 0.5)
	if len(res) != 2 || res[0].Agent != "qr" || res[1].Agent != "sp" || len(res[1].Elements) != 3 {
		t.Fatalf("got %+v", res)
	}
	ab := res[1].Elements[0]
	if ab.Element != "a-b" || ab.Replicates != 2 || math.Abs(ab.Reconnect-0.3) > 1e-12 || ab.Settle != 0 || ab.Unsettled != 1 ||
		ab.LostReachable != 12 || math.Abs(ab.DelayRatio-1.6) > 1e-12 {
		t.Errorf("a-b: got %+v; want reconnect 0.3, settle 0 (1 never), lost 12, ratio 1.6", ab)
	}
	// worst by reachable loss: a-b and c-d (12 each) tie on reconnect (0.3
	// s each), so a-b's ratio 1.6 beats c-d's none; then b-c (4)
	w := res[1].Worst(5)
	if len(w) != 3 || w[0].Element != "a-b" || w[1].Element != "c-d" || w[2].Element != "b-c" {
		t.Errorf("worst order %s %s %s, want a-b c-d b-c", w[0].Element, w[1].Element, w[2].Element)
	}
	if got := res[1].Worst(1); len(got) != 1 {
		t.Errorf("Worst(1) gave %d", len(got))
	}
	// the ECDF counts a missing value in the denominator only: values 2,
	// NaN, 1 give steps to 1/3 at 1 and 2/3 at 2
	pts := ecdf([]float64{2, nan, 1}, 1, 0)
	want := []struct{ x, y float64 }{{1, 0}, {1, 1.0 / 3}, {2, 1.0 / 3}, {2, 2.0 / 3}}
	if len(pts) != len(want) {
		t.Fatalf("ecdf points %v", pts)
	}
	for i, p := range pts {
		if p.X != want[i].x || math.Abs(p.Y-want[i].y) > 1e-15 {
			t.Errorf("ecdf point %d = %v, want %v", i, p, want[i])
		}
	}
	if Resilience(&Data{Recoveries: []Recovery{{Cell: Cell{Load: 0.5}, Action: "down", Reconnect: nan}}}, 0.5) != nil {
		t.Errorf("tables without the exact measures gave a resilience summary")
	}
}
