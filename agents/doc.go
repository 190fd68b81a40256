// Package agents holds hoplore's routing agents: link-state shortest path,
// the per-node learners (Q-routing and its variants, a small neural Q
// function) with neighbour consensus, and the central controllers. Each
// implements the interfaces package sim declares where it calls them;
// per-node agents see the network only through a *sim.NodeView of their own
// node, central ones only through delayed telemetry snapshots.
//
// Every kind describes itself in one Kind, registered from its own file:
// its experiment-file fields (name, type, default, check, text form), its
// constructor, whether it is central, and its cost estimate. Reading agents
// from experiment files, Validate, Canonical (the agent column's value),
// Defaults, New, a run's control delay and `hoplore check`'s estimates all
// go through the registry; Kinds lists the kinds in documentation order.
//
// # Adding an agent kind
//
//  1. Write the agent in a new file, say foo.go, implementing sim.PerNode
//     (a router per node) or sim.Central (one controller fed telemetry).
//  2. In the same file declare FooKind = "foo" and, from init, call
//     Register(Kind{...}) with Name, an Order (its place among Kinds), its
//     Fields made with NewField (reuse learningRateField, exploreField,
//     consensusField, everyField and controlDelayField where they fit; a
//     parameter no existing Params field holds gets a new Go field in
//     params.go), New, Cost, and Central: true for a controller. A central
//     kind must list control_delay (Register panics otherwise): runs take
//     their telemetry age and install delay from it.
//  3. Add one line for the kind to the contract table in contract_test.go
//     (nil checks its defaults). TestContract fails for a registered kind
//     without a line; the agenttest suite then checks delivery, failures,
//     determinism and that the kind's registration matches the agent it
//     builds.
//
// Experiment files, labels, checks and estimates need no other change. Add
// the kind's fields to the file reference in package experiments' doc and
// to the README.
package agents
