package yamlx

import (
	"reflect"
	"strings"
	"testing"

	"github.com/goccy/go-yaml/ast"
)

type inner struct {
	Pos   Pos      `yaml:"-"`
	Every Duration `yaml:"every"`
	Size  Int      `yaml:"size"`
}

// UnmarshalYAML decodes a plain copy, as hoplore's section types do.
func (i *inner) UnmarshalYAML(n ast.Node) error {
	type plain inner
	var p plain
	if err := DecodeNode(n, &p); err != nil {
		return err
	}
	*i = inner(p)
	i.Pos = PosOf(n)
	return nil
}

type list[T any] struct{ Items []T }

func (l *list[T]) DecodesAs() reflect.Type { return reflect.TypeFor[[]T]() }

func (l *list[T]) UnmarshalYAML(n ast.Node) error { return DecodeNode(n, &l.Items) }

type outer struct {
	Name  String           `yaml:"name"`
	Inner inner            `yaml:"inner"`
	Items list[inner]      `yaml:"items"`
	Plain []inner          `yaml:"plain"`
	ByKey map[string]inner `yaml:"by_key"`
}

// TestFirstUnknownField checks that of several unknown keys the first in
// file order is reported, every time (the YAML library picks one of a
// mapping's unknown keys at random, after decoding its known ones).
func TestFirstUnknownField(t *testing.T) {
	tests := []struct {
		name, src, want string
	}{
		{"top level", "name: x\nzz: 1\naa: 2\nmm: 3\n", `2:1: unknown field "zz"`},
		{"before a nested one", "name: x\nzz: 1\ninner: {every: 1s, qq: 2}\n", `2:1: unknown field "zz"`},
		{"nested before a later top-level one", "inner: {every: 1s, qq: 2, bb: 3}\nname: x\nzz: 1\n", `1:20: unknown field "qq"`},
		{"in a list of its own", "items:\n  - {every: 1s}\n  - {size: 2, yy: 1, bb: 2}\nzz: 3\n", `3:15: unknown field "yy"`},
		{"in a plain list", "plain: [{every: 1s, kk: 1, aa: 2}]\n", `1:21: unknown field "kk"`},
		{"in a map", "by_key: {a: {size: 1}, b: {size: 2, ww: 1, cc: 2}}\n", `1:37: unknown field "ww"`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			for range 20 {
				var v outer
				err := Decode("f.yaml", []byte(tt.src), &v)
				if err == nil || !strings.HasSuffix(err.Error(), tt.want) {
					t.Fatalf("got %v, want f.yaml:%s", err, tt.want)
				}
			}
		})
	}
}
