package optimum_test

import (
	"fmt"

	"hoplore/optimum"
)

// Two sites joined by a fast and a slow channel (10 and 4 packets/s, 2 ms
// propagation each), 9 packets/s to carry: the least maximum utilisation,
// the least mean delay, and how the source should split its traffic.
func ExampleSolver() {
	s, err := optimum.NewSolver(optimum.Network{Nodes: 2, Channels: []optimum.Channel{
		{From: 0, To: 1, Capacity: 10, Delay: 0.002},
		{From: 0, To: 1, Capacity: 4, Delay: 0.002},
	}})
	if err != nil {
		panic(err)
	}
	if err := s.SetDemand([][]float64{{0, 9}}); err != nil {
		panic(err)
	}
	mm, _ := s.MinMaxUtil(optimum.DefaultEpsilon)
	fmt.Printf("least max utilisation %.3f (gap %.3f)\n", mm.Util, mm.Gap)
	d, _ := s.MinDelay(0.0001)
	fmt.Printf("least mean delay %.4f s (gap below %v: %v)\n", d.Mean, 0.0001, d.Gap <= 0.0001)
	var sp optimum.Splits
	s.Splits(&sp)
	for _, x := range sp.At(0, 1) {
		fmt.Printf("channel %d carries %.3f\n", x.Channel, x.Weight)
	}
	// Output:
	// least max utilisation 0.643 (gap 0.000)
	// least mean delay 0.3720 s (gap below 0.0001: true)
	// channel 0 carries 0.771
	// channel 1 carries 0.229
}

// The same two sites with fixed-size packets: each channel is an M/D/1
// queue (service-time cs² = 0), whose mean wait is half an M/M/1 one's at
// the same load: the least mean delay falls from 0.3720 s to 0.2538 s and
// the fast channel takes a little more of the traffic.
func ExampleSolver_SetServiceSCV() {
	s, err := optimum.NewSolver(optimum.Network{Nodes: 2, Channels: []optimum.Channel{
		{From: 0, To: 1, Capacity: 10, Delay: 0.002},
		{From: 0, To: 1, Capacity: 4, Delay: 0.002},
	}})
	if err != nil {
		panic(err)
	}
	if err := s.SetServiceSCV(0); err != nil {
		panic(err)
	}
	if err := s.SetDemand([][]float64{{0, 9}}); err != nil {
		panic(err)
	}
	d, _ := s.MinDelay(0.0001)
	fmt.Printf("least mean delay %.4f s (gap below %v: %v)\n", d.Mean, 0.0001, d.Gap <= 0.0001)
	var sp optimum.Splits
	s.Splits(&sp)
	for _, x := range sp.At(0, 1) {
		fmt.Printf("channel %d carries %.3f\n", x.Channel, x.Weight)
	}
	// Output:
	// least mean delay 0.2538 s (gap below 0.0001: true)
	// channel 0 carries 0.780
	// channel 1 carries 0.220
}

// Two sites joined by a channel that holds 3 packets and one that holds
// 50 but loses 0.1% of what it sends (10 packets/s each), 8 packets/s to
// carry: the least expected loss, and a mix that also weighs delay.
func ExampleSolver_MinLoss() {
	s, err := optimum.NewSolver(optimum.Network{Nodes: 2, Channels: []optimum.Channel{
		{From: 0, To: 1, Capacity: 10, Delay: 0.002, Room: 3},
		{From: 0, To: 1, Capacity: 10, Delay: 0.002, Room: 50, Loss: 0.001},
	}})
	if err != nil {
		panic(err)
	}
	if err := s.SetDemand([][]float64{{0, 8}}); err != nil {
		panic(err)
	}
	l, _ := s.MinLoss(0.001)
	fmt.Printf("least loss %.5f: small buffer carries %.3f\n", l.LossRate, s.Load()[0]/8)
	m, _ := s.MinMix(optimum.Weights{Delay: 1, Loss: 10}, 0.001)
	fmt.Printf("mix: delay ratio %.3f, loss %.5f, small buffer carries %.3f\n", m.DelayRatio, m.LossRate, s.Load()[0]/8)
	// Output:
	// least loss 0.00094: small buffer carries 0.081
	// mix: delay ratio 1.685, loss 0.01263, small buffer carries 0.434
}
