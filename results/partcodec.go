package results

import (
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"math"
	"reflect"
	"strings"
)

// A part file stores one run's rows compactly, for resuming and assembling:
//
//	magic "hoplore-part\n", format version (1 byte)
//	five sections: dims (1 row), runs (1 row), series, links, recoveries
//	a sixth, flows, when the run has flow rows or optimum rows (then
//	possibly empty), and a seventh, the cell's optimum rows, when it has some
//	CRC-32C of everything before it (4 bytes, little endian)
//
// A section is self-describing: uvarint field count, then per field its
// column name (uvarint length + bytes) and wire kind (1 byte), then uvarint
// row count and the rows, field by field. Readers match fields by column
// name and kind, so a part written before a column was added still reads
// (the new column is zero or null). The dimensions are stored once per run
// and every row of the run carries them. Parts are an internal format;
// the tables a notebook reads are Parquet.
const (
	partMagic   = "hoplore-part\n"
	partVersion = 1
)

// wire kinds
const (
	wString   byte = 1
	wInt      byte = 2 // zigzag varint
	wUint     byte = 3 // uvarint
	wFloat    byte = 4 // IEEE 754 bits, 8 bytes little endian
	wOptFloat byte = 5 // 0 (null) or 1 followed by wFloat
)

var crcTable = crc32.MakeTable(crc32.Castagnoli)

// codecField is one encoded column of a row type.
type codecField struct {
	name  string
	wire  byte
	index int // field index in the struct
}

type codecPlan struct {
	fields []codecField
	byName map[string]int
}

// planOf lists the columns of a row struct type, skipping the embedded
// dimensions (stored once per part).
func planOf(t reflect.Type) *codecPlan {
	p := &codecPlan{byName: map[string]int{}}
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		if f.Anonymous {
			continue
		}
		name, _, _ := strings.Cut(f.Tag.Get("parquet"), ",")
		var w byte
		switch {
		case f.Type.Kind() == reflect.String:
			w = wString
		case f.Type.Kind() == reflect.Int || f.Type.Kind() == reflect.Int64:
			w = wInt
		case f.Type.Kind() == reflect.Uint64:
			w = wUint
		case f.Type.Kind() == reflect.Float64:
			w = wFloat
		case f.Type.Kind() == reflect.Pointer && f.Type.Elem().Kind() == reflect.Float64:
			w = wOptFloat
		default:
			panic(fmt.Sprintf("results: no part encoding for %s.%s of type %s", t, f.Name, f.Type))
		}
		p.byName[name] = len(p.fields)
		p.fields = append(p.fields, codecField{name: name, wire: w, index: i})
	}
	return p
}

var (
	planDims     = planOf(reflect.TypeFor[Dims]())
	planRuns     = planOf(reflect.TypeFor[RunRow]())
	planSeries   = planOf(reflect.TypeFor[SeriesRow]())
	planLinks    = planOf(reflect.TypeFor[LinkRow]())
	planRecovery = planOf(reflect.TypeFor[RecoveryRow]())
	planFlows    = planOf(reflect.TypeFor[FlowRow]())
	planOptimum  = planOf(reflect.TypeFor[OptimumRow]())
)

// encodePart encodes t; every row must carry t.Run.Dims.
func encodePart(t *RunTables) []byte {
	b := make([]byte, 0, 256+64*(len(t.Series)+len(t.Links)+len(t.Recoveries)+len(t.Flows)+2*len(t.Optimum)))
	b = append(b, partMagic...)
	b = append(b, partVersion)
	d := t.Run.Dims
	b = planDims.encode(b, reflect.ValueOf(&d).Elem(), 1, false)
	run := t.Run
	b = planRuns.encode(b, reflect.ValueOf(&run).Elem(), 1, false)
	b = planSeries.encode(b, reflect.ValueOf(t.Series), len(t.Series), true)
	b = planLinks.encode(b, reflect.ValueOf(t.Links), len(t.Links), true)
	b = planRecovery.encode(b, reflect.ValueOf(t.Recoveries), len(t.Recoveries), true)
	if len(t.Flows) > 0 || len(t.Optimum) > 0 {
		b = planFlows.encode(b, reflect.ValueOf(t.Flows), len(t.Flows), true)
	}
	if len(t.Optimum) > 0 {
		b = planOptimum.encode(b, reflect.ValueOf(t.Optimum), len(t.Optimum), true)
	}
	return binary.LittleEndian.AppendUint32(b, crc32.Checksum(b, crcTable))
}

