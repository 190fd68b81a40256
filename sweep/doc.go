// Package sweep runs an experiment's runs: in parallel on a pool of workers,
// resumable after a kill, optionally as one deterministic share (shard) of
// the whole grid, with a progress display and a per-cell summary.
//
// Every run is independent: a worker builds, simulates and writes one run at
// a time and shares no mutable state with the others. A finished run is made
// durable at once as a part file in the output folder (results.WritePart);
// a rerun into the same folder skips the runs whose parts exist, so a sweep
// killed at any moment loses at most the runs in progress. When the folder
// holds every run of the experiment, the tables are finalized in the
// experiment's run order, so the output is byte-identical whatever the number
// of workers, the order runs finished in, or how many times the sweep was
// interrupted (the wall_s column aside).
//
// Shards: Assign splits the runs into N shares balanced by estimated cost
// (longest processing time first). A shard writes parts only, unless its
// folder ends up holding every run; shard folders are combined by
// results.Merge (hoplore merge). Script writes a Slurm batch script that runs
// the shards as a job array and merges them in a dependent job.
package sweep
