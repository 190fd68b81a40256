package results

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/compress/zstd"

	"hoplore/internal/atomicfile"
	"hoplore/internal/statefile"
)

// Meta describes the experiment a result folder belongs to. Every table file
// carries it as Parquet key-value metadata under the Key* names.
type Meta struct {
	Version        string `json:"version"`         // tool version that wrote the files
	Experiment     string `json:"experiment"`      // experiment name
	ExperimentHash string `json:"experiment_hash"` // hash of the experiment's canonical form
	// Runs is the number of runs of the whole experiment (all shards), so
	// that a merge or a report can tell when some are missing; 0 when
	// unknown. It is kept in the folder's marker, not in the tables.
	Runs int `json:"runs,omitempty"`
}

// Parquet key-value metadata keys.
const (
	KeyVersion        = "hoplore.version"
	KeyExperiment     = "hoplore.experiment"
	KeyExperimentHash = statefile.KeyExperimentHash
	KeyTable          = "hoplore.table" // runs, series, links, recoveries, summary, or another table's name
)

// Table names, as stored under KeyTable.
const (
	tableRuns       = "runs"
	tableSeries     = "series"
	tableLinks      = "links"
	tableRecoveries = "recoveries"
	tableFlows      = "flows"
	tableSummary    = "summary"
)

// rowGroupRows bounds a row group so that a reader never needs a whole large
// table in memory at once.
const rowGroupRows = 1 << 16

func (m Meta) kv(table string) [][2]string {
	return [][2]string{
		{KeyTable, table},
		{KeyVersion, m.Version},
		{KeyExperiment, m.Experiment},
		{KeyExperimentHash, m.ExperimentHash},
	}
}

// tableWriter writes rows of type T into one Parquet file.
type tableWriter[T any] struct {
	w *parquet.GenericWriter[T]
}

func newTableWriter[T any](w io.Writer, kv [][2]string) *tableWriter[T] {
	return &tableWriter[T]{w: parquet.NewGenericWriter[T](w, writerOptions(kv)...)}
}

// writerOptions are the options of every table writer: zstd, bounded row
// groups, and kv as key-value metadata.
func writerOptions(kv [][2]string) []parquet.WriterOption {
	opts := []parquet.WriterOption{
		parquet.Compression(&zstd.Codec{Level: zstd.SpeedDefault}),
		parquet.MaxRowsPerRowGroup(rowGroupRows),
	}
	for _, p := range kv {
		opts = append(opts, parquet.KeyValueMetadata(p[0], p[1]))
	}
	return opts
}

func (t *tableWriter[T]) write(rows []T) error {
	if len(rows) == 0 {
		return nil
	}
	_, err := t.w.Write(rows)
	return err
}

func (t *tableWriter[T]) close() error { return t.w.Close() }

// WriteTable writes rows to path as one Parquet file of the named table,
// atomically, with the same compression, row groups and key-value
// metadata (Key*) as every table of a result folder. Tables beside the
// five of a result folder (a comparison, a derived table) use it so that
// every file carries the experiment's name and hash.
func WriteTable[T any](path, table string, meta Meta, rows []T) error {
	return writeFileAtomic(path, func(w io.Writer) error {
		return writeTable(w, rows, meta.kv(table))
	})
}

// writeTable writes rows to w as one Parquet file.
func writeTable[T any](w io.Writer, rows []T, kv [][2]string) error {
	tw := newTableWriter[T](w, kv)
	if err := tw.write(rows); err != nil {
		return err
	}
	return tw.close()
}

// readTable reads every row of the Parquet file at path, checking that it
// holds the named table.
func readTable[T any](path, table string) ([]T, error) {
	return readFile(path, func(r io.ReaderAt, size int64) ([]T, error) { return readRows[T](r, size, path, table) })
}

// readFile opens path and hands it to read, whole in memory when it is
// small.
func readFile[T any](path string, read func(r io.ReaderAt, size int64) ([]T, error)) ([]T, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("results: %w", err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, fmt.Errorf("results: %w", err)
	}
	if st.Size() > inMemoryBytes {
		return read(f, st.Size())
	}
	// Small files (every part) are read in one system call: the Parquet
	// reader otherwise issues many small reads for the footer.
	b := make([]byte, st.Size())
	if _, err := io.ReadFull(f, b); err != nil {
		return nil, fmt.Errorf("results: %s: %w", path, err)
	}
	return read(bytes.NewReader(b), int64(len(b)))
}

