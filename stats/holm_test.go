package stats_test

import (
	"fmt"
	"math"
	"testing"

	"hoplore/stats"
)

func TestHolm(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name    string
		p, want []float64
		reject  []bool // at family-wise α = 0.05
	}{
		// Worked example of the holm function of the Pingouin statistics
		// library (Vallat, "Pingouin: statistics in Python", J. Open Source
		// Software 3(31), 2018; holm() documentation): p = .50, .003, .32,
		// .054, .0003 adjust to .64, .012, .64, .162, .0015, rejecting the
		// second and the fifth at α = 0.05.
		{"Pingouin holm example", []float64{.50, .003, .32, .054, .0003}, []float64{.64, .012, .64, .162, .0015}, []bool{false, true, false, false, true}},
		// Holm's rule by hand (Holm 1979, §2): sorted .005, .01, .03, .04
		// against α/4, α/3, α/2, α: .005 ≤ .0125 and .01 ≤ .0167 are
		// rejected, .03 > .025 stops. Adjusted: 4·.005 = .02, 3·.01 = .03,
		// 2·.03 = .06, max(.06, 1·.04) = .06.
		{"four tests", []float64{.01, .04, .03, .005}, []float64{.03, .06, .06, .02}, []bool{true, false, false, true}},
		// Capped at 1, monotone, ties equal; NaN is a test not made.
		{"cap, ties, NaN", []float64{.4, nan, .2, .2, .9}, []float64{.8, nan, .8, .8, .9}, []bool{false, false, false, false, false}},
		{"one test is its own adjustment", []float64{.03}, []float64{.03}, []bool{true}},
		{"none", nil, []float64{}, []bool{}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := stats.Holm(tc.p)
			if len(got) != len(tc.want) {
				t.Fatalf("got %d values, want %d", len(got), len(tc.want))
			}
			for i := range got {
				if math.IsNaN(tc.want[i]) != math.IsNaN(got[i]) || math.Abs(got[i]-tc.want[i]) > 1e-12 {
					t.Errorf("p[%d] = %g: adjusted %g, want %g", i, tc.p[i], got[i], tc.want[i])
				}
				if rej := got[i] <= 0.05; rej != tc.reject[i] {
					t.Errorf("p[%d] = %g: rejected %v, want %v", i, tc.p[i], rej, tc.reject[i])
				}
			}
		})
	}
}

func ExampleHolm() {
	// raw p-values of three cells of one comparison
	adj := stats.Holm([]float64{0.04, 0.001, 0.03})
	fmt.Printf("%.3f\n", adj)
	// Output: [0.060 0.003 0.060]
}
