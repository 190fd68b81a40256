package experiments

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"reflect"
	"slices"
	"strconv"
)

// hashVersion names the canonical form hashed; it changes whenever the form
// does, so that a hash never means two things.
const hashVersion = "hoplore-experiment-1"

// canonicalHash returns the hex SHA-256 of e's canonical form: every
// exported field of the checked experiment that decides its runs (name,
// times, replicates, seed, hop limit, every topology's label and graph, the
// traffic model with any matrix file's demands, the loads, every agent's
// parameters, every failure schedule, the conditions), and nothing else:
// not comments, formatting, the order of keys in a mapping, the description
// (fields tagged hash:"-"), nor how a topology or matrix file spelled its
// contents. A field added to Experiment is covered unless tagged.
func canonicalHash(e *Experiment) string {
	h := sha256.New()
	io.WriteString(h, hashVersion)
	writeCanonical(h, reflect.ValueOf(e))
	return hex.EncodeToString(h.Sum(nil))
}

// writeCanonical writes v to w in a form that depends only on its value:
// struct fields by name (exported ones only), pointers by what they point
// to, map entries in key order, numbers in Go's shortest exact form.
func writeCanonical(w io.Writer, v reflect.Value) {
	switch v.Kind() {
	case reflect.Invalid:
		io.WriteString(w, "nil")
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			io.WriteString(w, "nil")
			return
		}
		writeCanonical(w, v.Elem())
	case reflect.Struct:
		t := v.Type()
		io.WriteString(w, "{")
		for i := range t.NumField() {
			if f := t.Field(i); !f.IsExported() || f.Tag.Get("hash") == "-" {
				continue
			}
			io.WriteString(w, t.Field(i).Name+":")
			writeCanonical(w, v.Field(i))
			io.WriteString(w, ";")
		}
		io.WriteString(w, "}")
	case reflect.Slice, reflect.Array:
		fmt.Fprintf(w, "[%d:", v.Len())
		for i := range v.Len() {
			writeCanonical(w, v.Index(i))
			io.WriteString(w, ",")
		}
		io.WriteString(w, "]")
	case reflect.Map:
		keys := v.MapKeys()
		texts := make([]string, len(keys))
		order := make([]int, len(keys))
		for i, k := range keys {
			texts[i] = fmt.Sprint(k.Interface())
			order[i] = i
		}
		slices.SortFunc(order, func(a, b int) int {
			if texts[a] < texts[b] {
				return -1
			}
			if texts[a] > texts[b] {
				return 1
			}
			return 0
		})
		fmt.Fprintf(w, "map[%d:", len(keys))
		for _, i := range order {
			writeCanonical(w, keys[i])
			io.WriteString(w, "=")
			writeCanonical(w, v.MapIndex(keys[i]))
			io.WriteString(w, ",")
		}
		io.WriteString(w, "]")
	case reflect.String:
		io.WriteString(w, strconv.Quote(v.String()))
	case reflect.Bool:
		io.WriteString(w, strconv.FormatBool(v.Bool()))
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		io.WriteString(w, strconv.FormatInt(v.Int(), 10))
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		io.WriteString(w, strconv.FormatUint(v.Uint(), 10))
	case reflect.Float32, reflect.Float64:
		io.WriteString(w, strconv.FormatFloat(v.Float(), 'g', -1, 64))
	default:
		// funcs and channels say nothing about the runs
		panic(fmt.Sprintf("experiments: no canonical form for a %s", v.Type()))
	}
}