// inMemoryBytes is the largest table file read whole into memory.
const inMemoryBytes = 64 << 20

// readRows reads every row of the Parquet file in r (size bytes, called
// path in errors), checking that it holds the named table.
func readRows[T any](r io.ReaderAt, size int64, path, table string) ([]T, error) {
	pf, err := parquet.OpenFile(r, size, parquet.SkipPageIndex(true), parquet.SkipBloomFilters(true))
	if err != nil {
		return nil, fmt.Errorf("results: %s: %w", path, err)
	}
	if got, _ := pf.Lookup(KeyTable); got != table {
		return nil, fmt.Errorf("results: %s: holds table %q, want %q", path, got, table)
	}
	n := pf.NumRows()
	rows := make([]T, n)
	if n == 0 {
		return rows, nil
	}
	gr := parquet.NewGenericReader[T](pf)
	defer gr.Close()
	read := 0
	for read < len(rows) {
		k, err := gr.Read(rows[read:])
		read += k
		if err != nil {
			if errors.Is(err, io.EOF) && read == len(rows) {
				break
			}
			if errors.Is(err, io.EOF) {
				return nil, fmt.Errorf("results: %s: %d of %d rows: %w", path, read, n, io.ErrUnexpectedEOF)
			}
			return nil, fmt.Errorf("results: %s: %w", path, err)
		}
		if k == 0 {
			return nil, fmt.Errorf("results: %s: reader made no progress", path)
		}
	}
	return rows, nil
}

// ReadMeta returns the experiment metadata stored in a table file.
func ReadMeta(path string) (Meta, error) {
	f, err := os.Open(path)
	if err != nil {
		return Meta{}, fmt.Errorf("results: %w", err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return Meta{}, fmt.Errorf("results: %w", err)
	}
	pf, err := parquet.OpenFile(f, st.Size(), parquet.SkipPageIndex(true), parquet.SkipBloomFilters(true))
	if err != nil {
		return Meta{}, fmt.Errorf("results: %s: %w", path, err)
	}
	var m Meta
	m.Version, _ = pf.Lookup(KeyVersion)
	m.Experiment, _ = pf.Lookup(KeyExperiment)
	m.ExperimentHash, _ = pf.Lookup(KeyExperimentHash)
	return m, nil
}

// ReadRuns reads a runs.parquet file.
func ReadRuns(path string) ([]RunRow, error) { return readTable[RunRow](path, tableRuns) }

// ReadSeries reads a series.parquet file.
func ReadSeries(path string) ([]SeriesRow, error) { return readTable[SeriesRow](path, tableSeries) }

// ReadLinks reads a links.parquet file.
func ReadLinks(path string) ([]LinkRow, error) { return readTable[LinkRow](path, tableLinks) }

// ReadRecoveries reads a recoveries.parquet file.
func ReadRecoveries(path string) ([]RecoveryRow, error) {
	return readTable[RecoveryRow](path, tableRecoveries)
}

// ReadFlows reads a flows.parquet file.
func ReadFlows(path string) ([]FlowRow, error) { return readTable[FlowRow](path, tableFlows) }

// ReadSummary reads a summary.parquet file.
func ReadSummary(path string) ([]SummaryRow, error) {
	return readFile(path, func(r io.ReaderAt, size int64) ([]SummaryRow, error) { return readSummary(r, size, path) })
}

// writeFileAtomic writes path atomically (internal/atomicfile): path is
// either absent, its old content or complete, and readable by others like
// any file written with os.WriteFile(…, 0o644).
func writeFileAtomic(path string, write func(io.Writer) error) error {
	if err := atomicfile.Write(path, 0o644, write); err != nil {
		return fmt.Errorf("results: %w", err)
	}
	return nil
}

// createFile starts a file that replaces path atomically when committed
// (commit).
func createFile(path string) (*atomicfile.File, error) {
	f, err := atomicfile.Create(path, 0o644)
	if err != nil {
		return nil, fmt.Errorf("results: %w", err)
	}
	return f, nil
}

// commit puts files in place together (atomicfile.Commit).
func commit(files ...*atomicfile.File) error {
	if err := atomicfile.Commit(files...); err != nil {
		return fmt.Errorf("results: %w", err)
	}
	return nil
}
