package experiments

// Limits on the sizes an experiment file controls, checked before the work
// they drive starts (README, "Limits"). Every one is reported as a bad-input
// error naming the setting and the limit.
const (
	// MaxNodes bounds a topology's nodes. Validation keeps each pair's hop
	// count and traffic share (12 bytes per pair: about 0.8 GB at the limit)
	// and takes O(N·(N+L)) time; runs keep per-pair rates and routing
	// tables as well.
	MaxNodes = 8000
	// MaxLinks bounds a topology's links, so that the O(N·(N+L)) work stays
	// within seconds.
	MaxLinks = 100_000
	// MaxRuns bounds the grid: topologies × loads × failure schedules ×
	// agents × replicates.
	MaxRuns = 100_000
	// MaxBins bounds the time-series bins of one run (duration / bin);
	// below it the memory guard weighs what the bins cost.
	MaxBins = 10_000_000
	// MaxFailureEvents bounds the expected random failure events of one run
	// (2 × elements × duration / (mtbf + mttr)).
	MaxFailureEvents = 10_000_000
	// MaxAgentBytes bounds the memory one agent's tables are estimated to
	// take on one topology (agents.Kind.Cost); validation builds every
	// agent once, so this is checked first.
	MaxAgentBytes = 8e9
)
