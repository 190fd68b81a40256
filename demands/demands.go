// Package demands reads traffic-matrix files: tables of (source, target,
// rate) rows, optionally with a time column t that makes them a replay of
// consecutive matrices, as CSV, as Parquet, or as the demands of the
// network-design library XML layout (see topologies.ReadNetworkXML).
//
// # Tables
//
// A CSV file has a header row; a Parquet file has columns. The columns,
// matched case-insensitively, are source and target (node names), rate,
// and optionally t and unit:
//
//	source,target,rate_mbps        # the unit in the header: rate_UNIT,
//	Arvenport,Bellcaster,12.5      # rate (UNIT) or rate[UNIT]
//
//	t,source,target,rate,unit      # or a unit column, row by row
//	0,Arvenport,Bellcaster,40,/s
//	300,Arvenport,Bellcaster,55,/s
//
// Units are packet rates (/s, pps, pkt/s, packets/s) or SI bit rates (bps,
// kbps, Mbps, Gbps, bit/s, kbit/s …); a file that gives none takes the
// caller's default, and with no default it is an error (the XML layout
// carries no unit: its demand values are read in the default, else Mbps). t is seconds from
// the start of the replay, or a Go duration string in CSV. Rows with the
// same t form one matrix. Rates must be finite and not negative; source and
// target must differ.
//
// Every problem is an input error naming the file and where in it: a
// *yamlx.Error (FILE:LINE:COL) for CSV and XML, a *RowError (FILE: row N)
// for Parquet.
package demands

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/parquet-go/parquet-go"

	"hoplore/internal/inputerr"
	"hoplore/internal/yamlx"
	"hoplore/topologies"
)

// Unit is the unit of a rate: packets per second, or a multiple of bit/s.
type Unit struct {
	Packets bool    // packets per second
	BPS     float64 // bit/s per unit, when not Packets
	Name    string  // as written
}

// PerSecond converts x in u to packets per second for packets of meanBytes.
func (u Unit) PerSecond(x, meanBytes float64) float64 {
	if u.Packets {
		return x
	}
	return x * u.BPS / (8 * meanBytes)
}

// ParseUnit reads a rate unit: /s, pps, pkt/s, packets/s, or an SI bit rate
// unit such as bps, kbps, Mbps, Gbps or Mbit/s (case-insensitive).
func ParseUnit(s string) (Unit, error) {
	t := strings.TrimSpace(s)
	switch strings.ToLower(t) {
	case "/s", "pps", "pkt/s", "packets/s", "packet/s", "pkts/s":
		return Unit{Packets: true, Name: t}, nil
	case "":
		return Unit{}, fmt.Errorf("no unit")
	}
	l := strings.ToLower(t)
	if !strings.ContainsAny(t, "0123456789") && (strings.HasSuffix(l, "bps") || strings.HasSuffix(l, "bit/s")) {
		if v, err := yamlx.ParseBandwidth("1" + t); err == nil && v > 0 {
			return Unit{BPS: v, Name: t}, nil
		}
	}
	return Unit{}, fmt.Errorf("unknown unit %q (use /s, pps, bps, kbps, Mbps or Gbps)", s)
}

// Row is one demand as read.
type Row struct {
	T              float64 // seconds; 0 when the file has no t column
	Source, Target string
	Rate           float64 // in Unit
	Unit           Unit
	// where the row is, for errors: Pos in CSV and XML files, Row (1-based,
	// data rows) in Parquet files
	Pos yamlx.Pos
	Row int
	// where the source and target cells are (CSV), else zero
	SourcePos, TargetPos yamlx.Pos
}

// Table is a traffic-matrix file as read.
type Table struct {
	Path string
	Rows []Row
	HasT bool // the file has a t column
}

// RowError is a problem with one row of a Parquet file.
type RowError struct {
	File string
	Row  int // 1-based; 0 for the file as a whole
	Msg  string
}

func (e *RowError) Error() string {
	if e.Row == 0 {
		return fmt.Sprintf("%s: %s", e.File, e.Msg)
	}
	return fmt.Sprintf("%s: row %d: %s", e.File, e.Row, e.Msg)
}

