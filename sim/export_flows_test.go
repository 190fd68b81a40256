package sim

import "context"

// Stepper runs one engine in slices of simulated time, for measuring the
// steady state apart from the set-up.
type Stepper struct {
	c Config
	e *engine
}

// NewStepper sets up cfg's run without running it. Its Duration bounds the
// steps.
func NewStepper(cfg *Config) (*Stepper, error) {
	s := &Stepper{c: *cfg}
	e, err := newEngine(&s.c)
	if err != nil {
		return nil, err
	}
	s.e = e
	return s, nil
}

// RunTo processes the events up to time t and returns how many there were.
func (s *Stepper) RunTo(t Time) (int64, error) {
	before := s.e.res.Events
	s.c.Duration = t
	err := s.e.loop(context.Background())
	return s.e.res.Events - before, err
}
