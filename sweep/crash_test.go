package sweep

import (
	"bytes"
	"errors"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"strconv"
	"syscall"
	"testing"
	"time"

	"hoplore/results"
)

// buildHoplore builds the command into a temporary folder.
func buildHoplore(t *testing.T) string {
	t.Helper()
	goBin, err := exec.LookPath("go")
	if err != nil {
		goBin = filepath.Join(runtime.GOROOT(), "bin", "go")
	}
	bin := filepath.Join(t.TempDir(), "hoplore")
	out, err := exec.Command(goBin, "build", "-o", bin, "hoplore/cmd/hoplore").CombinedOutput()
	if err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

func tinyPath(t *testing.T) string {
	t.Helper()
	p, err := filepath.Abs(filepath.Join("..", "testdata", "tiny.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// checkParts asserts that every part visible in dir is complete and holds
// the run it is named after, and returns their number.
func checkParts(t *testing.T, dir string) int {
	t.Helper()
	ids, err := results.ListParts(dir)
	if err != nil {
		t.Fatal(err)
	}
	for id := range ids {
		if _, err := results.ReadPart(dir, id); err != nil {
			t.Errorf("part %s is visible but unreadable: %v", id, err)
		}
	}
	return len(ids)
}

// TestKillAndResume kills `hoplore run` with SIGKILL at random moments and
// after given numbers of finished runs, reruns it to completion, and checks
// that the tables equal those of an uninterrupted sweep, with no run lost
// twice over or duplicated.
func TestKillAndResume(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the command and runs it many times")
	}
	bin := buildHoplore(t)
	exp := tinyPath(t)
	base := t.TempDir()
	ref := filepath.Join(base, "ref")
	t0 := time.Now()
	if out, err := exec.Command(bin, "run", exp, "--out", ref, "--quiet", "--workers", "1").CombinedOutput(); err != nil {
		t.Fatalf("uninterrupted run: %v\n%s", err, out)
	}
	whole := time.Since(t0) // the kills below fall within such a span
	t.Logf("uninterrupted sweep: %v", whole)
	dir := filepath.Join(base, "killed")
	start := func() *exec.Cmd {
		cmd := exec.Command(bin, "run", exp, "--out", dir, "--quiet", "--workers", "1")
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		return cmd
	}
	prev := 0
	after := func(what string, cmd *exec.Cmd) {
		cmd.Process.Kill() // SIGKILL
		cmd.Wait()
		n := checkParts(t, dir)
		if n < prev {
			t.Errorf("%s: %d parts, had %d before: finished runs lost", what, n, prev)
		}
		t.Logf("%s: %d parts", what, n)
		prev = n
	}
	// Kills once given numbers of runs have finished ...
	for _, more := range []int{1, 3, 5} {
		want := prev + more
		cmd := start()
		exited := make(chan struct{})
		go func() { cmd.Process.Wait(); close(exited) }()
	poll:
		for {
			select {
			case <-exited:
				break poll
			default:
			}
			if ids, _ := results.ListParts(dir); len(ids) >= want {
				break
			}
			time.Sleep(time.Millisecond)
		}
		cmd.Process.Kill()
		<-exited
		n := checkParts(t, dir)
		if n < prev {
			t.Errorf("killed after %d parts: %d parts, had %d before", want, n, prev)
		}
		t.Logf("killed once %d parts existed: %d parts", want, n)
		prev = n
	}
	// ... and at random moments (in a part write, between runs, while
	// finalizing), until the sweep is done.
	rng := rand.New(rand.NewPCG(2026, 5))
	for k := 0; k < 10 && prev < 32; k++ {
		cmd := start()
		d := time.Duration(rng.Float64() * 0.3 * float64(whole)).Round(time.Millisecond)
		time.Sleep(d)
		after("killed after "+d.String(), cmd)
	}
	var stdout bytes.Buffer
	cmd := exec.Command(bin, "run", exp, "--out", dir, "--workers", "2")
	cmd.Stdout = &stdout
	if err := cmd.Run(); err != nil {
		t.Fatalf("final run: %v\n%s", err, stdout.String())
	}
	if err := CompareDirs(ref, dir); err != nil {
		t.Errorf("resumed after kills against uninterrupted: %v", err)
	}
	runs, err := results.ReadRuns(filepath.Join(dir, results.RunsFile))
	if err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, r := range runs {
		if seen[r.RunID] {
			t.Errorf("run %s appears twice in runs.parquet", r.RunID)
		}
		seen[r.RunID] = true
	}
	if len(runs) != 32 {
		t.Errorf("runs.parquet has %d rows, want 32", len(runs))
	}
}

// TestInterruptKeepsRuns sends SIGINT (Ctrl-C) to `hoplore run` and checks
// the exit status 1, the message, and that the runs it says are kept are
// exactly the parts in the folder.
func TestInterruptKeepsRuns(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the command")
	}
	bin := buildHoplore(t)
	dir := filepath.Join(t.TempDir(), "out")
	var stderr bytes.Buffer
	cmd := exec.Command(bin, "run", tinyPath(t), "--out", dir, "--workers", "1")
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	for {
		if ids, _ := results.ListParts(dir); len(ids) >= 2 {
			break
		}
		time.Sleep(2 * time.Millisecond)
	}
	cmd.Process.Signal(syscall.SIGINT)
	err := cmd.Wait()
	var ee *exec.ExitError
	if !errors.As(err, &ee) || ee.ExitCode() != 1 {
		t.Fatalf("exit: %v, want status 1\n%s", err, stderr.String())
	}
	m := regexp.MustCompile(`(\d+) of 32 runs are kept in .*rerun`).FindStringSubmatch(stderr.String())
	if m == nil {
		t.Fatalf("stderr does not say how many runs are kept and that a rerun resumes:\n%s", stderr.String())
	}
	kept, _ := strconv.Atoi(m[1])
	if n := checkParts(t, dir); n != kept {
		t.Errorf("message says %d runs kept, folder holds %d", kept, n)
	}
	if _, err := os.Stat(filepath.Join(dir, results.RunsFile)); err == nil {
		t.Error("an interrupted sweep wrote runs.parquet")
	}
}