// Is marks the error as bad input (inputerr.ErrBadInput).
func (e *RowError) Is(target error) bool { return target == inputerr.ErrBadInput }

// FieldErrorf returns the input error for the source (target false) or
// target cell of row r of table t, at the cell when its place is known.
func (t *Table) FieldErrorf(r Row, target bool, format string, args ...any) error {
	p := r.SourcePos
	if target {
		p = r.TargetPos
	}
	if p != (yamlx.Pos{}) {
		r.Pos = p
	}
	return t.Errorf(r, format, args...)
}

// Errorf returns the input error for row r of table t.
func (t *Table) Errorf(r Row, format string, args ...any) error {
	if r.Row > 0 {
		return &RowError{File: t.Path, Row: r.Row, Msg: fmt.Sprintf(format, args...)}
	}
	return yamlx.Errorf(t.Path, r.Pos, format, args...)
}

// Read reads the traffic-matrix file data (named path, which selects the
// layout by its extension: .csv, .parquet, .xml) with def as the unit of
// files that give none (nil: none).
func Read(path string, data []byte, def *Unit) (*Table, error) {
	switch strings.ToLower(filepath.Ext(path)) {
	case ".csv", ".parquet":
		return readTable(path, data, def)
	case ".xml":
		return readXML(path, data, def)
	}
	return nil, &RowError{File: path, Msg: "not a traffic-matrix file: name it .csv, .parquet or .xml"}
}

// headerUnit splits a rate column's name into "rate" and its unit, if any:
// rate, rate_UNIT, rate (UNIT) or rate[UNIT].
func headerUnit(name string) (bool, string) {
	t := strings.TrimSpace(name)
	if len(t) < 4 || !strings.EqualFold(t[:4], "rate") {
		return false, ""
	}
	rest := strings.TrimLeft(t[4:], " ")
	switch {
	case rest == "" && len(t) == 4:
		return true, ""
	case strings.HasPrefix(rest, "_") && len(t[4:]) == len(rest):
		return true, strings.TrimSpace(rest[1:])
	case strings.HasPrefix(rest, "(") && strings.HasSuffix(rest, ")") && len(rest) >= 2:
		return true, strings.TrimSpace(rest[1 : len(rest)-1])
	case strings.HasPrefix(rest, "[") && strings.HasSuffix(rest, "]") && len(rest) >= 2:
		return true, strings.TrimSpace(rest[1 : len(rest)-1])
	}
	return false, ""
}

type columns struct {
	source, target, rate, t, unit int
	headerUnit                    *Unit
}

func findColumns(names []string, errAt func(col int, format string, args ...any) error) (*columns, error) {
	c := &columns{source: -1, target: -1, rate: -1, t: -1, unit: -1}
	for i, n := range names {
		ln := strings.ToLower(strings.TrimSpace(n))
		var dst *int
		switch ln {
		case "source":
			dst = &c.source
		case "target":
			dst = &c.target
		case "t":
			dst = &c.t
		case "unit":
			dst = &c.unit
		default:
			if ok, u := headerUnit(n); ok {
				dst = &c.rate
				if u != "" {
					unit, err := ParseUnit(u)
					if err != nil {
						return nil, errAt(i, "column %q: %v", n, err)
					}
					c.headerUnit = &unit
				}
			}
		}
		if dst == nil {
			return nil, errAt(i, "unknown column %q (columns: source, target, rate or rate_UNIT, and optionally t and unit)", n)
		}
		if *dst >= 0 {
			return nil, errAt(i, "column %q is given twice", n)
		}
		*dst = i
	}
	for _, need := range []struct {
		name string
		i    int
	}{{"source", c.source}, {"target", c.target}, {"rate", c.rate}} {
		if need.i < 0 {
			return nil, errAt(0, "no %s column (columns: source, target, rate or rate_UNIT, and optionally t and unit)", need.name)
		}
	}
	if c.unit >= 0 && c.headerUnit != nil {
		return nil, errAt(c.unit, "a unit column and a unit in the rate column's name: give one")
	}
	return c, nil
}

