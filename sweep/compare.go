package sweep

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"github.com/parquet-go/parquet-go"

	"hoplore/results"
)

// Tables are the files of a finished results folder that CompareDirs checks:
// every table of the results schema (results.Tables) and optimum.parquet.
var Tables = tableFiles()

func tableFiles() []string {
	var out []string
	for _, t := range results.Tables {
		out = append(out, t.File)
	}
	return append(out, results.OptimumFile)
}

// Masked are the columns that legitimately differ between two executions of
// the same runs (wall-clock time); CompareDirs ignores them.
var Masked = []string{"wall_s"}

// CompareDirs reports the first difference between the tables of two
// results folders: a table present in one only, a different schema, a
// different number of rows, or a different value in any column but those in
// Masked. It reads the files with a generic Parquet reader, independent of
// the row types that wrote them. A nil error means the folders hold the same
// results.
func CompareDirs(a, b string) error {
	found := 0
	for _, name := range Tables {
		pa, pb := filepath.Join(a, name), filepath.Join(b, name)
		_, ea := os.Stat(pa)
		_, eb := os.Stat(pb)
		switch {
		case errors.Is(ea, fs.ErrNotExist) && errors.Is(eb, fs.ErrNotExist):
			continue
		case ea != nil:
			return fmt.Errorf("sweep: compare: %w", ea)
		case eb != nil:
			return fmt.Errorf("sweep: compare: %w", eb)
		}
		found++
		if err := CompareFiles(pa, pb); err != nil {
			return err
		}
	}
	if found == 0 {
		return fmt.Errorf("sweep: compare: no tables in %s or %s", a, b)
	}
	return nil
}

// CompareFiles compares two Parquet files as CompareDirs does.
func CompareFiles(a, b string) error {
	sa, ra, err := readTable(a)
	if err != nil {
		return err
	}
	sb, rb, err := readTable(b)
	if err != nil {
		return err
	}
	if sa.String() != sb.String() {
		return fmt.Errorf("sweep: compare %s: schemas differ:\n%s\n%s", filepath.Base(a), sa, sb)
	}
	if len(ra) != len(rb) {
		return fmt.Errorf("sweep: compare %s: %d rows in %s, %d in %s", filepath.Base(a), len(ra), a, len(rb), b)
	}
	cols := sa.Columns()
	masked := make(map[int]bool)
	for i, path := range cols {
		for _, m := range Masked {
			if path[len(path)-1] == m {
				masked[i] = true
			}
		}
	}
	for r := range ra {
		x, y := ra[r], rb[r]
		if len(x) != len(y) {
			return fmt.Errorf("sweep: compare %s: row %d has %d values in one, %d in the other", filepath.Base(a), r, len(x), len(y))
		}
		for k := range x {
			c := x[k].Column()
			if masked[c] {
				continue
			}
			if c != y[k].Column() || x[k].DefinitionLevel() != y[k].DefinitionLevel() || !parquet.Equal(x[k], y[k]) {
				return fmt.Errorf("sweep: compare %s: row %d column %s: %v in %s, %v in %s",
					filepath.Base(a), r, strings.Join(cols[c], "."), x[k], a, y[k], b)
			}
		}
	}
	return nil
}

func readTable(path string) (*parquet.Schema, []parquet.Row, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, fmt.Errorf("sweep: compare: %w", err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, nil, fmt.Errorf("sweep: compare: %w", err)
	}
	pf, err := parquet.OpenFile(f, st.Size())
	if err != nil {
		return nil, nil, fmt.Errorf("sweep: compare %s: %w", path, err)
	}
	rd := parquet.NewReader(pf)
	defer rd.Close()
	var rows []parquet.Row
	buf := make([]parquet.Row, 64)
	for {
		n, err := rd.ReadRows(buf)
		for _, r := range buf[:n] {
			rows = append(rows, r.Clone())
		}
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, nil, fmt.Errorf("sweep: compare %s: %w", path, err)
		}
		if n == 0 {
			break
		}
	}
	return pf.Schema(), rows, nil
}
