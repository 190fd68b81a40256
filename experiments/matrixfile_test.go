package experiments

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"hoplore/sim"
)

// writeFiles writes name → text into a temporary directory and returns the
// path of the first name given (the experiment).
func writeFiles(t *testing.T, files ...string) string {
	t.Helper()
	dir := t.TempDir()
	for i := 0; i < len(files); i += 2 {
		if err := os.WriteFile(filepath.Join(dir, files[i]), []byte(files[i+1]), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return filepath.Join(dir, files[0])
}

// A line of four invented sites with 1 Mbit/s links.
const lineTopology = `topologies:
  - inline:
      name: line
      defaults: {bandwidth: 1Mbps, delay: 1ms}
      nodes: [Arvenport, Bellcaster, Corlund, Dunmere]
      links:
        - {a: Arvenport, b: Bellcaster}
        - {a: Bellcaster, b: Corlund}
        - {a: Corlund, b: Dunmere}
agents: [shortest-path]
`

// A demand file with loads gives the shape: at load 0.8 the busiest channel
// under hop-count shortest path is at exactly 0.8 (the meaning of
// normalised load), and the rates keep the file's proportions.
func TestMatrixFileLoad(t *testing.T) {
	exp := writeFiles(t, "e.yaml", `name: demand-file
duration: 10s
`+lineTopology+`traffic:
  matrix: {file: day.csv}
  loads: [0.8]
`, "day.csv", "source,target,rate_mbps\nArvenport,Dunmere,0.3\nBellcaster,Corlund,0.2\nDunmere,Arvenport,0.1\n")
	e, err := Load(exp)
	if err != nil {
		t.Fatal(err)
	}
	r := e.Runs()[0]
	rates := r.Rates()
	net := r.Topology.Net
	if got := sim.NormalisedLoad(net, rates, e.Traffic.Size.Mean()); math.Abs(got-0.8) > 1e-12 {
		t.Errorf("normalised load %.15g, want 0.8", got)
	}
	// Bellcaster→Corlund carries 0.3 + 0.2 of 1 Mbit/s at the file's
	// rates: the busiest channel; scaled to 0.8 the factor is 1.6.
	want := 1.6 * 0.3e6 / 8000
	if got := rates[0][3]; math.Abs(got-want) > 1e-9 {
		t.Errorf("Arvenport→Dunmere %g packets/s, want %g", got, want)
	}
	if got := rates[3][0] / rates[0][3]; math.Abs(got-1.0/3) > 1e-12 {
		t.Errorf("proportion %g, want 1/3", got)
	}
}

// Without loads the rates are absolute, times rate_scale.
func TestMatrixFileAbsolute(t *testing.T) {
	exp := writeFiles(t, "e.yaml", `name: demand-file
duration: 10s
`+lineTopology+`traffic:
  matrix: {file: m.csv, rate_scale: 0.5, unit: /s}
`, "m.csv", "source,target,rate\nArvenport,Dunmere,40\n")
	e, err := Load(exp)
	if err != nil {
		t.Fatal(err)
	}
	if got := e.Runs()[0].Rates()[0][3]; got != 20 {
		t.Errorf("rate %g, want 40/s × 0.5", got)
	}
}

// A two-period replay: Arvenport→Dunmere at 60/s for 5 minutes, then
// Dunmere→Arvenport at 20/s, compressed by speedup 60 into 5 s each. The
// packets generated in each period are Poisson with mean rate × 5 s,
// checked at z = 3.29 against √mean.
func TestMatrixFileReplay(t *testing.T) {
	exp := writeFiles(t, "e.yaml", `name: replay
duration: 10s
bin: 5s
`+lineTopology+`traffic:
  matrix: {file: day.csv, period: 5m, speedup: 60}
`, "day.csv", "t,source,target,rate_pps\n0,Arvenport,Dunmere,60\n5m,Dunmere,Arvenport,20\n")
	e, err := Load(exp)
	if err != nil {
		t.Fatal(err)
	}
	cfg, err := e.Runs()[0].Config()
	if err != nil {
		t.Fatal(err)
	}
	res, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range []float64{60 * 5, 20 * 5} {
		if got := float64(res.Series[i].Generated); math.Abs(got-want) > 3.29*math.Sqrt(want) {
			t.Errorf("period %d: %g generated, want %g ± %.0f", i, got, want, 3.29*math.Sqrt(want))
		}
	}
	// The second period's packets run the other way: Dunmere's channel
	// towards Corlund (link 2, channel 5) carries none in the first.
	if len(cfg.Traffic.Periods) != 3 || cfg.Traffic.Periods[1].At != 5*sim.Second || cfg.Traffic.Periods[2].At != 10*sim.Second {
		t.Errorf("periods %+v", cfg.Traffic.Periods)
	}
}

func TestMatrixFileErrors(t *testing.T) {
	head := "name: bad\nduration: 10s\n" + lineTopology
	for _, c := range []struct {
		name, traffic, file, text, want string
	}{
		{"unknown node", "  matrix: {file: m.csv}\n  loads: [1]\n", "m.csv", "source,target,rate_mbps\nArvenport,Zanzibarre,1\n",
			`m.csv:2:11: target: topology "line" has no node "Zanzibarre"`},
		{"overlapping periods", "  matrix: {file: m.csv, period: 5m}\n", "m.csv", "t,source,target,rate_pps\n0,Arvenport,Dunmere,1\n240,Arvenport,Dunmere,2\n",
			`m.csv:3:1: t: overlapping periods: 4m0s starts 4m0s after the period at 0s, which lasts period 5m0s`},
		{"unknown unit", "  matrix: {file: m.csv, unit: furlongs}\n", "m.csv", "source,target,rate\nArvenport,Dunmere,1\n",
			`e.yaml:14:31: traffic.matrix.unit: unknown unit "furlongs" (use /s, pps, bps, kbps, Mbps or Gbps)`},
		{"no unit", "  matrix: {file: m.csv}\n", "m.csv", "source,target,rate\nArvenport,Dunmere,1\n",
			`m.csv:2:19: rate: no unit: give a unit column, a unit in the header such as rate_mbps, or unit: in the experiment`},
		{"period without replay", "  matrix: {file: m.csv, period: 5m}\n", "m.csv", "source,target,rate_pps\nArvenport,Dunmere,1\n",
			`e.yaml:14:33: traffic.matrix: period and speedup are for replays (a file with a t column, or files: [...]); "m.csv" has one matrix`},
		{"rate_scale with loads", "  matrix: {file: m.csv, rate_scale: 2}\n  loads: [1]\n", "m.csv", "source,target,rate_pps\nArvenport,Dunmere,1\n",
			`e.yaml:14:37: traffic.matrix.rate_scale: only without loads (with loads the file gives the shape and the load its scale)`},
		{"files without period", "  matrix: {files: [m.csv]}\n", "m.csv", "source,target,rate_pps\nArvenport,Dunmere,1\n",
			`e.yaml:14:19: traffic.matrix.period: required with files: how long each file's matrix lasts (e.g. 5m)`},
		{"missing file", "  matrix: {file: nothing.csv}\n", "m.csv", "",
			`e.yaml:14:18: traffic.matrix.file: cannot read "nothing.csv": `},
	} {
		t.Run(c.name, func(t *testing.T) {
			exp := writeFiles(t, "e.yaml", head+"traffic:\n"+c.traffic, c.file, c.text)
			_, err := Load(exp)
			if err == nil || !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), filepath.Dir(exp)) {
				t.Errorf("got  %v\nwant …%s", err, c.want)
			}
		})
	}
}

