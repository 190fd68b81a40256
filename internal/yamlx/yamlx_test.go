package yamlx

import (
	"strings"
	"testing"
	"time"
)

type sample struct {
	D Duration  `yaml:"d"`
	B Bandwidth `yaml:"b"`
	R Rate      `yaml:"r"`
	F Float     `yaml:"f"`
	I Int       `yaml:"i"`
}

func TestValues(t *testing.T) {
	var s sample
	if err := Decode("f.yaml", []byte("d: 1m30s\nb: 2.5Mbps\nr: 300/min\nf: 0.25\ni: 7\n"), &s); err != nil {
		t.Fatal(err)
	}
	if s.D.D != 90*time.Second || s.B.BPS != 2.5e6 || s.R.PerSecond != 5 || s.F.V != 0.25 || s.I.V != 7 {
		t.Errorf("decoded %+v", s)
	}
	if s.B.Pos != (Pos{Line: 2, Col: 4}) {
		t.Errorf("bandwidth position %+v, want 2:4", s.B.Pos)
	}
	for _, c := range []struct{ in, want string }{
		{"d: 5q\n", "f.yaml:1:4: d: \"5q\" is not a duration"},
		{"b: fast\n", "f.yaml:1:4: b: \"fast\" is not a bit rate"},
		{"r: 3/week\n", "f.yaml:1:4: r: \"3/week\" is not a rate"},
		{"i: 2.5\n", "f.yaml:1:4: i: \"2.5\" is not a whole number"},
		{"x: 1\n", "f.yaml:1:1: unknown field \"x\""},
		{"d: [1\n", "f.yaml:1:"},
	} {
		var s sample
		err := Decode("f.yaml", []byte(c.in), &s)
		if err == nil || !strings.HasPrefix(err.Error(), c.want) {
			t.Errorf("%q: error %v, want prefix %q", c.in, err, c.want)
		}
	}
}

func TestParseBandwidth(t *testing.T) {
	for in, want := range map[string]float64{"1Mbps": 1e6, "10Gbps": 1e10, "512kbps": 512e3, "64 kbit/s": 64e3, "1e6": 1e6, "3bps": 3} {
		if got, err := ParseBandwidth(in); err != nil || got != want {
			t.Errorf("ParseBandwidth(%q) = %g, %v; want %g", in, got, err, want)
		}
	}
}
