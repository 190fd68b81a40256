package sweep

import (
	"fmt"
	"strings"
)

// ScriptOptions describe a Slurm batch script for a sharded sweep.
type ScriptOptions struct {
	Name       string // experiment name, for the job names
	Experiment string // what `hoplore run` is given: an absolute file path or a bundled name
	Binary     string // absolute path of the hoplore executable on the cluster
	Out        string // absolute results folder; shards go to Out/shards/I
	Path       string // absolute path the script is written to
	Tasks      int    // array tasks (shards), at least 1
	Partition  string // empty: the cluster's default
	Time       string // wall-time limit per task, Slurm syntax (1:00:00); empty: the partition's default
	CPUs       int    // CPUs per task, also the workers of each shard; at least 1
}

// ScriptPathOK reports whether path can appear in an #SBATCH directive:
// Slurm splits directives at white space, so paths with white space or
// quotes are refused rather than trusted to its quoting rules.
func ScriptPathOK(path string) bool { return !strings.ContainsAny(path, " \t\n'\"\\") }

// ShardDir returns the folder of share i of a sweep into out.
func ShardDir(out string, i int) string {
	return fmt.Sprintf("%s/shards/%d", strings.TrimRight(out, "/"), i)
}

// LogDir returns the folder the Slurm logs of a sweep into out go to.
func LogDir(out string) string { return strings.TrimRight(out, "/") + "/slurm/logs" }

// Script returns a bash script that is both the job array's batch script and
// the way to submit it. Run with bash it submits itself as an array of
// o.Tasks tasks (--array=0-N-1, one shard each, logs named %A_%a) and a merge
// job that waits for all of them (--dependency=afterok:ARRAY) and merges the
// shard folders into o.Out. Under Slurm each task runs its shard; with the
// argument "merge" it merges. The shard is passed explicitly (--shard I/N),
// so a single failed task can be resubmitted with sbatch --array=I.
func Script(o ScriptOptions) string {
	if o.Tasks < 1 || o.CPUs < 1 {
		panic("sweep: Script needs Tasks and CPUs of at least 1")
	}
	o.Out = strings.TrimRight(o.Out, "/")
	q := shellQuote
	var b strings.Builder
	w := func(format string, a ...any) { fmt.Fprintf(&b, format, a...) }
	w("#!/bin/bash\n")
	w("# hoplore sweep %q as a Slurm job array of %d tasks, then a merge job.\n", o.Name, o.Tasks)
	w("#   submit both:             bash %s\n", o.Path)
	w("#   resubmit failed task I:  sbatch --array=I %s   (its finished runs are kept)\n", o.Path)
	w("#   merge by hand:           bash %s merge\n", o.Path)
	w("# Results: %s (shards in %s/shards, logs in %s).\n", o.Out, o.Out, LogDir(o.Out))
	w("#SBATCH --job-name=%s\n", jobName(o.Name))
	w("#SBATCH --array=0-%d\n", o.Tasks-1)
	w("#SBATCH --ntasks=1\n")
	w("#SBATCH --cpus-per-task=%d\n", o.CPUs)
	if o.Partition != "" {
		w("#SBATCH --partition=%s\n", o.Partition)
	}
	if o.Time != "" {
		w("#SBATCH --time=%s\n", o.Time)
	}
	w("#SBATCH --output=%s/%%A_%%a.out\n", LogDir(o.Out))
	w("set -euo pipefail\n")
	w("HOPLORE=%s\n", q(o.Binary))
	w("EXPERIMENT=%s\n", q(o.Experiment))
	w("OUT=%s\n", q(strings.TrimRight(o.Out, "/")))
	w("SCRIPT=%s\n", q(o.Path))
	w("TASKS=%d\n", o.Tasks)
	w("\n")
	w("if [ \"${1:-}\" = merge ]; then\n")
	w("  shards=()\n")
	w("  for ((i = 0; i < TASKS; i++)); do shards+=(\"$OUT/shards/$i\"); done\n")
	w("  exec \"$HOPLORE\" merge \"$OUT\" \"${shards[@]}\"\n")
	w("fi\n")
	w("if [ -n \"${SLURM_ARRAY_TASK_ID:-}\" ]; then\n")
	w("  exec \"$HOPLORE\" run \"$EXPERIMENT\" --shard \"$SLURM_ARRAY_TASK_ID/$TASKS\" --workers %d --out \"$OUT/shards/$SLURM_ARRAY_TASK_ID\"\n", o.CPUs)
	w("fi\n")
	w("mkdir -p %s\n", q(LogDir(o.Out)))
	w("ARRAY=$(sbatch --parsable \"$SCRIPT\")\n")
	w("ARRAY=${ARRAY%%%%;*}\n")
	var extra string
	if o.Partition != "" {
		extra += " --partition=" + q(o.Partition)
	}
	if o.Time != "" {
		extra += " --time=" + q(o.Time)
	}
	w("MERGE=$(sbatch --parsable --dependency=afterok:\"$ARRAY\" --job-name=%s --ntasks=1 --cpus-per-task=1%s \\\n", q(jobName(o.Name)+"-merge"), extra)
	w("  --output=%s --wrap \"bash $(printf %%q \"$SCRIPT\") merge\")\n", q(LogDir(o.Out)+"/merge-%j.out"))
	w("MERGE=${MERGE%%%%;*}\n")
	w("echo \"submitted array job $ARRAY ($TASKS tasks) and merge job $MERGE; results in $OUT\"\n")
	return b.String()
}

// jobName keeps letters, digits, '-', '_' and '.' of the experiment name.
func jobName(name string) string {
	var b strings.Builder
	b.WriteString("hoplore-")
	for _, r := range name {
		if r < 128 && (r == '-' || r == '_' || r == '.' || r >= '0' && r <= '9' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z') {
			b.WriteRune(r)
		} else {
			b.WriteByte('_')
		}
	}
	return b.String()
}

// shellQuote quotes s for bash as a single-quoted word.
func shellQuote(s string) string {
	if s != "" && strings.IndexFunc(s, func(r rune) bool {
		return !(r == '/' || r == '-' || r == '_' || r == '.' || r == ':' || r == '+' || r >= '0' && r <= '9' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z')
	}) < 0 {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}
