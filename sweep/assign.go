package sweep

import (
	"fmt"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
)

// Assign splits runs with the given estimated costs into shards shares and
// returns, for each share, the indices of its runs in ascending order.
//
// It is the greedy longest-processing-time rule (Graham, "Bounds on
// multiprocessing timing anomalies", 1969): runs sorted by cost, largest
// first (ties by index), each go to the share with the least cost so far
// (ties to the lowest share). Its makespan is at most 4/3 − 1/(3·shards) of
// the optimum. Costs are rounded to whole numbers first, so that machines
// whose floating point differs in the last bits still agree on the shares.
// The result is a pure function of (costs, shards); every run is in exactly
// one share. Complexity O(n log n + n·shards).
func Assign(costs []float64, shards int) [][]int {
	if shards < 1 {
		panic("sweep: Assign needs at least one shard")
	}
	n := len(costs)
	c := make([]int64, n)
	for i, x := range costs {
		if math.IsNaN(x) || x < 0 {
			x = 0
		}
		c[i] = int64(math.Round(min(x, 1e18)))
	}
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int {
		if c[a] != c[b] {
			if c[a] > c[b] {
				return -1
			}
			return 1
		}
		return a - b
	})
	load := make([]int64, shards)
	out := make([][]int, shards)
	for _, i := range order {
		best := 0
		for s := 1; s < shards; s++ {
			if load[s] < load[best] {
				best = s
			}
		}
		load[best] += c[i]
		out[best] = append(out[best], i)
	}
	for s := range out {
		slices.Sort(out[s])
	}
	return out
}

// Shard is one share of a sharded sweep: Index in [0, Count).
type Shard struct{ Index, Count int }

// String formats the share as I/N.
func (s Shard) String() string { return fmt.Sprintf("%d/%d", s.Index, s.Count) }

// ParseShard reads a share written I/N (0 ≤ I < N).
func ParseShard(s string) (Shard, error) {
	a, b, ok := strings.Cut(strings.TrimSpace(s), "/")
	if !ok {
		return Shard{}, fmt.Errorf("sweep: shard %q: want I/N, for example 0/4", s)
	}
	i, err1 := strconv.Atoi(strings.TrimSpace(a))
	n, err2 := strconv.Atoi(strings.TrimSpace(b))
	if err1 != nil || err2 != nil {
		return Shard{}, fmt.Errorf("sweep: shard %q: want I/N with whole numbers, for example 0/4", s)
	}
	if n < 1 || i < 0 || i >= n {
		return Shard{}, fmt.Errorf("sweep: shard %q: want 0 <= I < N", s)
	}
	return Shard{i, n}, nil
}

// ShardFromEnv derives the share from a Slurm job array's environment:
// SLURM_ARRAY_TASK_ID / SLURM_ARRAY_TASK_COUNT. ok is false outside an array.
//
// The task id is used as the share index directly, so the array must be
// 0..N-1 with step 1 (as Script writes it). Slurm gives no 0-based position
// for other arrays (for --array=3,7,20 it reports MIN=3 and STEP=1), so
// rather than guess, any other array is an error that says so.
func ShardFromEnv(getenv func(string) string) (sh Shard, ok bool, err error) {
	id, count := getenv("SLURM_ARRAY_TASK_ID"), getenv("SLURM_ARRAY_TASK_COUNT")
	if id == "" {
		return Shard{}, false, nil
	}
	num := func(name string) (int, error) {
		v, err := strconv.Atoi(strings.TrimSpace(getenv(name)))
		if err != nil {
			return 0, fmt.Errorf("sweep: %s=%q is not a whole number", name, getenv(name))
		}
		return v, nil
	}
	if count == "" {
		return Shard{}, false, fmt.Errorf("sweep: SLURM_ARRAY_TASK_ID is set but SLURM_ARRAY_TASK_COUNT is not; give --shard I/N")
	}
	i, err := num("SLURM_ARRAY_TASK_ID")
	if err != nil {
		return Shard{}, false, err
	}
	n, err := num("SLURM_ARRAY_TASK_COUNT")
	if err != nil {
		return Shard{}, false, err
	}
	hint := fmt.Sprintf("the array must be 0-%d (sbatch --array=0-%d), or give --shard I/N", n-1, n-1)
	if n < 1 || i < 0 || i >= n {
		return Shard{}, false, fmt.Errorf("sweep: SLURM_ARRAY_TASK_ID=%d is not below SLURM_ARRAY_TASK_COUNT=%d: %s", i, n, hint)
	}
	for _, c := range []struct {
		name string
		want int
	}{{"SLURM_ARRAY_TASK_MIN", 0}, {"SLURM_ARRAY_TASK_MAX", n - 1}, {"SLURM_ARRAY_TASK_STEP", 1}} {
		if getenv(c.name) == "" {
			continue
		}
		v, err := num(c.name)
		if err != nil {
			return Shard{}, false, err
		}
		if v != c.want {
			return Shard{}, false, fmt.Errorf("sweep: %s=%d, want %d: %s", c.name, v, c.want, hint)
		}
	}
	return Shard{i, n}, true, nil
}

// EnvShard is ShardFromEnv on the process environment.
func EnvShard() (Shard, bool, error) { return ShardFromEnv(os.Getenv) }
