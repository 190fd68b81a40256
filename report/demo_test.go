package report

import (
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"testing"
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
