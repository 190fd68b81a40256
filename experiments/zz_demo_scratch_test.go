package experiments

import (
	"fmt"
	"sync"
	"testing"
	"time"
)

func TestZZDemoWall(t *testing.T) {
	e, err := LoadBundled("demo")
	if err != nil {
		t.Fatal(err)
	}
	runs := e.Runs()
	next := make(chan *Run)
	var mu sync.Mutex
	var events int64
	st := time.Now()
	var wg sync.WaitGroup
	for w := 0; w < 2; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for r := range next {
				rt, err := r.Execute("x")
				if err != nil {
					t.Error(err)
					continue
				}
				mu.Lock()
				events += rt.Run.Events
				mu.Unlock()
			}
		}()
	}
	for _, r := range runs {
		next <- r
	}
	close(next)
	wg.Wait()
	w := time.Since(st).Seconds()
	fmt.Printf("demo: %d runs, %d events, wall %.1fs, %.3g events/s per worker, estimate %.3g\n", len(runs), events, w, float64(events)/w/2, e.EstimateEvents())
}
