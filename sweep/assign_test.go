package sweep

import (
	"math/rand/v2"
	"reflect"
	"slices"
	"testing"
)

func loads(costs []float64, shares [][]int) []float64 {
	l := make([]float64, len(shares))
	for s, idx := range shares {
		for _, i := range idx {
			l[s] += costs[i]
		}
	}
	return l
}

func TestAssignKnown(t *testing.T) {
	// Graham, "Bounds on multiprocessing timing anomalies" (1969): jobs
	// 3,3,2,2,2 on two machines are the tight case of the longest
	// processing time rule, 7 against the optimum 6 (= 4/3 − 1/(3·2)).
	tests := []struct {
		name   string
		costs  []float64
		shards int
		want   [][]int
	}{
		{"graham tight case", []float64{3, 3, 2, 2, 2}, 2, [][]int{{0, 2, 4}, {1, 3}}},
		{"equal costs round robin by index", []float64{1, 1, 1, 1, 1, 1}, 3, [][]int{{0, 3}, {1, 4}, {2, 5}}},
		{"largest first", []float64{1, 10, 1, 1}, 2, [][]int{{1}, {0, 2, 3}}},
		{"more shards than runs", []float64{5, 7}, 4, [][]int{{1}, {0}, nil, nil}},
		{"one shard", []float64{2, 1, 3}, 1, [][]int{{0, 1, 2}}},
		{"bad costs count as zero", []float64{-1, 4}, 2, [][]int{{1}, {0}}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := Assign(tt.costs, tt.shards)
			if !reflect.DeepEqual(got, tt.want) {
				t.Errorf("Assign(%v, %d) = %v, want %v", tt.costs, tt.shards, got, tt.want)
			}
		})
	}
}

func TestAssignProperties(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 200; trial++ {
		n := r.IntN(300)
		m := 1 + r.IntN(12)
		costs := make([]float64, n)
		cmax := 0.0
		for i := range costs {
			costs[i] = float64(1 + r.IntN(1e6))
			cmax = max(cmax, costs[i])
		}
		got := Assign(costs, m)
		if again := Assign(slices.Clone(costs), m); !reflect.DeepEqual(got, again) {
			t.Fatalf("trial %d: Assign is not deterministic", trial)
		}
		if len(got) != m {
			t.Fatalf("trial %d: %d shares, want %d", trial, len(got), m)
		}
		seen := make([]int, n)
		for _, share := range got {
			if !slices.IsSorted(share) {
				t.Fatalf("trial %d: share %v not in ascending order", trial, share)
			}
			for _, i := range share {
				seen[i]++
			}
		}
		for i, c := range seen {
			if c != 1 {
				t.Fatalf("trial %d: run %d is in %d shares, want exactly 1", trial, i, c)
			}
		}
		// Greedy list scheduling keeps max − min load within the largest
		// job: each job goes to the least-loaded share (common practice,
		// follows from the rule by induction).
		l := loads(costs, got)
		if d := slices.Max(l) - slices.Min(l); n > 0 && d > cmax {
			t.Errorf("trial %d: loads %v spread %g > largest cost %g", trial, l, d, cmax)
		}
	}
}

func TestParseShard(t *testing.T) {
	tests := []struct {
		in   string
		want Shard
		ok   bool
	}{
		{"0/4", Shard{0, 4}, true},
		{"3/4", Shard{3, 4}, true},
		{" 1 / 2 ", Shard{1, 2}, true},
		{"4/4", Shard{}, false},
		{"-1/4", Shard{}, false},
		{"1/0", Shard{}, false},
		{"1", Shard{}, false},
		{"a/b", Shard{}, false},
	}
	for _, tt := range tests {
		got, err := ParseShard(tt.in)
		if (err == nil) != tt.ok || got != tt.want {
			t.Errorf("ParseShard(%q) = %v, %v; want %v, ok=%v", tt.in, got, err, tt.want, tt.ok)
		}
	}
}

func TestShardFromEnv(t *testing.T) {
	tests := []struct {
		name   string
		env    map[string]string
		want   Shard
		inside bool
		ok     bool
	}{
		{"outside an array", map[string]string{}, Shard{}, false, true},
		{"array 0-3 task 2", map[string]string{"SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_COUNT": "4", "SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "3", "SLURM_ARRAY_TASK_STEP": "1"}, Shard{2, 4}, true, true},
		{"id and count only", map[string]string{"SLURM_ARRAY_TASK_ID": "0", "SLURM_ARRAY_TASK_COUNT": "1"}, Shard{0, 1}, true, true},
		// Values Slurm sets for --array=1-9:4 and --array=3,7,20 (observed
		// under Slurm; its sbatch documentation lists the job array
		// variables): not 0..N-1, so refused.
		{"stepped array", map[string]string{"SLURM_ARRAY_TASK_ID": "5", "SLURM_ARRAY_TASK_COUNT": "3", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "9", "SLURM_ARRAY_TASK_STEP": "4"}, Shard{}, false, false},
		{"irregular list", map[string]string{"SLURM_ARRAY_TASK_ID": "3", "SLURM_ARRAY_TASK_COUNT": "3", "SLURM_ARRAY_TASK_MIN": "3", "SLURM_ARRAY_TASK_MAX": "20", "SLURM_ARRAY_TASK_STEP": "1"}, Shard{}, false, false},
		{"task id not below count", map[string]string{"SLURM_ARRAY_TASK_ID": "1", "SLURM_ARRAY_TASK_COUNT": "1"}, Shard{}, false, false},
		{"array 1-3", map[string]string{"SLURM_ARRAY_TASK_ID": "1", "SLURM_ARRAY_TASK_COUNT": "3", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "3"}, Shard{}, false, false},
		{"no count", map[string]string{"SLURM_ARRAY_TASK_ID": "1"}, Shard{}, false, false},
		{"garbage", map[string]string{"SLURM_ARRAY_TASK_ID": "x", "SLURM_ARRAY_TASK_COUNT": "3"}, Shard{}, false, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, inside, err := ShardFromEnv(func(k string) string { return tt.env[k] })
			if (err == nil) != tt.ok || got != tt.want || inside != tt.inside {
				t.Errorf("got %v, %v, %v; want %v, %v, ok=%v", got, inside, err, tt.want, tt.inside, tt.ok)
			}
		})
	}
}