// encode appends the section of n rows: v is a slice when slice is true,
// else the single row itself.
func (p *codecPlan) encode(b []byte, v reflect.Value, n int, slice bool) []byte {
	b = binary.AppendUvarint(b, uint64(len(p.fields)))
	for _, f := range p.fields {
		b = binary.AppendUvarint(b, uint64(len(f.name)))
		b = append(b, f.name...)
		b = append(b, f.wire)
	}
	b = binary.AppendUvarint(b, uint64(n))
	for r := 0; r < n; r++ {
		row := v
		if slice {
			row = v.Index(r)
		}
		for _, f := range p.fields {
			fv := row.Field(f.index)
			switch f.wire {
			case wString:
				s := fv.String()
				b = binary.AppendUvarint(b, uint64(len(s)))
				b = append(b, s...)
			case wInt:
				b = binary.AppendVarint(b, fv.Int())
			case wUint:
				b = binary.AppendUvarint(b, fv.Uint())
			case wFloat:
				b = binary.LittleEndian.AppendUint64(b, math.Float64bits(fv.Float()))
			case wOptFloat:
				if fv.IsNil() {
					b = append(b, 0)
				} else {
					b = append(b, 1)
					b = binary.LittleEndian.AppendUint64(b, math.Float64bits(fv.Elem().Float()))
				}
			}
		}
	}
	return b
}

var errCorruptPart = errors.New("corrupt part")

// partReader decodes a part from a byte slice.
type partReader struct {
	b   []byte
	err error
}

func (r *partReader) fail() {
	if r.err == nil {
		r.err = errCorruptPart
	}
	r.b = nil
}

func (r *partReader) uvarint() uint64 {
	v, n := binary.Uvarint(r.b)
	if n <= 0 {
		r.fail()
		return 0
	}
	r.b = r.b[n:]
	return v
}

func (r *partReader) varint() int64 {
	v, n := binary.Varint(r.b)
	if n <= 0 {
		r.fail()
		return 0
	}
	r.b = r.b[n:]
	return v
}

func (r *partReader) bytes(n uint64) []byte {
	if n > uint64(len(r.b)) {
		r.fail()
		return nil
	}
	s := r.b[:n]
	r.b = r.b[n:]
	return s
}

func (r *partReader) byte1() byte {
	if len(r.b) < 1 {
		r.fail()
		return 0
	}
	c := r.b[0]
	r.b = r.b[1:]
	return c
}

func (r *partReader) float() float64 {
	s := r.bytes(8)
	if s == nil {
		return 0
	}
	return math.Float64frombits(binary.LittleEndian.Uint64(s))
}

