package results

import (
	"errors"
	"fmt"
	"io"
	"reflect"

	"github.com/parquet-go/parquet-go"

	"hoplore/stats"
)

// SummaryRow is one row of summary.parquet: one cell, over its replicates.
// Values holds the columns that follow replicates, one per entry of
// Summaries.Columns[1:] and in that order: for each Summarized column of
// Runs, <name>_mean and <name>_ci95 (MeanCI95), <name>_sum (Sum) or <name>
// (Same). A nil value is null. See Summarize.
type SummaryRow struct {
	CellDims
	Replicates int
	Values     []*float64
}

// NewSummaryRow returns the summary row of cell c with the named
// summary.parquet values (such as "loss_rate_mean") and null for every
// other. It panics on a name that is not a value column of
// summary.parquet (a programming mistake).
func NewSummaryRow(c CellDims, replicates int, values map[string]float64) SummaryRow {
	r := SummaryRow{CellDims: c, Replicates: replicates, Values: make([]*float64, len(Summaries.Columns)-1)}
	for name, v := range values {
		i, ok := Summaries.byName[name]
		if !ok || i == 0 {
			panic("results: no summary.parquet value column " + name)
		}
		r.Values[i-1] = f64(v)
	}
	return r
}

// Value returns the value of the summary.parquet column name (such as
// "loss_rate_mean"), nil when it is null or there is no such column.
func (r *SummaryRow) Value(name string) *float64 {
	i, ok := Summaries.byName[name]
	if !ok || i == 0 || i-1 >= len(r.Values) {
		return nil
	}
	return r.Values[i-1]
}

// MeanCI95 returns the mean and the 95% confidence half-width that
// summary.parquet holds for the runs.parquet column name; nil where null
// or not summarised so.
func (r *SummaryRow) MeanCI95(name string) (mean, half *float64) {
	return r.Value(name + "_mean"), r.Value(name + "_ci95")
}

// Summarize groups runs by cell (experiment, topology, agent, load,
// failure), in order of first appearance, and summarises every Summarized
// column of Runs over the cell's runs as its Summary says. Null values are
// skipped, so a mean counts the runs holding the value; a mean is null
// when no run holds one and a half-width when fewer than two do (one
// replicate says nothing about the spread; a null keeps a plot from
// drawing a spuriously certain band), except for a column with a one-run
// interval (Column.OneRunCI) in a cell of one replicate: its half-width
// is then the run's own steady-state interval. The mean and half-width are those of
// stats.MeanCI95; a non-finite result is null.
func Summarize(runs []RunRow) []SummaryRow {
	index := make(map[CellDims]int)
	var cells [][]*RunRow
	var keys []CellDims
	for i := range runs {
		c := runs[i].Cell()
		j, ok := index[c]
		if !ok {
			j = len(cells)
			index[c] = j
			cells = append(cells, nil)
			keys = append(keys, c)
		}
		cells[j] = append(cells[j], &runs[i])
	}
	cols := Summarized()
	out := make([]SummaryRow, len(cells))
	var buf []float64
	for j, rs := range cells {
		s := &out[j]
		s.CellDims = keys[j]
		s.Replicates = len(rs)
		s.Values = make([]*float64, 0, len(Summaries.Columns)-1)
		for _, c := range cols {
			buf = buf[:0]
			for _, r := range rs {
				if v, ok := c.Float(r); ok {
					buf = append(buf, v)
				}
			}
			switch c.Summary {
			case MeanCI95:
				e := stats.MeanCI95(buf)
				half := finite(e.CI95)
				if len(rs) == 1 && len(buf) == 1 && c.OneRunCI != "" {
					half = oneRunCI(rs[0], c.OneRunCI)
				}
				s.Values = append(s.Values, finite(e.Mean), half)
			case Sum:
				var sum *float64
				if len(buf) > 0 {
					var t float64
					for _, v := range buf {
						t += v
					}
					sum = finite(t)
				}
				s.Values = append(s.Values, sum)
			case Same:
				var v *float64
				if len(buf) > 0 {
					v = finite(buf[0])
				}
				s.Values = append(s.Values, v)
			}
		}
	}
	return out
}

// oneRunCI returns the value of r's column name, the half-width of an
// interval from r alone; nil when null.
func oneRunCI(r *RunRow, name string) *float64 {
	c, ok := Runs.Column(name)
	if !ok {
		panic("results: no runs column " + name)
	}
	if v, ok := c.Float(r); ok {
		return finite(v)
	}
	return nil
}

// summaryType is the Go struct type that summary.parquet's schema is built
// from: CellDims, replicates, then one nullable float64 per value column.
// Built once from Summaries; summarySchema is its Parquet schema, named as
// a declared SummaryRow struct would be.
var (
	summaryType   reflect.Type
	summarySchema *parquet.Schema
)

