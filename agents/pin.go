package agents

// Flow pinning, a field of every kind.
const (
	// PinPacket: every packet is forwarded by the agent's own choice (the
	// published per-node methods decide per packet).
	PinPacket = "packet"
	// PinFlow: at every node, the packets of a flow of flow traffic follow
	// the channel the flow's first packet to reach the node was sent on
	// (while that channel is seen up); the agent still sees every packet.
	PinFlow = "flow"
)

// pinField is added to every kind's fields by Register.
var pinField = NewField("pin", func(p *Params) *string { return &p.Pin }, PinPacket, oneOf("pin", PinPacket, PinFlow))
