// Package experiments reads hoplore experiment files and expands them into
// runs.
//
// An experiment file (YAML) describes a grid: every combination of topology ×
// load × failure schedule × agent is a cell, and each cell is run
// Experiment.Replicates times. Parse decodes a file strictly (unknown fields
// are errors) and checks everything that can be checked before a run starts —
// topology files, node names in traffic pairs and failure events, agent
// parameters, every agent built once on every topology — reporting each
// problem as a *yamlx.Error, FILE:LINE:COL: field: message. Experiment.Runs
// lists the runs in a fixed order; Run.Config builds the engine configuration
// of one run. The package describes runs; package sweep executes them.
//
// # File reference
//
// Durations use Go syntax (600s, 50ms, 1m30s), bandwidths SI bit rates
// (1Mbps, 10Gbps), sizes bytes, rates N/s (also N/ms, N/min).
//
//	name         required; letters, digits, '.', '_', '-'
//	description  optional one-line text (shown by `hoplore experiments`)
//	duration     required, > 0: simulated time per run
//	warmup       default 0s, < duration: packets generated earlier are not measured
//	bin          default duration/100, in (0, duration]: time-series bin width
//	replicates   default 1, ≥ 1
//	seed         default 1, a whole number 0 … 2^64-1
//	hop_limit    default 64, 1 … 65535
//	topologies   required list; each entry is one of
//	               NAME                            a bundled generator at its defaults
//	               {name: NAME, PARAM: value ...}  a bundled generator with parameters
//	               {file: PATH}                    a topology file, relative to this file;
//	                                               .graphml/.xml files are read as GraphML
//	                                               or network-design XML (topologies.Read)
//	             a file entry may add how it is read: keep: largest-component (drop
//	             the other components, else a disconnected file is an error),
//	             bandwidth_scale: F > 0 (speeds × F; default 10^-3 for measured speeds,
//	             1 for hoplore's own bandwidth key), capacity_unit: Mbps (network-design
//	             XML capacities), attributes: {FIELD: KEY, ...} (GraphML: read label, lat,
//	             lon, x_km, y_km, processing, bandwidth, delay or buffer from KEY);
//	             hoplore topologies show FILE prints what each field was read from
//	               {inline: {name, defaults, nodes, links}}  a topology file's content
//	             a mapping entry may add label: TEXT (the topology column's value; by
//	             default the generator label such as "ring(nodes=6)", else the
//	             topology's name, else inline-INDEX); labels must differ
//	traffic
//	  matrix       uniform (default) | gravity | hotspot | pairs (implied by pairs:) |
//	               {file: PATH} or {files: [PATH, ...]}: traffic-matrix files (CSV,
//	               Parquet or network-design XML demands; see package demands), with
//	                 unit        the rates' unit where the file gives none (/s, Mbps, ...)
//	                 rate_scale  > 0, without loads: absolute rates × rate_scale
//	                 period      how long each matrix of a replay lasts (required with
//	                             files:); with a t column, rows with the same t form one
//	                             matrix from t on, and t values closer than period are
//	                             overlapping periods (an error); without period each lasts
//	                             until the next t, the last until the run ends
//	                 speedup     > 0, default 1: replay times (t, period) are divided by it
//	               With loads the file gives the shape: one factor scales every matrix so
//	               that load 1.0 saturates the busiest channel in the busiest period.
//	               Without loads the rates (bit rates converted with the mean packet
//	               size) are absolute. A replay sends nothing before its first period, in
//	               gaps longer than period, and after a list's last file or after the
//	               last t + period; a demand for a node the topology lacks is an error at
//	               its row
//	  pairs        with matrix pairs: [{from: NODE, to: NODE, rate: N/s}, ...]; give a
//	               rate on every pair or on none. With loads, the rates (1 each when
//	               absent) are only the matrix's shape; without loads they are absolute
//	               packets/s and the load column holds the normalised load they amount to
//	  hotspot      with matrix hotspot: {nodes: [NODE, ...], fraction: F}; fraction
//	               (default 0.5, in [0, 1]) of every source's packets go to the hot nodes,
//	               split evenly, the rest uniformly to the others; nodes default to the
//	               node with the most attached bandwidth (lowest index among equals)
//	  packet_size  default {dist: fixed, bytes: 1000}; dist is one of
//	               fixed {bytes} | exponential {mean_bytes} |
//	               bimodal {small_bytes, large_bytes, large_fraction in [0, 1]};
//	               sizes ≥ 1 byte; redraw: per-hop draws a fresh size at every hop
//	               (default none: a packet keeps its size)
//	  loads        required unless pairs or a matrix file give absolute rates: normalised loads > 0,
//	               distinct; 1.0 saturates the busiest channel under hop-count
//	               shortest path (lowest-index tie-break) on the intact topology
//	  flows        optional, ≥ 1: flow labels per pair for ECMP hashing (default 8);
//	               or a mapping of flow traffic (FlowTraffic): arrivals: N/s per source
//	               (absolute, on top of the packets) or share: X in (0, 1] of every
//	               cell's load; size: {dist: fixed {bytes} | pareto {shape > 1,
//	               mean_bytes} | lognormal {mu, sigma ≥ 0} | mix {classes: [{fraction,
//	               bytes}, ...], fractions adding up to 1} | cdf {file: CSV of
//	               bytes,probability, both increasing, ending at 1}}; rate_limit
//	               (default the source's fastest channel), packet_bytes (default 1500),
//	               mice_bytes (default 1e5), elephant_bytes (default 1e7), sample
//	               (flows per run in flows.parquet, default DefaultFlowSample, 0 none)
//	  phases       optional [{at: DURATION, factor: F}], times increasing: from `at` on
//	               every rate is multiplied by F ≥ 0 (load that rises or falls mid-run)
//	agents       required list; each entry is KIND or {kind: KIND, label: TEXT, FIELD: value ...}
//	             with the fields of that kind only (agents.Fields); the others are errors.
//	             Unset fields take agents.Defaults(kind). consensus is {every: DURATION
//	             (required), weight: W (default 0.5), split_horizon: true|false (q-routing
//	             only, default false)}. Two entries with the same label
//	             (explicit or canonical) are an error. Every kind takes pin: packet
//	             (default) | flow (agents.PinFlow). q-routing, q-network and central-q
//	             take objective: delay (default) | loss | utilisation | {mix: {delay: W,
//	             loss: W, utilisation: W}} (weights ≥ 0, not all 0); central-optimal
//	             takes those and min-max-util (default) | min-delay (agents.Objective)
//	failures     default [none]; each entry is none or a mapping:
//	  name         required, distinct, not "none"
//	  detection    default 50ms, ≥ 0: time until the end nodes notice a link change
//	  events       [{at: DURATION in [0, duration), link: [A, B] | node: N | group: G,
//	               action: down | up}, ...]; each element alternates down, up, ... in time
//	  groups       {G: [[A, B], [C, D], ...]}: shared-risk groups, links that fail together;
//	               or G: {within_km: R > 0, of: NODE}: every link with an end within R km
//	               of NODE by the topology's coordinates (an error if none, or if NODE has
//	               no coordinates)
//	  random       {scope: links (default) | nodes, mtbf: DURATION, mttr: DURATION}: every
//	               element alternates exponential up times (mean mtbf) and down times
//	               (mean mttr) for the whole run, drawn from the run's seed
//	             a mapping needs events, random or both, or each. Event and group names must
//	             exist in every topology of the file (checked before anything runs)
//	  each         links | nodes | groups: a family of single failures, with at (required),
//	               until (optional, > at), sample: N and seed: S (optional), groups, detection
//	               and name (default each-KIND) but no events or random: on each topology
//	               one schedule per element (links and nodes in topology order, groups in
//	               file order; N of them drawn without replacement with sample), named
//	               NAME/a-b, NAME/n or NAME/G, the element down at at and up at until
//	conditions   optional {file: PATH, bandwidth_scale: F (default 1)}: link conditions
//	             over time for every run, a CSV or Parquet table of t, a, b and
//	             bandwidth, delay or loss (package demands): from t on the link a–b
//	             takes the values given, piecewise constant; loss is an independent
//	             per-packet loss probability (drop reason link_loss, column
//	             dropped_link_loss). A row naming a link a topology lacks is an error
//	             at its row
//	optimum      default {epsilon: 0.01}: the model optimum of every cell's offered
//	             matrix (package optimum, the opt_* columns); epsilon in (0, 0.5] is the
//	             certified relative gap the solvers stop at. By default it is computed on
//	             topologies of at most 200 nodes (OptimumAutoNodes); compute: true asks
//	             for it on any size, compute: false never (the columns are then null)
//
// # Grid order and seeds
//
// Runs are ordered by topology, then load, then failure schedule, then agent
// (each in file order), then replicate (numbered from 0). A run's seed is
// sim.Mix of the experiment seed, the FNV-1a hash of the cell's key without
// the agent ("topology=…, load=…, failure=…") and the replicate, so adding a
// cell never changes another cell's seeds, and every agent of one cell and
// replicate sees the same traffic and failures (common random numbers for
// paired comparisons). The agent's own seed mixes the run seed with the agent
// label. A run's id is the first 12 hex digits of the SHA-256 of the
// experiment name, the cell key, the agent label and the replicate.
//
// Sizes the file controls are bounded before the work they drive starts:
// MaxNodes and MaxLinks per topology, MaxRuns in the grid, MaxBins per run,
// MaxFailureEvents expected per run, MaxAgentBytes per agent and topology,
// MaxReplayBytes for a traffic-matrix replay's dense matrices per topology
// (ReplayBytes). EstimateMemory counts what remains below them, a replay's
// matrices and a matrix file's demands included.
//
// Bundled experiments (demo, load-sweep, link-failure, single-queue) are
// embedded in the binary with the topology files they use; Resolve finds a
// file path or a bundled name.
package experiments