// section decodes a section of rows of p's type; newRows returns the row
// value to fill for row i once the count is known.
func (r *partReader) section(p *codecPlan, alloc func(n int), row func(i int) reflect.Value) {
	nf := r.uvarint()
	if nf > uint64(len(r.b)) {
		r.fail()
		return
	}
	type src struct {
		wire byte
		dst  int // field index in the struct, or -1 to skip
	}
	srcs := make([]src, nf)
	for i := range srcs {
		name := r.bytes(r.uvarint())
		w := r.byte1()
		srcs[i] = src{wire: w, dst: -1}
		if j, ok := p.byName[string(name)]; ok && p.fields[j].wire == w {
			srcs[i].dst = p.fields[j].index
		}
		if w < wString || w > wOptFloat {
			r.fail()
		}
	}
	n := r.uvarint()
	if r.err != nil || n > uint64(len(r.b)) { // every row takes at least a byte
		r.fail()
		return
	}
	alloc(int(n))
	for i := 0; i < int(n) && r.err == nil; i++ {
		v := row(i)
		for _, s := range srcs {
			switch s.wire {
			case wString:
				b := r.bytes(r.uvarint())
				if s.dst >= 0 {
					v.Field(s.dst).SetString(string(b))
				}
			case wInt:
				x := r.varint()
				if s.dst >= 0 {
					v.Field(s.dst).SetInt(x)
				}
			case wUint:
				x := r.uvarint()
				if s.dst >= 0 {
					v.Field(s.dst).SetUint(x)
				}
			case wFloat:
				x := r.float()
				if s.dst >= 0 {
					v.Field(s.dst).SetFloat(x)
				}
			case wOptFloat:
				if r.byte1() == 1 {
					x := r.float()
					if s.dst >= 0 {
						v.Field(s.dst).Set(reflect.ValueOf(&x))
					}
				}
			}
		}
	}
}

// decodePart decodes a part file's bytes.
func decodePart(b []byte) (*RunTables, error) {
	if len(b) < len(partMagic)+1+4 || string(b[:len(partMagic)]) != partMagic {
		return nil, fmt.Errorf("%w: not a part file", errCorruptPart)
	}
	body, sum := b[:len(b)-4], binary.LittleEndian.Uint32(b[len(b)-4:])
	if crc32.Checksum(body, crcTable) != sum {
		return nil, fmt.Errorf("%w: checksum mismatch", errCorruptPart)
	}
	if v := b[len(partMagic)]; v != partVersion {
		return nil, fmt.Errorf("%w: format version %d, want %d", errCorruptPart, v, partVersion)
	}
	r := &partReader{b: body[len(partMagic)+1:]}
	t := &RunTables{}
	var d Dims
	one := func(v reflect.Value) (func(int), func(int) reflect.Value) {
		return func(n int) {
				if n != 1 {
					r.fail()
				}
			}, func(int) reflect.Value {
				return v
			}
	}
	alloc, row := one(reflect.ValueOf(&d).Elem())
	r.section(planDims, alloc, row)
	alloc, row = one(reflect.ValueOf(&t.Run).Elem())
	r.section(planRuns, alloc, row)
	t.Run.Dims = d
	r.section(planSeries, func(n int) {
		if n > 0 {
			t.Series = make([]SeriesRow, n)
		}
	}, func(i int) reflect.Value {
		t.Series[i].Dims = d
		return reflect.ValueOf(&t.Series[i]).Elem()
	})
	r.section(planLinks, func(n int) {
		if n > 0 {
			t.Links = make([]LinkRow, n)
		}
	}, func(i int) reflect.Value {
		t.Links[i].Dims = d
		return reflect.ValueOf(&t.Links[i]).Elem()
	})
	r.section(planRecovery, func(n int) {
		if n > 0 {
			t.Recoveries = make([]RecoveryRow, n)
		}
	}, func(i int) reflect.Value {
		t.Recoveries[i].Dims = d
		return reflect.ValueOf(&t.Recoveries[i]).Elem()
	})
	if r.err == nil && len(r.b) != 0 {
		r.section(planFlows, func(n int) {
			if n > 0 {
				t.Flows = make([]FlowRow, n)
			}
		}, func(i int) reflect.Value {
			t.Flows[i].Dims = d
			return reflect.ValueOf(&t.Flows[i]).Elem()
		})
	}
	if r.err == nil && len(r.b) != 0 {
		r.section(planOptimum, func(n int) {
			if n > 0 {
				t.Optimum = make([]OptimumRow, n)
			}
		}, func(i int) reflect.Value {
			return reflect.ValueOf(&t.Optimum[i]).Elem()
		})
	}
	if r.err == nil && len(r.b) != 0 {
		r.fail()
	}
	if r.err != nil {
		return nil, r.err
	}
	return t, nil
}
