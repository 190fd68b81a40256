package stats_test

import (
	"fmt"
	"math"
	"testing"

	"hoplore/stats"
)

func TestFormat(t *testing.T) {
	// common practice: n significant digits, no exponent; the half-width
	// to two significant digits and the mean to the same decimal place
	tests := []struct{ got, want string }{
		{stats.Sig(776.7, 3), "777"},
		{stats.Sig(0.035984, 4), "0.03598"},
		{stats.Sig(12345.6, 4), "12346"},
		{stats.Sig(0.5, 4), "0.5"},
		{stats.Sig(0, 4), "0"},
		{stats.Sig(-2.5e-8, 3), "-2.5e-08"},
		{stats.Sig(math.NaN(), 3), "NaN"},
		{stats.PlusMinus(776.7, 39.2), "777 ± 39"},
		{stats.PlusMinus(13.88, 2.5), "13.9 ± 2.5"},
		{stats.PlusMinus(835.4, 123), "835 ± 123"},
		{stats.PlusMinus(0.02145, 0.0321), "0.021 ± 0.032"},
		{stats.PlusMinus(4, math.NaN()), "4"},
		{stats.PlusMinus(41.5, 0), "41.5"},
		{stats.PlusMinus(-0.3, 15), "0 ± 15"},
		{stats.PlusMinus(-0.0004, 0.031), "0.000 ± 0.031"},
		{stats.PlusMinus(-0.6, 15), "-1 ± 15"},
		{stats.Estimate{N: 3, Mean: 0.0172, CI95: 0.00014}.Format(1e3), "17.20 ± 0.14"},
		{stats.Estimate{N: 1, Mean: 0.0172, CI95: math.NaN()}.Format(1e3), "17.2"},
		{stats.Estimate{N: 0, Mean: math.NaN(), CI95: math.NaN()}.Format(1), stats.None},
	}
	for _, tc := range tests {
		if tc.got != tc.want {
			t.Errorf("got %q, want %q", tc.got, tc.want)
		}
	}
}

func ExampleMeanCI95() {
	// mean delivery time of five replicates, seconds
	e := stats.MeanCI95([]float64{0.0171, 0.0175, 0.0169, 0.0174, 0.0172})
	fmt.Println(e.N, "replicates:", e.Format(1e3), "ms")
	// Output:
	// 5 replicates: 17.22 ± 0.30 ms
}
