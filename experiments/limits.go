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
	// MaxReplayBytes bounds the matrices of a traffic-matrix replay on one
	// topology: a replay is kept as one dense nodes × nodes matrix per
	// period (ReplayBytes), once by validation and once more by each run a
	// worker holds; checked before validation builds them. Below it the
	// memory guard weighs every copy (EstimateMemory).
	MaxReplayBytes = 1e9
)

// ReplayBytes returns the bytes of periods dense nodes × nodes rate
// matrices of float64, with their row slices: each row is an allocation of
// 8 × nodes bytes, which Go's allocator rounds up to its size class (at most
// 12.5% more below 32 KB).
func ReplayBytes(periods, nodes int) float64 {
	return float64(periods) * float64(nodes) * (1.125*8*float64(nodes) + 24)
}
