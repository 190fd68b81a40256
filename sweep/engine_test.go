package sweep

import (
	"context"
	"errors"
	"fmt"
	"reflect"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"
)

// fakeUnit is a run whose tables are a string derived from its id.
type fakeUnit struct {
	id    string
	cost  float64
	calls *atomic.Int64
	run   func(ctx context.Context) error // optional hook
}

func (u *fakeUnit) ID() string    { return u.id }
func (u *fakeUnit) Cost() float64 { return u.cost }
func (u *fakeUnit) Execute(ctx context.Context) (string, int64, error) {
	u.calls.Add(1)
	if u.run != nil {
		if err := u.run(ctx); err != nil {
			return "", 0, err
		}
	}
	return "tables of " + u.id, int64(u.cost), nil
}

// memStore keeps parts in memory.
type memStore struct {
	mu        sync.Mutex
	hash      string // hash of the experiment the folder holds
	want      string
	parts     map[string]string
	writes    map[string]int
	finalized []string
}

func newMemStore(hash string) *memStore {
	return &memStore{want: hash, parts: map[string]string{}, writes: map[string]int{}}
}

func (s *memStore) Check(string) error {
	if s.hash != "" && s.hash != s.want {
		return fmt.Errorf("folder holds experiment %s", s.hash)
	}
	return nil
}
func (s *memStore) Mark(string) error { s.hash = s.want; return nil }
func (s *memStore) List(string) (map[string]bool, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	m := map[string]bool{}
	for id := range s.parts {
		m[id] = true
	}
	return m, nil
}
func (s *memStore) Write(_ string, t string) error {
	s.mu.Lock()
	defer s.mu.Unlock()
	id := t[len("tables of "):]
	s.parts[id] = t
	s.writes[id]++
	return nil
}
func (s *memStore) Finalize(_ string, order []string) error {
	s.finalized = slices.Clone(order)
	return nil
}

func fakePlan(n int, calls *atomic.Int64) plan[string] {
	var p plan[string]
	for i := 0; i < n; i++ {
		p.units = append(p.units, &fakeUnit{id: fmt.Sprintf("r%03d", i), cost: float64(1 + (i*7)%5), calls: calls})
		p.share = append(p.share, i)
	}
	return p
}

func TestEngineWorkersSameResult(t *testing.T) {
	var want []string
	for _, w := range []int{1, 2, 4, 16} {
		var calls atomic.Int64
		p := fakePlan(40, &calls)
		st := newMemStore("h")
		oc, err := execute(context.Background(), p, st, engineOpts{out: "x", workers: w})
		if err != nil {
			t.Fatalf("workers %d: %v", w, err)
		}
		if !oc.Complete || oc.Ran != 40 || oc.Skipped != 0 || calls.Load() != 40 {
			t.Errorf("workers %d: outcome %+v, %d calls; want 40 runs, complete", w, oc, calls.Load())
		}
		for id, n := range st.writes {
			if n != 1 {
				t.Errorf("workers %d: run %s written %d times", w, id, n)
			}
		}
		if want == nil {
			want = st.finalized
		} else if !reflect.DeepEqual(st.finalized, want) {
			t.Errorf("workers %d: finalized order %v, want %v", w, st.finalized, want)
		}
	}
	for i, id := range want {
		if id != fmt.Sprintf("r%03d", i) {
			t.Fatalf("finalize order %v is not the run order", want)
		}
	}
}

func TestEngineResumeSkipsFinished(t *testing.T) {
	var calls atomic.Int64
	p := fakePlan(10, &calls)
	st := newMemStore("h")
	st.hash = "h"
	for _, id := range []string{"r001", "r004", "r009", "stray"} {
		st.parts[id] = "tables of " + id
	}
	oc, err := execute(context.Background(), p, st, engineOpts{out: "x", workers: 3})
	if err != nil {
		t.Fatal(err)
	}
	if oc.Skipped != 3 || oc.Ran != 7 || calls.Load() != 7 || !oc.Complete {
		t.Errorf("outcome %+v with %d calls; want 3 skipped, 7 ran, complete", oc, calls.Load())
	}
	if len(st.finalized) != 10 {
		t.Errorf("finalized %v; want the 10 runs of the experiment, not the stray part", st.finalized)
	}
}

func TestEngineOtherExperimentRefused(t *testing.T) {
	var calls atomic.Int64
	st := newMemStore("h")
	st.hash = "other"
	if _, err := execute(context.Background(), fakePlan(3, &calls), st, engineOpts{out: "x", workers: 2}); err == nil {
		t.Fatal("no error for a folder of another experiment")
	}
	if calls.Load() != 0 || len(st.parts) != 0 {
		t.Errorf("%d runs executed, %d parts written; want none", calls.Load(), len(st.parts))
	}
}

