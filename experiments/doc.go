// Package experiments reads hoplore experiment files and expands them into
// runs.
//
// An experiment file (YAML) describes a grid: every combination of topology ×
// load × failure schedule × agent is a cell, and each cell is run
// Experiment.Replicates times. Parse decodes a file strictly (unknown fields
// are errors) and checks everything that can be checked before a run starts —
// topology files, node names in traffic pairs and failure events, agent
// parameters — reporting each problem as FILE:LINE:COL: field: message
// (a *yamlx.Error). Experiment.Runs lists the runs in a fixed order;
// Run.Config builds the engine configuration of one run and Run.Execute runs
// it and returns its result tables.
//
// Seeds. A run's seed is a hash of the experiment seed, the cell's identity
// without the agent (topology label, load, failure name) and the replicate
// number, so adding a cell never changes another cell's seeds, and every agent
// of one cell and replicate sees the same traffic and failures (common random
// numbers for paired comparisons). The agent's own seed mixes the run seed with
// the agent label.
//
// Bundled experiments (demo, load-sweep, link-failure, single-queue) are
// embedded in the binary; Resolve finds a file path or a bundled name.
package experiments
