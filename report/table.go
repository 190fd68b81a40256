package report

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"

	"github.com/parquet-go/parquet-go"

	"hoplore/internal/inputerr"
)

// table is a Parquet file read column by column, by name, with every
// numeric column widened to float64 and every byte-array column kept as a
// string. It lets the report read result tables without depending on the
// exact Go types their writer used (int32 or int64, float or double).
type table struct {
	path string
	rows int
	cols map[string]*column
}

// column holds one column's values; null numeric values are NaN, null
// strings are empty.
type column struct {
	num []float64
	raw []int64 // the exact integers of an integer column (0 where null)
	str []string
	isS bool
}

// errNoFile marks a result table that is absent.
var errNoFile = errors.New("no such table")

// readTable reads the named columns of the Parquet file at path. Columns in
// required must exist; columns in optional may be missing (they then read
// as NaN or "").
func readTable(path string, required, optional []string) (*table, error) {
	f, err := os.Open(path)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, inputErr("report: %s: %w", path, errNoFile)
		}
		return nil, fmt.Errorf("report: %w", err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	pf, err := parquet.OpenFile(f, st.Size())
	if err != nil {
		return nil, fmt.Errorf("report: %s: %w", path, err)
	}
	t := &table{path: path, rows: int(pf.NumRows()), cols: map[string]*column{}}
	byIndex := make([]*column, len(pf.Schema().Columns())) // by leaf column index
	add := func(name string, must bool) error {
		leaf, ok := pf.Schema().Lookup(name)
		if !ok {
			if must {
				return inputErr("report: %s: missing column %q", path, name)
			}
			return nil
		}
		c := &column{}
		switch leaf.Node.Type().Kind() {
		case parquet.ByteArray, parquet.FixedLenByteArray:
			c.isS = true
			c.str = make([]string, 0, t.rows)
		default:
			c.num = make([]float64, 0, t.rows)
		}
		t.cols[name] = c
		byIndex[leaf.ColumnIndex] = c
		return nil
	}
	for _, n := range required {
		if err := add(n, true); err != nil {
			return nil, err
		}
	}
	for _, n := range optional {
		if _, dup := t.cols[n]; !dup {
			if err := add(n, false); err != nil {
				return nil, err
			}
		}
	}
	buf := make([]parquet.Row, 256)
	for _, rg := range pf.RowGroups() {
		rows := rg.Rows()
		for {
			n, err := rows.ReadRows(buf)
			for _, row := range buf[:n] {
				for _, v := range row {
					if i := v.Column(); i >= 0 && i < len(byIndex) && byIndex[i] != nil {
						byIndex[i].append(v)
					}
				}
			}
			if err == io.EOF {
				break
			}
			if err != nil {
				rows.Close()
				return nil, fmt.Errorf("report: %s: %w", path, err)
			}
		}
		rows.Close()
	}
	for name, c := range t.cols {
		if c.len() != t.rows {
			return nil, fmt.Errorf("report: %s: column %q has %d values for %d rows", path, name, c.len(), t.rows)
		}
	}
	return t, nil
}

func (c *column) len() int {
	if c.isS {
		return len(c.str)
	}
	return len(c.num)
}

func (c *column) append(v parquet.Value) {
	if c.isS {
		if v.IsNull() {
			c.str = append(c.str, "")
		} else {
			c.str = append(c.str, string(v.ByteArray()))
		}
		return
	}
	if v.IsNull() {
		c.num = append(c.num, math.NaN())
		c.raw = append(c.raw, 0)
		return
	}
	var x float64
	var raw int64
	switch v.Kind() {
	case parquet.Boolean:
		if v.Boolean() {
			x = 1
		}
	case parquet.Int32:
		x, raw = float64(v.Int32()), int64(v.Int32())
	case parquet.Int64:
		x, raw = float64(v.Int64()), v.Int64()
	case parquet.Float:
		x = float64(v.Float())
	case parquet.Double:
		x = v.Double()
	default:
		x = math.NaN()
	}
	c.num = append(c.num, x)
	c.raw = append(c.raw, raw)
}

// f returns column name's value in row i as float64 (NaN if the column is
// missing or the value null).
func (t *table) f(name string, i int) float64 {
	c := t.cols[name]
	if c == nil || c.isS {
		return math.NaN()
	}
	return c.num[i]
}

// i returns column name's value in row i as int64 (0 if missing or null).
func (t *table) i(name string, i int) int64 {
	x := t.f(name, i)
	if math.IsNaN(x) {
		return 0
	}
	return int64(x)
}

// bits returns the exact 64 bits of an integer column's value in row i
// (so an unsigned 64-bit seed keeps its value), 0 if missing or null.
func (t *table) bits(name string, i int) uint64 {
	c := t.cols[name]
	if c == nil || c.isS {
		return 0
	}
	return uint64(c.raw[i])
}

// s returns column name's value in row i as a string; a numeric column is
// formatted.
func (t *table) s(name string, i int) string {
	c := t.cols[name]
	if c == nil {
		return ""
	}
	if c.isS {
		return c.str[i]
	}
	return fmt.Sprint(c.num[i])
}

func inputErr(format string, args ...any) error {
	return inputerr.Errorf(format, args...)
}
