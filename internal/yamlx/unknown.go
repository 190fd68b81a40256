package yamlx

import (
	"errors"
	"reflect"
	"strings"

	"github.com/goccy/go-yaml"
	"github.com/goccy/go-yaml/ast"
	"github.com/goccy/go-yaml/parser"
)

// UnknownField returns the error for a mapping key that is not a field
// where it is written; decoders that read keys themselves use it, so that
// Decode reports the first unknown field of a file in file order.
func UnknownField(pos Pos, name string) error {
	return &unknownFieldError{posError{pos: pos, msg: `unknown field "` + name + `"`}}
}

type unknownFieldError struct{ posError }

func (e *unknownFieldError) Unwrap() error { return &e.posError }

// isUnknownField reports whether err is an unknown-field error, the YAML
// library's or UnknownField's.
func isUnknownField(err error) bool {
	var lib *yaml.UnknownFieldError
	var ours *unknownFieldError
	return errors.As(err, &lib) || errors.As(err, &ours)
}

// firstUnknown returns the first key in file order, anywhere in data, that
// the type of v would not accept: the YAML library reports one of a
// mapping's unknown keys at random, and only once the mapping's known
// fields are decoded. It returns nil when it finds none (a key only a
// decoder of its own would refuse).
func firstUnknown(file string, data []byte, v any) error {
	f, err := parser.ParseBytes(data, 0)
	if err != nil || len(f.Docs) == 0 {
		return nil
	}
	key, name := unknownIn(f.Docs[0].Body, reflect.TypeOf(v))
	if key == nil {
		return nil
	}
	return &Error{File: file, Pos: PosOf(key), Msg: `unknown field "` + name + `"`}
}

var nodeUnmarshaler = reflect.TypeFor[interface{ UnmarshalYAML(ast.Node) error }]()

// Container is implemented by a type with a decoder of its own that decodes
// its node as another type (such as a list that remembers its position), so
// that the search for unknown fields can look inside it.
type Container interface {
	// DecodesAs returns the type the node is decoded as.
	DecodesAs() reflect.Type
}

var containerType = reflect.TypeFor[Container]()

// unknownIn walks n as the YAML library would decode it into a value of
// type t, keys in file order, and returns the first key t does not accept.
// A type with a decoder of its own is looked into when it is a Container,
// or a struct with yaml tags: such types decode their mapping as those
// fields (the usual `type plain T` pattern); the others read their keys
// themselves.
func unknownIn(n ast.Node, t reflect.Type) (ast.Node, string) {
	for {
		switch m := n.(type) {
		case *ast.TagNode:
			n = m.Value
			continue
		case *ast.AnchorNode:
			n = m.Value
			continue
		}
		break
	}
	if n == nil || t == nil {
		return nil, ""
	}
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	if reflect.PointerTo(t).Implements(containerType) {
		return unknownIn(n, reflect.New(t).Interface().(Container).DecodesAs())
	}
	if reflect.PointerTo(t).Implements(nodeUnmarshaler) && !(t.Kind() == reflect.Struct && hasYAMLTags(t)) {
		return nil, ""
	}
	switch t.Kind() {
	case reflect.Struct:
		pairs, ok := pairsOf(n)
		if !ok {
			return nil, ""
		}
		fields := map[string]reflect.Type{}
		structFields(t, fields)
		for _, p := range pairs {
			name := keyName(p.Key)
			if name == "<<" {
				continue
			}
			ft, ok := fields[name]
			if !ok {
				return p.Key, name
			}
			if k, s := unknownIn(p.Value, ft); k != nil {
				return k, s
			}
		}
	case reflect.Slice, reflect.Array:
		if s, ok := n.(*ast.SequenceNode); ok {
			for _, item := range s.Values {
				if k, name := unknownIn(item, t.Elem()); k != nil {
					return k, name
				}
			}
		}
	case reflect.Map:
		if pairs, ok := pairsOf(n); ok {
			for _, p := range pairs {
				if k, name := unknownIn(p.Value, t.Elem()); k != nil {
					return k, name
				}
			}
		}
	}
	return nil, ""
}

// structFields adds the keys a struct accepts, with their types, as the
// YAML library names them (the yaml tag, else the lower-cased field name;
// inline fields contribute theirs).
func structFields(t reflect.Type, into map[string]reflect.Type) {
	for i := range t.NumField() {
		f := t.Field(i)
		tag := f.Tag.Get("yaml")
		if (f.PkgPath != "" && !f.Anonymous) || tag == "-" {
			continue
		}
		opts := strings.Split(tag, ",")
		if inlineOpt(opts) {
			ft := f.Type
			for ft.Kind() == reflect.Pointer {
				ft = ft.Elem()
			}
			if ft.Kind() == reflect.Struct {
				structFields(ft, into)
			}
			continue
		}
		name := strings.ToLower(f.Name)
		if opts[0] != "" {
			name = opts[0]
		}
		into[name] = f.Type
	}
}

func inlineOpt(opts []string) bool {
	for _, o := range opts[1:] {
		if o == "inline" {
			return true
		}
	}
	return false
}

func hasYAMLTags(t reflect.Type) bool {
	for i := range t.NumField() {
		if tag := t.Field(i).Tag.Get("yaml"); tag != "" && tag != "-" {
			return true
		}
	}
	return false
}

func pairsOf(n ast.Node) ([]*ast.MappingValueNode, bool) {
	switch m := n.(type) {
	case *ast.MappingNode:
		return m.Values, true
	case *ast.MappingValueNode:
		return []*ast.MappingValueNode{m}, true
	}
	return nil, false
}

func keyName(k ast.Node) string {
	if t := k.GetToken(); t != nil {
		return t.Value
	}
	return k.String()
}
