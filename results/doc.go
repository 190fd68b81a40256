// Package results turns simulation results into the Parquet tables of a
// result folder and reads them back.
//
// A result folder holds:
//
//	experiment.json       marker: experiment name, hash, tool version (MarkDir, CheckDir)
//	parts/<run_id>.part   one finished run's rows, checksummed (WritePart,
//	                      ListParts, ReadPart)
//	runs.parquet          one row per run                  (RunRow)
//	series.parquet        one row per run and time bin     (SeriesRow)
//	links.parquet         one row per run and channel      (LinkRow)
//	recoveries.parquet    one row per run and failure event (RecoveryRow)
//	flows.parquet         one row per run and sampled flow, with flow
//	                      traffic only (FlowRow)
//	summary.parquet       one row per cell                 (SummaryRow)
//	state/<run_id>.json   a learning run's final state (StateInfo), with
//	state/<run_id>.qtable.parquet  its Q table (QRow) for a tabular learner;
//	                      both carry the experiment hash (layout: package
//	                      statefile, which experiments reads too)
//
// # Schema
//
// Every column is declared once, in schema.go: Runs, Series, Links,
// Recoveries and Summaries list each table's columns (Column: name, unit,
// label, one-line doc, how summary.parquet summarises it, whether the
// report charts it), and DimColumns the dimensions. The row structs
// (RunRow, …) hold the values; the package panics at start-up if a
// parquet-tagged field has no declared column or a column no field. From
// the schema follow summary.parquet's columns (Summarize, SummaryRow), the
// run summary table of package sweep, the columns package report reads,
// charts and compares, and the column documentation.
//
// To add a column to runs.parquet:
//
//  1. add a field to RunRow with its parquet tag (a pointer for a value
//     that can be null, ",optional" in the tag);
//  2. add its Column to Runs.Columns: Unit, Label, Doc, and Summary
//     (MeanCI95 gives <name>_mean and <name>_ci95 in summary.parquet and a
//     column in the run summary table; Sum gives <name>_sum; Same keeps a
//     value of the cell under its own name) and Charted (a chart and a
//     table in the report, a metric of compare) as wanted;
//  3. compute it in FromRun.
//
// Parts written before the column existed read it as zero or null. The
// other tables work the same way (SeriesRow and Series, LinkRow and Links,
// RecoveryRow and Recoveries); a table of its own beside a result folder's
// (such as compare.parquet) is written with WriteTable so that it carries
// the same key-value metadata.
//
// # Folders
//
// A sweep converts each finished run with FromRun and stores it with
// WritePart; a resumed sweep skips the runs ListParts reports; Finalize then
// assembles the tables in the sweep's run order, and Merge combines folders
// (shards, resumed pieces). Every file is written atomically (a temporary
// file whose name starts with a dot, synced, then renamed), so a
// reader never sees half a file, and every table file carries the
// experiment's name and hash and the tool version as key-value metadata
// (Key*). Times are float64 seconds; statistics of nothing are null.
//
// Parts are a compact internal format (see partcodec.go), matched by column
// name so that parts of an older tool version still read; the tables a
// notebook reads are the Parquet files. The seed column is an unsigned
// 64-bit integer. The module in ../xcheck reads every table back with Apache
// arrow-go as an independent check (go test ./xcheck/...).
//
// Writing uses zstd compression for every column and dictionary encoding for
// the low-cardinality labels. The tables are byte-identical whatever the
// number of workers or the order parts were written in, except for the
// wall_s column of runs.parquet, which holds each run's measured wall-clock
// time.
package results