func TestEngineShareOnlyDoesNotFinalize(t *testing.T) {
	var calls atomic.Int64
	p := fakePlan(9, &calls)
	p.share = []int{0, 3, 6}
	st := newMemStore("h")
	oc, err := execute(context.Background(), p, st, engineOpts{out: "x", workers: 2, shard: Shard{0, 3}})
	if err != nil {
		t.Fatal(err)
	}
	if oc.Complete || oc.Missing != 6 || oc.Ran != 3 || st.finalized != nil {
		t.Errorf("outcome %+v, finalized %v; want 3 ran, 6 missing, not finalized", oc, st.finalized)
	}
	if !reflect.DeepEqual(sortedKeys(st.parts), []string{"r000", "r003", "r006"}) {
		t.Errorf("parts %v", sortedKeys(st.parts))
	}
}

func sortedKeys[V any](m map[string]V) []string {
	var k []string
	for id := range m {
		k = append(k, id)
	}
	slices.Sort(k)
	return k
}

func TestEngineInterrupt(t *testing.T) {
	var calls atomic.Int64
	p := fakePlan(20, &calls)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var late atomic.Int64
	for i, u := range p.units {
		if i < 5 {
			continue // quick runs; the fifth to finish cancels the sweep
		}
		u.(*fakeUnit).run = func(ctx context.Context) error {
			<-ctx.Done() // still going when the sweep is cancelled,
			late.Add(1)  // then finishing successfully
			return nil
		}
	}
	st := newMemStore("h")
	prog := &cancelAfter{n: 5, cancel: cancel}
	_, err := execute(ctx, p, st, engineOpts{out: "x", workers: 20, prog: prog})
	var ie *Interrupted
	if !errors.As(err, &ie) {
		t.Fatalf("err = %v, want *Interrupted", err)
	}
	// The five quick runs are kept; a blocked run that returns between the
	// cancellation and the stop may be kept too (it is complete).
	if ie.Kept < 5 || ie.Runs != 20 {
		t.Errorf("interrupted: %+v, want at least 5 of 20 kept", ie)
	}
	if !strings.Contains(ie.Error(), "rerun") {
		t.Errorf("message %q does not say that a rerun resumes", ie.Error())
	}
	// Runs that finish after the interruption must not be written: the
	// folder holds exactly the runs reported kept.
	time.Sleep(100 * time.Millisecond)
	st.mu.Lock()
	n := len(st.parts)
	st.mu.Unlock()
	if n != ie.Kept {
		t.Errorf("%d parts after the interruption (%d runs finished late), want the %d reported kept", n, late.Load(), ie.Kept)
	}
	if st.finalized != nil {
		t.Error("finalized after an interruption")
	}
}

// cancelAfter cancels after n runs finished.
type cancelAfter struct {
	nopReporter
	n, got int
	cancel func()
}

func (c *cancelAfter) done(float64, int64) {
	c.got++
	if c.got == c.n {
		c.cancel()
	}
}

func TestEngineRunFailure(t *testing.T) {
	var calls atomic.Int64
	p := fakePlan(30, &calls)
	p.units[7].(*fakeUnit).run = func(context.Context) error { return errors.New("boom") }
	st := newMemStore("h")
	oc, err := execute(context.Background(), p, st, engineOpts{out: "x", workers: 1})
	if err == nil || !errors.Is(err, errRun) || oc.Complete {
		t.Fatalf("err = %v, outcome %+v; want the run's failure, not complete", err, oc)
	}
	if got, want := err.Error(), "sweep: run r007: boom"; got != want {
		t.Errorf("error %q, want %q", got, want)
	}
	if _, ok := st.parts["r007"]; ok {
		t.Error("the failed run has a part")
	}
	if int64(len(st.parts)) != calls.Load()-1 {
		t.Errorf("%d parts for %d calls: finished runs must be kept", len(st.parts), calls.Load())
	}
	if calls.Load() == 30 {
		t.Error("dispatch did not stop after the failure")
	}
}

func TestEngineRunPanic(t *testing.T) {
	var calls atomic.Int64
	p := fakePlan(6, &calls)
	p.units[2].(*fakeUnit).run = func(context.Context) error { panic("index out of range") }
	st := newMemStore("h")
	_, err := execute(context.Background(), p, st, engineOpts{out: "x", workers: 2})
	if err == nil || !errors.Is(err, errRun) || !strings.Contains(err.Error(), "run r002: panic: index out of range") {
		t.Fatalf("err = %v, want the panic reported as the run's failure", err)
	}
}
