package topologies

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"hoplore/internal/yamlx"
)

// checkParsed: a parser either fails with a *yamlx.Error or returns a valid
// graph that survives export and import in both formats unchanged.
func checkParsed(t *testing.T, what string, err error, parsed func() error) {
	t.Helper()
	if err != nil {
		var ye *yamlx.Error
		if !errors.As(err, &ye) {
			t.Fatalf("%s: error %T %v, want *yamlx.Error", what, err, err)
		}
		return
	}
	if err := parsed(); err != nil {
		t.Fatal(err)
	}
}

func fuzzSeeds(f *testing.F, ext string) {
	for _, c := range malformed {
		if filepath.Ext(c.file) == ext {
			f.Add([]byte(c.text))
		}
	}
	if ext == ".yaml" {
		mesh, err := os.ReadFile(filepath.Join("..", "examples", "mesh-10.yaml"))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(mesh)
	}
	// Small generated graphs, with plane coordinates and without.
	for _, g := range []struct {
		name   string
		params map[string]float64
	}{{"waxman", map[string]float64{"nodes": 4}}, {"fat-tree", map[string]float64{"k": 2, "delay_ms": 0.5}}} {
		gr, err := Generate(g.name, g.params)
		if err != nil {
			f.Fatal(err)
		}
		var buf bytes.Buffer
		if ext == ".yaml" {
			err = WriteYAML(&buf, gr)
		} else {
			err = WriteGraphML(&buf, gr)
		}
		if err != nil {
			f.Fatal(err)
		}
		f.Add(buf.Bytes())
	}
}

func FuzzParseFile(f *testing.F) {
	fuzzSeeds(f, ".yaml")
	f.Fuzz(func(t *testing.T, data []byte) {
		g, err := ParseFile("f.yaml", data)
		checkParsed(t, "ParseFile", err, func() error {
			if err := g.Validate(); err != nil {
				return err
			}
			var buf bytes.Buffer
			if err := WriteYAML(&buf, g); err != nil {
				return err
			}
			back, err := ParseFile("f.yaml", buf.Bytes())
			if err != nil {
				t.Fatalf("exported file does not read back: %v\n%s", err, buf.String())
			}
			if !reflect.DeepEqual(g, back) {
				t.Fatalf("YAML round trip differs:\n got %+v\nwant %+v", back, g)
			}
			return nil
		})
	})
}

func FuzzParseGraphML(f *testing.F) {
	fuzzSeeds(f, ".graphml")
	if data, err := os.ReadFile(filepath.Join("..", "testdata", "collection-layout.graphml")); err == nil {
		f.Add(data)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		g, err := ParseGraphML("f.graphml", data)
		checkParsed(t, "ParseGraphML", err, func() error {
			if err := g.Validate(); err != nil {
				return err
			}
			var buf bytes.Buffer
			if err := WriteGraphML(&buf, g); err != nil {
				return err
			}
			back, err := ParseGraphML("f.graphml", buf.Bytes())
			if err != nil {
				t.Fatalf("exported file does not read back: %v\n%s", err, buf.String())
			}
			if !reflect.DeepEqual(g, back) {
				t.Fatalf("GraphML round trip differs:\n got %+v\nwant %+v", back, g)
			}
			return nil
		})
	})
}

// FuzzReadNetworkXML: the network-design XML reader either fails with a
// *yamlx.Error or returns a valid graph and demands between its nodes.
func FuzzReadNetworkXML(f *testing.F) {
	data, err := os.ReadFile(filepath.Join("..", "testdata", "design-layout.xml"))
	if err != nil {
		f.Fatal(err)
	}
	f.Add(data)
	f.Add([]byte("<network><networkStructure><nodes><node id=\"a\"/></nodes></networkStructure></network>"))
	f.Fuzz(func(t *testing.T, data []byte) {
		x, err := ReadNetworkXML("f.xml", data, ReadOptions{})
		checkParsed(t, "ReadNetworkXML", err, func() error {
			if err := x.Graph.Validate(); err != nil {
				return err
			}
			for _, d := range x.Demands {
				_, okS := x.Graph.NodeIndex(d.Source)
				_, okT := x.Graph.NodeIndex(d.Target)
				if !okS || !okT || d.Source == d.Target || d.Value < 0 {
					t.Fatalf("demand %+v", d)
				}
			}
			return nil
		})
	})
}