// A GraphML file in the public collections' layout, read with the options
// of a topology entry; and the options' errors at their positions.
func TestTopologyFileOptions(t *testing.T) {
	fixture, err := os.ReadFile("../testdata/collection-layout.graphml")
	if err != nil {
		t.Fatal(err)
	}
	const rest = "traffic: {matrix: uniform, loads: [0.5]}\nagents: [shortest-path]\n"
	exp := writeFiles(t, "e.yaml", "name: ridge\nduration: 10s\ntopologies:\n  - {file: ridge.graphml, keep: largest-component, bandwidth_scale: 1e-4}\n"+rest,
		"ridge.graphml", string(fixture))
	e, err := Load(exp)
	if err != nil {
		t.Fatal(err)
	}
	g := e.Topologies[0].Graph
	// 10 + 1 Gbit/s merged, scaled by 10^-4.
	if len(g.Nodes) != 5 || g.Nodes[3].Name != "Gilden#3" || g.Links[0].Bandwidth != 1.1e6 {
		t.Errorf("got %d nodes, %q, %g bit/s; want 5, Gilden#3, 1.1e6", len(g.Nodes), g.Nodes[3].Name, g.Links[0].Bandwidth)
	}
	for _, c := range []struct{ entry, want string }{
		{"{file: ridge.graphml}", `ridge.graphml:16:3: links: topology "ridge" is not connected`},
		{"{file: ridge.graphml, keep: all}", `e.yaml:4:33: topologies[0].keep: "all" is not largest-component`},
		{"{file: ridge.graphml, keep: largest-component, attributes: {lat: y, colour: c}}", `e.yaml:4:73: topologies[0].attributes.colour: unknown field`},
		{"{file: ridge.graphml, keep: largest-component, attributes: {bandwidth: Capacity}}", `e.yaml:4:65: topologies[0].attributes.bandwidth: `},
		{"{name: ring, keep: largest-component}", `e.yaml:4:24: keep: only with file: (how a topology file is read)`},
	} {
		exp := writeFiles(t, "e.yaml", "name: ridge\nduration: 10s\ntopologies:\n  - "+c.entry+"\n"+rest, "ridge.graphml", string(fixture))
		if _, err := Load(exp); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: got %v, want …%s…", c.entry, err, c.want)
		}
	}
}

