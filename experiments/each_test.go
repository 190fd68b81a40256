package experiments

import (
	"fmt"
	"reflect"
	"strings"
	"testing"

	"hoplore/sim"
)

const familyHead = `name: family
duration: 20s
warmup: 2s
bin: 1s
replicates: 1
seed: 5
topologies: [{name: ring, nodes: 6}]
traffic: {matrix: uniform, loads: [0.4]}
agents: [shortest-path]
failures:
`

// each: links on a ring of 6 is six schedules, one per link in the
// topology's link order, named NAME/A-B, and runs exactly as the six
// schedules written by hand.
func TestEachLinksFamily(t *testing.T) {
	fam, err := Parse("family.yaml", []byte(familyHead+"  - {name: single, each: links, at: 8s, until: 14s}\n"))
	if err != nil {
		t.Fatal(err)
	}
	ring := [][2]string{{"n0", "n1"}, {"n1", "n2"}, {"n2", "n3"}, {"n3", "n4"}, {"n4", "n5"}, {"n5", "n0"}}
	var hand strings.Builder
	hand.WriteString(familyHead)
	var want []string
	for _, l := range ring {
		name := "single/" + l[0] + "-" + l[1]
		want = append(want, name)
		fmt.Fprintf(&hand, "  - name: %s\n    events:\n      - {at: 8s, link: [%s, %s], action: down}\n      - {at: 14s, link: [%s, %s], action: up}\n",
			name, l[0], l[1], l[0], l[1])
	}
	byHand, err := Parse("family.yaml", []byte(hand.String()))
	if err != nil {
		t.Fatal(err)
	}
	if fam.Cells() != 6 || byHand.Cells() != 6 {
		t.Fatalf("cells: family %d, by hand %d, want 6", fam.Cells(), byHand.Cells())
	}
	a, b := fam.Runs(), byHand.Runs()
	for i := range a {
		if a[i].Dims.Failure != want[i] {
			t.Errorf("run %d: failure %q, want %q", i, a[i].Dims.Failure, want[i])
		}
		if a[i].Dims != b[i].Dims {
			t.Errorf("run %d: dimensions %+v by family, %+v by hand", i, a[i].Dims, b[i].Dims)
		}
		ca, err := a[i].Config()
		if err != nil {
			t.Fatal(err)
		}
		cb, err := b[i].Config()
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(ca.Failures, cb.Failures) {
			t.Errorf("run %d: failures %+v by family, %+v by hand", i, ca.Failures, cb.Failures)
		}
		if testing.Short() && i >= 2 {
			continue // the configurations are equal; two runs show the results are too
		}
		ra, err := sim.Run(ca)
		if err != nil {
			t.Fatal(err)
		}
		rb, err := sim.Run(cb)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(ra, rb) {
			t.Errorf("run %d: results differ (delivered %d and %d)", i, ra.Delivered, rb.Delivered)
		}
	}
}

// each: nodes names schedules by node, stays down without until, and a
// sample keeps that many elements in topology order, the same for one
// seed.
func TestEachNodesSample(t *testing.T) {
	names := func(src string) []string {
		t.Helper()
		e, err := Parse("family.yaml", []byte(familyHead+src))
		if err != nil {
			t.Fatal(err)
		}
		var out []string
		for _, r := range e.Runs() {
			out = append(out, r.Dims.Failure)
			if evs := r.Failures().Events; len(evs) != 1 || evs[0].Up || evs[0].At != 8*sim.Second {
				t.Errorf("%s: events %+v, want one down at 8 s", r.Dims.Failure, evs)
			}
		}
		return out
	}
	all := names("  - {each: nodes, at: 8s}\n")
	if want := []string{"each-nodes/n0", "each-nodes/n1", "each-nodes/n2", "each-nodes/n3", "each-nodes/n4", "each-nodes/n5"}; !reflect.DeepEqual(all, want) {
		t.Errorf("schedules %v, want %v", all, want)
	}
	s1 := names("  - {each: nodes, at: 8s, sample: 3, seed: 1}\n")
	if len(s1) != 3 || !reflect.DeepEqual(s1, names("  - {each: nodes, at: 8s, sample: 3, seed: 1}\n")) {
		t.Errorf("sample of 3: %v", s1)
	}
	for i := 1; i < len(s1); i++ {
		if s1[i-1] >= s1[i] {
			t.Errorf("sample %v is not in topology order", s1)
		}
	}
}

// A geographic group takes every link with an end within the radius of its
// node: on a line of sites 0, 100, 250 and 600 km along x, 150 km around b
// reaches a, b and c, so the links a-b, b-c and c-d; 50 km only b, so a-b
// and b-c.
func TestGeographicGroup(t *testing.T) {
	for _, tc := range []struct {
		km   string
		want []int
	}{{"150", []int{0, 1, 2}}, {"50", []int{0, 1}}} {
		src := `name: geo
duration: 20s
topologies:
  - inline:
      name: line
      nodes:
        - {name: a, x_km: 0, y_km: 0}
        - {name: b, x_km: 100, y_km: 0}
        - {name: c, x_km: 250, y_km: 0}
        - {name: d, x_km: 600, y_km: 0}
      links: [{a: a, b: b}, {a: b, b: c}, {a: c, b: d}]
traffic: {matrix: uniform, loads: [0.4]}
agents: [shortest-path]
failures:
  - name: quake
    each: groups
    at: 5s
    until: 10s
    groups:
      zone: {within_km: ` + tc.km + `, of: b}
`
		e, err := Parse("geo.yaml", []byte(src))
		if err != nil {
			t.Fatal(err)
		}
		runs := e.Runs()
		if len(runs) != 1 || runs[0].Dims.Failure != "quake/zone" {
			t.Fatalf("runs %d, first failure %q; want 1, quake/zone", len(runs), runs[0].Dims.Failure)
		}
		evs := runs[0].Failures().Events
		if len(evs) != 2 || !reflect.DeepEqual(evs[0].Links, tc.want) || !reflect.DeepEqual(evs[1].Links, tc.want) || !evs[1].Up {
			t.Errorf("%s km: events %+v, want links %v down then up", tc.km, evs, tc.want)
		}
	}
}
