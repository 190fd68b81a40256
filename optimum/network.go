package optimum

import (
	"errors"
	"fmt"
	"math"

	"hoplore/sim"
)

// DefaultEpsilon is the relative gap at which both solvers stop unless told
// otherwise: 1%.
const DefaultEpsilon = 0.01

// ErrInput is wrapped by every error about the input of a solver.
var ErrInput = errors.New("optimum: bad input")

// Channel is one directed channel of the model: a queue drained at Capacity
// packets per second, then a propagation Delay in seconds. A channel of
// capacity 0 is absent (failed): nothing is routed over it, but it keeps its
// index, so channel indices stay those of the caller's network. Room and
// Loss matter only to MinLoss and MinMix's loss term.
type Channel struct {
	From, To int
	Capacity float64 // packets/s, >= 0
	Delay    float64 // seconds, >= 0
	// Room is the packets the channel holds, the one in transmission
	// included (the K of an M/M/1/K queue), >= 0; 0 is an unlimited buffer.
	Room int
	// Loss is the probability that a packet the channel transmits is lost
	// on the link, in [0, 1].
	Loss float64
}

// Network is the input of the solvers: Nodes nodes numbered 0..Nodes-1 and
// directed channels between them.
type Network struct {
	Nodes    int
	Channels []Channel
}

// FromNet returns the model of n for packets of meanBytes bytes on average:
// channel c of n becomes channel c of the model with capacity
// bandwidth/(8·meanBytes) packets/s, n's propagation delay, and room for
// its Buffer waiting packets plus the one in transmission (Loss 0: set it
// from link conditions where they are known). Channels for which down(c)
// is true get capacity 0; down may be nil.
func FromNet(n *sim.Net, meanBytes float64, down func(c int) bool) Network {
	out := Network{Nodes: n.NumNodes(), Channels: make([]Channel, len(n.Channels))}
	for i, c := range n.Channels {
		capacity := c.Bandwidth / (8 * meanBytes)
		if down != nil && down(i) {
			capacity = 0
		}
		out.Channels[i] = Channel{From: c.From, To: c.To, Capacity: capacity, Delay: c.Delay.Seconds(), Room: c.Buffer + 1}
	}
	return out
}

func (n *Network) validate() error {
	if n.Nodes <= 0 {
		return fmt.Errorf("%w: %d nodes", ErrInput, n.Nodes)
	}
	for i, c := range n.Channels {
		switch {
		case c.From < 0 || c.From >= n.Nodes || c.To < 0 || c.To >= n.Nodes:
			return fmt.Errorf("%w: channel %d joins %d→%d outside 0..%d", ErrInput, i, c.From, c.To, n.Nodes-1)
		case c.From == c.To:
			return fmt.Errorf("%w: channel %d is a self-loop at node %d", ErrInput, i, c.From)
		case !(c.Capacity >= 0) || math.IsInf(c.Capacity, 1):
			return fmt.Errorf("%w: channel %d capacity %v is not a finite number >= 0", ErrInput, i, c.Capacity)
		case !(c.Delay >= 0) || math.IsInf(c.Delay, 1):
			return fmt.Errorf("%w: channel %d delay %v is not a finite number >= 0", ErrInput, i, c.Delay)
		case c.Room < 0:
			return fmt.Errorf("%w: channel %d room %d is negative", ErrInput, i, c.Room)
		case !(c.Loss >= 0 && c.Loss <= 1):
			return fmt.Errorf("%w: channel %d loss probability %v is outside [0, 1]", ErrInput, i, c.Loss)
		}
	}
	return nil
}

// CheckEpsilon returns an error unless eps is in (0, 0.5], the range of
// relative gaps the solvers accept.
func CheckEpsilon(eps float64) error {
	if !(eps > 0 && eps <= 0.5) {
		return fmt.Errorf("%w: epsilon %v is outside (0, 0.5]", ErrInput, eps)
	}
	return nil
}