func bindSummary() {
	fields := []reflect.StructField{
		{Name: "CellDims", Type: reflect.TypeFor[CellDims](), Anonymous: true},
		{Name: "Replicates", Type: reflect.TypeFor[int](), Tag: `parquet:"replicates"`},
	}
	for i, c := range Summaries.Columns[1:] {
		fields = append(fields, reflect.StructField{
			Name: fmt.Sprintf("V%d", i),
			Type: reflect.TypeFor[*float64](),
			Tag:  reflect.StructTag(fmt.Sprintf(`parquet:"%s,optional"`, c.Name)),
		})
	}
	summaryType = reflect.StructOf(fields)
	summarySchema = parquet.NewSchema("SummaryRow", parquet.SchemaOf(reflect.New(summaryType).Interface()))
}

// SummarySchema returns the Parquet schema of summary.parquet.
func SummarySchema() *parquet.Schema { return summarySchema }

// writeSummary writes rows to w as summary.parquet.
func writeSummary(w io.Writer, rows []SummaryRow, kv [][2]string) error {
	pw := parquet.NewWriter(w, append(writerOptions(kv), summarySchema)...)
	v := reflect.New(summaryType)
	e := v.Elem()
	for i := range rows {
		r := &rows[i]
		if len(r.Values) != len(Summaries.Columns)-1 {
			return fmt.Errorf("results: summary row %d has %d values, want %d", i, len(r.Values), len(Summaries.Columns)-1)
		}
		e.Field(0).Set(reflect.ValueOf(r.CellDims))
		e.Field(1).SetInt(int64(r.Replicates))
		for k, x := range r.Values {
			e.Field(2 + k).Set(reflect.ValueOf(x))
		}
		if err := pw.Write(v.Interface()); err != nil {
			return err
		}
	}
	return pw.Close()
}

// readSummary reads summary.parquet from r by column name: a column this
// version does not know is ignored, one it knows but the file lacks reads
// as null.
func readSummary(r io.ReaderAt, size int64, path string) ([]SummaryRow, error) {
	pf, err := parquet.OpenFile(r, size, parquet.SkipPageIndex(true), parquet.SkipBloomFilters(true))
	if err != nil {
		return nil, fmt.Errorf("results: %s: %w", path, err)
	}
	if got, _ := pf.Lookup(KeyTable); got != tableSummary {
		return nil, fmt.Errorf("results: %s: holds table %q, want %q", path, got, tableSummary)
	}
	sch := pf.Schema()
	leaf := func(name string) int {
		if l, ok := sch.Lookup(name); ok {
			return l.ColumnIndex
		}
		return -1
	}
	dims := [6]int{}
	for i, name := range []string{"experiment", "topology", "agent", "load", "failure", "replicates"} {
		if dims[i] = leaf(name); dims[i] < 0 {
			return nil, fmt.Errorf("results: %s: no column %q", path, name)
		}
	}
	nv := len(Summaries.Columns) - 1
	at := make([]int, len(sch.Columns())) // leaf column → 1 + value index, 0 if unused
	for k, c := range Summaries.Columns[1:] {
		if i := leaf(c.Name); i >= 0 {
			at[i] = 1 + k
		}
	}
	rows := make([]SummaryRow, 0, pf.NumRows())
	rd := parquet.NewReader(pf)
	defer rd.Close()
	buf := make([]parquet.Row, 64)
	for {
		n, err := rd.ReadRows(buf)
		for _, row := range buf[:n] {
			s := SummaryRow{Values: make([]*float64, nv)}
			for _, v := range row {
				c := v.Column()
				switch c {
				case dims[0]:
					s.Experiment = v.String()
				case dims[1]:
					s.Topology = v.String()
				case dims[2]:
					s.Agent = v.String()
				case dims[3]:
					s.Load = v.Double()
				case dims[4]:
					s.Failure = v.String()
				case dims[5]:
					s.Replicates = int(v.Int64())
				default:
					if k := at[c]; k > 0 && !v.IsNull() {
						s.Values[k-1] = f64(v.Double())
					}
				}
			}
			rows = append(rows, s)
		}
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("results: %s: %w", path, err)
		}
		if n == 0 {
			return nil, fmt.Errorf("results: %s: reader made no progress", path)
		}
	}
	if int64(len(rows)) != pf.NumRows() {
		return nil, fmt.Errorf("results: %s: %d of %d rows: %w", path, len(rows), pf.NumRows(), io.ErrUnexpectedEOF)
	}
	return rows, nil
}
