// Package agents holds hoplore's routing agents: link-state shortest path,
// the per-node learners (Q-routing and its variants, a small neural Q
// function) with neighbour consensus, and the central controllers. Each
// implements the interfaces package sim declares where it calls them;
// per-node agents see the network only through a *sim.NodeView of their own
// node, central ones only through delayed telemetry snapshots.
package agents