// A conditions file sets loss 0.1 on Bellcaster–Corlund from the start:
// of the packets that cross it, the number lost is Binomial(n, 0.1),
// checked at z = 3.29; and a row naming a link the topology lacks is an
// error at its row.
func TestConditionsFile(t *testing.T) {
	head := "name: lossy\nduration: 60s\nwarmup: 5s\n" + lineTopology +
		"traffic:\n  matrix: {file: m.csv}\n"
	exp := writeFiles(t, "e.yaml", head+"conditions: {file: c.csv}\n",
		"m.csv", "source,target,rate_pps\nArvenport,Dunmere,50\n",
		"c.csv", "t,a,b,loss\n0,Corlund,Bellcaster,0.1\n")
	e, err := Load(exp)
	if err != nil {
		t.Fatal(err)
	}
	cfg, err := e.Runs()[0].Config()
	if err != nil {
		t.Fatal(err)
	}
	res, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	lost := float64(res.Dropped[sim.LinkLoss])
	n := float64(res.Delivered) + lost
	if tol := 3.29 * math.Sqrt(n*0.1*0.9); math.Abs(lost-0.1*n) > tol || res.DroppedTotal() != res.Dropped[sim.LinkLoss] {
		t.Errorf("lost %g of %g (drops %v), want %g ± %.0f, all link_loss", lost, n, res.Dropped, 0.1*n, tol)
	}
	exp = writeFiles(t, "e.yaml", head+"conditions: {file: c.csv}\n",
		"m.csv", "source,target,rate_pps\nArvenport,Dunmere,50\n",
		"c.csv", "t,a,b,bandwidth\n0,Corlund,Bellcaster,1Mbps\n30,Arvenport,Corlund,2Mbps\n")
	if _, err := Load(exp); err == nil || !strings.HasSuffix(err.Error(), `c.csv:3:4: topology "line" has no link Arvenport-Corlund`) {
		t.Errorf("got %v", err)
	}
}

// files: plays each file for period/speedup, then nothing.
func TestMatrixFilesList(t *testing.T) {
	exp := writeFiles(t, "e.yaml", "name: list\nduration: 10s\n"+lineTopology+
		"traffic:\n  matrix: {files: [a.csv, b.csv], period: 2s, unit: /s}\n",
		"a.csv", "source,target,rate\nArvenport,Dunmere,10\n", "b.csv", "source,target,rate\nDunmere,Arvenport,5\n")
	e, err := Load(exp)
	if err != nil {
		t.Fatal(err)
	}
	ps := e.Runs()[0].Periods()
	if len(ps) != 3 || ps[0].At != 0 || ps[1].At != 2*sim.Second || ps[2].At != 4*sim.Second ||
		ps[0].Rates[0][3] != 10 || ps[1].Rates[3][0] != 5 || ps[2].Rates[3][0] != 0 {
		t.Errorf("periods %+v", ps)
	}
}
