package demands_test

import (
	"fmt"

	"hoplore/demands"
)

// A replay of two matrices in CSV, with the unit in the header: 12 Mbit/s
// of 1500-byte packets is 1000 packets per second.
func ExampleRead() {
	const file = "t,source,target,rate_mbps\n0,Quarrow,Tillmoor,12\n5m,Tillmoor,Quarrow,3\n"
	tb, err := demands.Read("day.csv", []byte(file), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, r := range tb.Rows {
		fmt.Printf("t=%gs %s→%s %g packets/s\n", r.T, r.Source, r.Target, r.Unit.PerSecond(r.Rate, 1500))
	}
	// Output:
	// t=0s Quarrow→Tillmoor 1000 packets/s
	// t=300s Tillmoor→Quarrow 250 packets/s
}