// field is one cell as read, with where it is.
type field struct {
	s   string
	f   float64 // Parquet numbers
	num bool
	pos yamlx.Pos
}

// row checks one row's cells and appends it.
func (t *Table) row(c *columns, cells func(i int) field, r Row, def *Unit) error {
	at := func(f field, format string, args ...any) error {
		rr := r
		if f.pos != (yamlx.Pos{}) {
			rr.Pos = f.pos
		}
		return t.Errorf(rr, format, args...)
	}
	src, dst := cells(c.source), cells(c.target)
	r.Source, r.Target = strings.TrimSpace(src.s), strings.TrimSpace(dst.s)
	r.SourcePos, r.TargetPos = src.pos, dst.pos
	if r.Source == "" {
		return at(src, "source: empty")
	}
	if r.Target == "" {
		return at(dst, "target: empty")
	}
	if r.Source == r.Target {
		return at(dst, "target: a demand needs two different nodes, got %q twice", r.Source)
	}
	rate := cells(c.rate)
	x := rate.f
	if !rate.num {
		v, err := strconv.ParseFloat(strings.TrimSpace(rate.s), 64)
		if err != nil {
			return at(rate, "rate: %q is not a number", rate.s)
		}
		x = v
	}
	if x < 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return at(rate, "rate: must be a finite number, not negative, got %g", x)
	}
	r.Rate = x
	switch {
	case c.headerUnit != nil:
		r.Unit = *c.headerUnit
	case c.unit >= 0:
		u := cells(c.unit)
		unit, err := ParseUnit(u.s)
		if err != nil {
			return at(u, "unit: %v", err)
		}
		r.Unit = unit
	case def != nil:
		r.Unit = *def
	default:
		return at(rate, "rate: no unit: give a unit column, a unit in the header such as rate_mbps, or unit: in the experiment")
	}
	if c.t >= 0 {
		tf := cells(c.t)
		v := tf.f
		if !tf.num {
			s := strings.TrimSpace(tf.s)
			if f, err := strconv.ParseFloat(s, 64); err == nil {
				v = f
			} else if d, err := time.ParseDuration(s); err == nil {
				v = d.Seconds()
			} else {
				return at(tf, "t: %q is neither seconds nor a duration such as 5m", tf.s)
			}
		}
		if v < 0 || math.IsNaN(v) || math.IsInf(v, 0) {
			return at(tf, "t: must be a finite time, not negative, got %g", v)
		}
		r.T = v
	}
	t.Rows = append(t.Rows, r)
	return nil
}

// rawTable is a CSV or Parquet file's header and cells.
type rawTable struct {
	header   []string
	headerAt func(col int) error // an error at a header cell, by format
	rows     []rawRow
}

type rawRow struct {
	cells []field
	pos   yamlx.Pos // CSV: where the row starts
	row   int       // Parquet: 1-based row
}

// readRaw reads a CSV (by extension) or Parquet file's header and cells.
func readRaw(path string, data []byte, hint string) (*rawTable, func(col int, format string, args ...any) error, error) {
	if strings.ToLower(filepath.Ext(path)) == ".parquet" {
		return readRawParquet(path, data)
	}
	return readRawCSV(path, data, hint)
}

func readRawCSV(path string, data []byte, hint string) (*rawTable, func(col int, format string, args ...any) error, error) {
	rd := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))))
	rd.TrimLeadingSpace = true
	rd.Comment = '#'
	csvErr := func(err error) error {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			return yamlx.Errorf(path, yamlx.Pos{Line: pe.Line, Col: pe.Column}, "malformed CSV: %v", pe.Err)
		}
		return yamlx.Errorf(path, yamlx.Pos{}, "malformed CSV: %v", err)
	}
	head, err := rd.Read()
	if err == io.EOF {
		return nil, nil, yamlx.Errorf(path, yamlx.Pos{Line: 1, Col: 1}, "empty file: a header row %s is required", hint)
	}
	if err != nil {
		return nil, nil, csvErr(err)
	}
	posOf := func(i int) yamlx.Pos {
		l, c := rd.FieldPos(i)
		return yamlx.Pos{Line: l, Col: c}
	}
	headPos := make([]yamlx.Pos, len(head))
	for i := range head {
		headPos[i] = posOf(i)
	}
	at := func(col int, format string, args ...any) error {
		return yamlx.Errorf(path, headPos[min(col, len(headPos)-1)], format, args...)
	}
	t := &rawTable{header: head}
	for {
		rec, err := rd.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, nil, csvErr(err)
		}
		r := rawRow{pos: posOf(0), cells: make([]field, len(rec))}
		for i, s := range rec {
			r.cells[i] = field{s: s, pos: posOf(i)}
		}
		t.rows = append(t.rows, r)
	}
	return t, at, nil
}

