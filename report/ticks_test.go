package report

import (
	"strings"
	"testing"
)

func TestTicks(t *testing.T) {
	labels := func(ts []struct {
		v float64
		l string
	}) string {
		var b []string
		for _, x := range ts {
			if x.l != "" {
				b = append(b, x.l)
			}
		}
		return strings.Join(b, " ")
	}
	tests := []struct {
		name     string
		log      bool
		min, max float64
		want     string // labelled ticks (common practice: 1-2-5 steps, labels at round values)
	}{
		{"percent", false, 0, 25, "0 5 10 15 20 25"},
		{"fraction", false, 0, 0.9, "0.0 0.2 0.4 0.6 0.8"},
		{"negative", false, -50, 150, "-50 0 50 100 150"},
		{"offset", false, 0.15, 1.45, "0.2 0.4 0.6 0.8 1.0 1.2 1.4"},
		{"log decades", true, 0.008, 1.2, "0.01 0.1 1"},
		{"log narrow", true, 0.03, 0.4, "0.05 0.1 0.2"},
		{"log two decades less a bit", true, 12, 1050, "20 50 100 200 500 1000"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var got []struct {
				v float64
				l string
			}
			if tc.log {
				for _, x := range (logTicks{}).Ticks(tc.min, tc.max) {
					got = append(got, struct {
						v float64
						l string
					}{x.Value, x.Label})
				}
			} else {
				for _, x := range (linearTicks{}).Ticks(tc.min, tc.max) {
					got = append(got, struct {
						v float64
						l string
					}{x.Value, x.Label})
				}
			}
			for _, x := range got {
				if x.v < tc.min-1e-12 || x.v > tc.max+1e-12 {
					t.Errorf("tick %v outside [%v, %v]", x.v, tc.min, tc.max)
				}
			}
			if l := labels(got); l != tc.want {
				t.Errorf("labels: got %q, want %q", l, tc.want)
			}
		})
	}
}

func TestNumberFormats(t *testing.T) {
	// common practice: a signed difference shows its sign (number
	// formatting itself is tested in package stats)
	tests := []struct{ got, want string }{
		{fmtSigned(-0.6577), "-0.6577"},
		{fmtSigned(2.5), "+2.5"},
	}
	for _, tc := range tests {
		if tc.got != tc.want {
			t.Errorf("got %q, want %q", tc.got, tc.want)
		}
	}
}
