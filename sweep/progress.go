package sweep

import (
	"fmt"
	"io"
	"math"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
)

// reporter follows a sweep's progress. Calls come from one goroutine.
type reporter interface {
	begin(todo, skipped int, cost float64) // runs to do, runs already done, their estimated cost
	done(cost float64, events int64)       // one run finished
	end(ok bool)
}

type nopReporter struct{}

func (nopReporter) begin(int, int, float64) {}
func (nopReporter) done(float64, int64)     {}
func (nopReporter) end(bool)                {}

// meter holds the figures both displays show.
type meter struct {
	start          time.Time
	todo, skipped  int
	finished       int
	cost, costDone float64
	events         int64
	now            func() time.Time
}

func (m *meter) begin(todo, skipped int, cost float64) {
	if m.now == nil {
		m.now = time.Now
	}
	m.start, m.todo, m.skipped, m.cost = m.now(), todo, skipped, cost
}

func (m *meter) done(cost float64, events int64) {
	m.finished++
	m.costDone += cost
	m.events += events
}

// rate returns simulated events per second of wall time so far.
func (m *meter) rate() float64 {
	el := m.now().Sub(m.start).Seconds()
	if el <= 0 {
		return 0
	}
	return float64(m.events) / el
}

// eta extrapolates the time left from the estimated cost done so far, or
// returns -1 before any run finished. Estimated cost, not run count, so that
// a grid of unequal runs gets an honest figure.
func (m *meter) eta() time.Duration {
	if m.finished == 0 || m.costDone <= 0 {
		return -1
	}
	if m.finished == m.todo {
		return 0
	}
	el := m.now().Sub(m.start)
	left := math.Max(0, m.cost-m.costDone)
	return time.Duration(float64(el) * left / m.costDone).Round(time.Second)
}

func fmtETA(d time.Duration) string {
	if d < 0 {
		return "ETA --"
	}
	return "ETA " + d.String()
}

// fmtRate formats events per second compactly: 950, 12.3k, 4.56M.
func fmtRate(r float64) string {
	switch {
	case r >= 1e9:
		return fmt.Sprintf("%.3gG", r/1e9)
	case r >= 1e6:
		return fmt.Sprintf("%.3gM", r/1e6)
	case r >= 1e3:
		return fmt.Sprintf("%.3gk", r/1e3)
	}
	return fmt.Sprintf("%.0f", r)
}

// barReporter draws a progress bar (for a terminal).
type barReporter struct {
	meter
	w        io.Writer
	throttle time.Duration // least time between redraws; 0 means 100 ms
	bar      *progressbar.ProgressBar
}

func (b *barReporter) begin(todo, skipped int, cost float64) {
	b.meter.begin(todo, skipped, cost)
	if b.throttle == 0 {
		b.throttle = 100 * time.Millisecond
	}
	desc := "runs"
	if skipped > 0 {
		desc = fmt.Sprintf("runs (%d kept)", skipped)
	}
	b.bar = progressbar.NewOptions(todo,
		progressbar.OptionSetWriter(b.w),
		progressbar.OptionSetDescription(desc),
		progressbar.OptionShowCount(),
		progressbar.OptionSetPredictTime(false),
		progressbar.OptionSetElapsedTime(true),
		progressbar.OptionSetWidth(30),
		progressbar.OptionThrottle(b.throttle),
		progressbar.OptionClearOnFinish(),
	)
	_ = b.bar.RenderBlank()
}

func (b *barReporter) done(cost float64, events int64) {
	b.meter.done(cost, events)
	b.bar.Describe(fmt.Sprintf("%s ev/s  %s", fmtRate(b.rate()), fmtETA(b.eta())))
	_ = b.bar.Add(1)
}

func (b *barReporter) end(ok bool) {
	if ok {
		_ = b.bar.Finish()
	} else {
		fmt.Fprintln(b.w)
	}
}

// lineReporter prints a one-line status every interval (for a log file).
type lineReporter struct {
	meter
	w     io.Writer
	every time.Duration
	label string

	mu   sync.Mutex // guards meter against the ticker goroutine
	stop chan struct{}
	wg   sync.WaitGroup
}

func (l *lineReporter) begin(todo, skipped int, cost float64) {
	l.mu.Lock()
	l.meter.begin(todo, skipped, cost)
	l.mu.Unlock()
	fmt.Fprintf(l.w, "%s%d runs to do, %d already done\n", l.label, todo, skipped)
	l.stop = make(chan struct{})
	l.wg.Add(1)
	go func() {
		defer l.wg.Done()
		t := time.NewTicker(l.every)
		defer t.Stop()
		for {
			select {
			case <-t.C:
				l.line()
			case <-l.stop:
				return
			}
		}
	}()
}

func (l *lineReporter) line() {
	l.mu.Lock()
	defer l.mu.Unlock()
	fmt.Fprintf(l.w, "%s%d/%d runs, %s events/s, %s\n", l.label, l.finished, l.todo, fmtRate(l.rate()), fmtETA(l.eta()))
}

func (l *lineReporter) done(cost float64, events int64) {
	l.mu.Lock()
	l.meter.done(cost, events)
	l.mu.Unlock()
}

func (l *lineReporter) end(ok bool) {
	close(l.stop)
	l.wg.Wait()
	l.line()
}
