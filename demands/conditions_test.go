package demands

import (
	"reflect"
	"testing"

	"hoplore/internal/yamlx"
)

func TestReadConditions(t *testing.T) {
	const text = "t,a,b,bandwidth,delay,loss\n" +
		"0,Arvenport,Bellcaster,10Mbps,,\n" +
		"120,Arvenport,Bellcaster,5e6,,0.01\n" +
		"5m,Bellcaster,Corlund,,12ms,\n"
	c, err := ReadConditions("c.csv", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	want := []Condition{
		{T: 0, A: "Arvenport", B: "Bellcaster", Bandwidth: 10e6, Pos: yamlx.Pos{Line: 2, Col: 1}, APos: yamlx.Pos{Line: 2, Col: 3}},
		{T: 120, A: "Arvenport", B: "Bellcaster", Bandwidth: 5e6, Loss: 0.01, SetLoss: true, Pos: yamlx.Pos{Line: 3, Col: 1}, APos: yamlx.Pos{Line: 3, Col: 5}},
		{T: 300, A: "Bellcaster", B: "Corlund", Delay: 0.012, SetDelay: true, Pos: yamlx.Pos{Line: 4, Col: 1}, APos: yamlx.Pos{Line: 4, Col: 4}},
	}
	if !reflect.DeepEqual(c.Rows, want) {
		t.Errorf("got  %+v\nwant %+v", c.Rows, want)
	}
	c, err = ReadConditions("c.csv", []byte("t,a,b,bandwidth_mbps,delay_ms\n1,x,y,2.5,3\n"))
	if err != nil || c.Rows[0].Bandwidth != 2.5e6 || c.Rows[0].Delay != 0.003 {
		t.Errorf("units: %v %+v", err, c)
	}
	for _, e := range []struct{ text, want string }{
		{"t,a,b,loss\n0,x,y,1.5\n", "c.csv:2:7: loss: a probability in [0, 1], got 1.5"},
		{"t,a,b,bandwidth\n0,x,y,-1Mbps\n", "c.csv:2:7: bandwidth: must be positive, got -1e+06 bit/s"},
		{"t,a,b,delay\n0,x,y,-2ms\n", "c.csv:2:7: delay: must not be negative, got -0.002 s"},
		{"t,a,b,loss\n0,x,y,\n", "c.csv:2:3: sets nothing: give a bandwidth, a delay or a loss"},
		{"t,a,b\n", "c.csv:1:1: no bandwidth, delay or loss column: nothing to set"},
		{"t,a,b,colour\n", `c.csv:1:7: unknown column "colour" (columns: t, a, b, and bandwidth, delay or loss)`},
		{"t,a,b,bandwidth_pps\n", `c.csv:1:7: column "bandwidth_pps": the unit of a bandwidth is a bit rate such as Mbps`},
	} {
		if _, err := ReadConditions("c.csv", []byte(e.text)); err == nil || err.Error() != e.want {
			t.Errorf("%q: got %v, want %s", e.text, err, e.want)
		}
	}
}
