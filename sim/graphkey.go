package sim

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"math"
)

// Key returns a fingerprint of g's structure: node names and processing
// delays, links in order with their ends, bandwidths, delays and buffers
// (coordinates only through the delays they set). Two graphs with the same
// Key route alike; state learned on one fits the other. Hex SHA-256.
func (g *Graph) Key() string {
	h := sha256.New()
	var b [8]byte
	num := func(x uint64) {
		binary.BigEndian.PutUint64(b[:], x)
		h.Write(b[:])
	}
	num(uint64(len(g.Nodes)))
	for _, n := range g.Nodes {
		num(uint64(len(n.Name)))
		h.Write([]byte(n.Name))
		num(uint64(n.Processing))
	}
	num(uint64(len(g.Links)))
	for _, l := range g.Links {
		num(uint64(l.A))
		num(uint64(l.B))
		num(math.Float64bits(l.Bandwidth))
		num(uint64(l.Delay))
		num(uint64(l.Buffer))
	}
	return hex.EncodeToString(h.Sum(nil))
}
