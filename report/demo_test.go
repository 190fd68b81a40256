package report

import (
	"errors"
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"hoplore/internal/inputerr"
)

var demoOut = flag.String("out", "", "TestWriteDemoReport: write the synthetic result tables and their report into this folder")

// TestWriteDemoReport writes a report of synthetic result tables; with
// -out DIR it leaves DIR/*.parquet and DIR/report/ for a browser to open.
func TestWriteDemoReport(t *testing.T) {
	dir := *demoOut
	if dir == "" {
		dir = t.TempDir()
	} else if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	writeSynthetic(t, dir, demoSpec)
	if err := Write(dir, Options{}); err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(dir, "report", "index.html"))
	if err != nil {
		t.Fatal(err)
	}
	for _, id := range []string{"delivery-mean", "delivery-p95", "loss", "event-two-region-cut", "event-harbour-ring-cut", "links", "util-time"} {
		if !regexp.MustCompile(`<figure class="chart" id="` + id + `"`).Match(page) {
			t.Errorf("index.html: no chart %q", id)
		}
		for _, ext := range []string{".svg", ".png"} {
			if st, err := os.Stat(filepath.Join(dir, "report", id+ext)); err != nil || st.Size() == 0 {
				t.Errorf("chart file %s%s: %v", id, ext, err)
			}
		}
	}
	if m := regexp.MustCompile(`(?i)(https?:|src="[^d#]|href="[^#]|<link )`).Find(page); m != nil {
		t.Errorf("index.html references something outside itself: %q", m)
	}
}

// TestWriteMinimal writes the report of a degenerate experiment: one
// replicate (no confidence bands), one load, no failures, and no series or
// link tables.
func TestWriteMinimal(t *testing.T) {
	dir := t.TempDir()
	writeSynthetic(t, dir, synSpec{topologies: []string{"pair"}, agents: []string{"shortest-path"}, loads: []float64{0.5},
		failures: []string{"none"}, replicates: 1, duration: 60, bin: 10, channels: 2, seed: 1})
	for _, f := range []string{"series.parquet", "links.parquet", "recoveries.parquet"} {
		if err := os.Remove(filepath.Join(dir, f)); err != nil {
			t.Fatal(err)
		}
	}
	if err := Write(dir, Options{}); err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(dir, "report", "index.html"))
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []string{`id="delivery-mean"`, `id="loss"`, "No failure events", "No link table", `data-table="table-loss"`} {
		if !strings.Contains(string(page), s) {
			t.Errorf("index.html lacks %q", s)
		}
	}
	// an option naming a load with no events is refused before anything is written
	load := 3.0
	if err := Write(dir, Options{Out: filepath.Join(dir, "other"), LinkLoad: &load}); err != nil {
		t.Errorf("link load without a link table: got %v, want no error (no link chart)", err)
	}
}

func TestBuildRefusesOptionsNamingNothing(t *testing.T) {
	d, _ := loadSynthetic(t, smallSpec)
	seven, half := 7.0, 0.5
	tests := []struct {
		name string
		o    Options
		want string
	}{
		{"event load", Options{EventLoad: &seven}, "no failure events at load 7"},
		{"link topology", Options{LinkTopology: "nowhere"}, `topology "nowhere"`},
		{"link load", Options{LinkLoad: &seven}, "load 7"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Build(d, tc.o)
			if err == nil || !strings.Contains(err.Error(), tc.want) || !errors.Is(err, inputerr.ErrBadInput) {
				t.Errorf("got %v, want an input error naming %q", err, tc.want)
			}
		})
	}
	// a valid choice is honoured: the link charts show load 0.5
	r, err := Build(d, Options{LinkLoad: &half, LinkFailure: "cut", EventLoad: &half})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range r.charts {
		if c.ID == "links" && !strings.Contains(c.Caption, "load 0.5, failures cut") {
			t.Errorf("links caption %q does not name the chosen cell", c.Caption)
		}
	}
	for _, ep := range r.Events {
		if ep.Load != 0.5 {
			t.Errorf("event panel at load %v, want 0.5", ep.Load)
		}
	}
}

// BenchmarkWrite measures a whole report of a grid the size of a bundled
// load sweep: 2 topologies × 7 agents × 4 loads × 2 failure schedules × 3
// replicates, 60 bins and 60 channels per run.
func BenchmarkWrite(b *testing.B) {
	dir := b.TempDir()
	writeSynthetic(b, dir, synSpec{
		topologies: []string{"two-region", "mesh-ten"},
		agents:     []string{"a1", "a2", "a3", "a4", "a5", "a6", "a7"},
		loads:      []float64{0.3, 0.7, 1.0, 1.3},
		failures:   []string{"none", "cut"},
		replicates: 3, duration: 600, bin: 10, channels: 60, seed: 5,
	})
	b.ReportAllocs()
	for b.Loop() {
		if err := Write(dir, Options{}); err != nil {
			b.Fatal(err)
		}
	}
	st, err := os.Stat(filepath.Join(dir, "report", "index.html"))
	if err != nil {
		b.Fatal(err)
	}
	b.ReportMetric(float64(st.Size())/1e3, "kB-html")
}
