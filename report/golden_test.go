package report

import (
	"bytes"
	"encoding/xml"
	"flag"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

// TestGoldenSVG draws every chart of a small synthetic experiment and
// compares the SVG bytes with testdata/golden/*.svg (go test -update to
// rewrite them after an intended change). SVG output must be a pure
// function of the data: no dates, no random ids, fonts named not embedded.
func TestGoldenSVG(t *testing.T) {
	d, _ := loadSynthetic(t, smallSpec)
	r, err := Build(d, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var ids []string
	for _, c := range r.charts {
		ids = append(ids, c.ID)
	}
	want := []string{"delivery-mean", "delivery-p95", "loss", "event-two-region-cut", "links", "util-time", "learning"}
	if strings.Join(ids, ",") != strings.Join(want, ",") {
		t.Fatalf("charts: got %v, want %v", ids, want)
	}
	for _, c := range r.charts {
		svg := c.svg(lightTheme, false)
		wellFormed(t, c.ID, svg)
		golden(t, filepath.Join("testdata", "golden", c.ID+".svg"), svg)
	}
	themed := r.charts[0].themedSVG(false)
	wellFormed(t, "themed", themed)
	golden(t, filepath.Join("testdata", "golden", "delivery-mean.themed.svg"), themed)
	for _, s := range []string{"var(--ink,#1b1b1b)", "prefers-color-scheme: dark"} {
		if !bytes.Contains(themed, []byte(s)) {
			t.Errorf("themed svg lacks %q", s)
		}
	}
	for _, mark := range []string{"#010101", "#020202", "#030303", "#040404"} {
		if bytes.Contains(themed, []byte(mark)) {
			t.Errorf("themed svg still holds placeholder colour %s", mark)
		}
	}
	var page bytes.Buffer
	if err := r.HTML(&page); err != nil {
		t.Fatal(err)
	}
	golden(t, filepath.Join("testdata", "golden", "index.html"), page.Bytes())
}

// wellFormed checks that b parses as XML to the end with an <svg> root.
func wellFormed(t *testing.T, name string, b []byte) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(b))
	depth, root := 0, ""
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Errorf("%s: not well-formed XML: %v", name, err)
			return
		}
		switch e := tok.(type) {
		case xml.StartElement:
			if depth == 0 {
				if root != "" {
					t.Errorf("%s: second root element <%s>", name, e.Name.Local)
				}
				root = e.Name.Local
			}
			depth++
		case xml.EndElement:
			depth--
		}
	}
	if root != "svg" {
		t.Errorf("%s: root element %q, want svg", name, root)
	}
}

func golden(t *testing.T, path string, got []byte) {
	t.Helper()
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s: output differs from the golden file (%d bytes, want %d); run go test -update after checking the change", path, len(got), len(want))
	}
}

// TestWriteIsDeterministic writes the report twice and compares every file
// byte for byte, PNGs included.
func TestWriteIsDeterministic(t *testing.T) {
	d, dir := loadSynthetic(t, smallSpec)
	_ = d
	a, b := filepath.Join(dir, "a"), filepath.Join(dir, "b")
	if err := Write(dir, Options{Out: a}); err != nil {
		t.Fatal(err)
	}
	if err := Write(dir, Options{Out: b}); err != nil {
		t.Fatal(err)
	}
	files, err := os.ReadDir(a)
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != 15 { // 7 charts × (svg, png) + index.html
		t.Errorf("got %d files, want 15", len(files))
	}
	for _, f := range files {
		x, _ := os.ReadFile(filepath.Join(a, f.Name()))
		y, err := os.ReadFile(filepath.Join(b, f.Name()))
		if err != nil || !bytes.Equal(x, y) {
			t.Errorf("%s differs between two writes (%v)", f.Name(), err)
		}
		if strings.HasPrefix(f.Name(), ".") {
			t.Errorf("temporary file left behind: %s", f.Name())
		}
	}
}