func readRawParquet(path string, data []byte) (*rawTable, func(col int, format string, args ...any) error, error) {
	pf, err := parquet.OpenFile(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		return nil, nil, &RowError{File: path, Msg: fmt.Sprintf("not a readable Parquet file: %v", err)}
	}
	fields := pf.Schema().Fields()
	t := &rawTable{header: make([]string, len(fields))}
	for i, f := range fields {
		t.header[i] = f.Name()
		if !f.Leaf() {
			return nil, nil, &RowError{File: path, Msg: fmt.Sprintf("column %q is nested; give flat columns", f.Name())}
		}
	}
	at := func(col int, format string, args ...any) error {
		return &RowError{File: path, Msg: fmt.Sprintf(format, args...)}
	}
	rd := parquet.NewReader(pf)
	defer rd.Close()
	buf := make([]parquet.Row, 256)
	n := 0
	for {
		k, err := rd.ReadRows(buf)
		for _, row := range buf[:k] {
			n++
			r := rawRow{row: n, cells: make([]field, len(fields))}
			for _, v := range row {
				ci := v.Column()
				if ci < 0 || ci >= len(fields) {
					continue
				}
				switch v.Kind() {
				case parquet.ByteArray, parquet.FixedLenByteArray:
					r.cells[ci] = field{s: string(v.ByteArray())}
				case parquet.Double:
					r.cells[ci] = field{f: v.Double(), num: true}
				case parquet.Float:
					r.cells[ci] = field{f: float64(v.Float()), num: true}
				case parquet.Int32:
					r.cells[ci] = field{f: float64(v.Int32()), num: true}
				case parquet.Int64:
					r.cells[ci] = field{f: float64(v.Int64()), num: true}
				}
			}
			t.rows = append(t.rows, r)
		}
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, nil, &RowError{File: path, Row: n + 1, Msg: fmt.Sprintf("cannot read: %v", err)}
		}
	}
	return t, at, nil
}

func readTable(path string, data []byte, def *Unit) (*Table, error) {
	raw, at, err := readRaw(path, data, "source,target,rate")
	if err != nil {
		return nil, err
	}
	c, err := findColumns(raw.header, at)
	if err != nil {
		return nil, err
	}
	if len(raw.rows) == 0 {
		return nil, at(0, "no demands: the file has no rows")
	}
	t := &Table{Path: path, HasT: c.t >= 0}
	for _, r := range raw.rows {
		cells := func(i int) field { return r.cells[i] }
		if err := t.row(c, cells, Row{Pos: r.pos, Row: r.row}, def); err != nil {
			return nil, err
		}
	}
	return t, nil
}

func readXML(path string, data []byte, def *Unit) (*Table, error) {
	x, err := topologies.ReadNetworkXML(path, data, topologies.ReadOptions{Keep: topologies.KeepLargestComponent})
	if err != nil {
		return nil, err
	}
	if len(x.Demands) == 0 {
		return nil, yamlx.Errorf(path, yamlx.Pos{Line: 1, Col: 1}, "no demands: the file has no <demands>")
	}
	u := Unit{BPS: 1e6, Name: "Mbps"}
	if def != nil {
		u = *def
	}
	t := &Table{Path: path}
	for _, d := range x.Demands {
		t.Rows = append(t.Rows, Row{Source: d.Source, Target: d.Target, Rate: d.Value, Unit: u, Pos: d.Pos})
	}
	return t, nil
}
