// Package optimum computes the model optimum of a network under a demand
// matrix: what the best splittable routing could achieve, as a reference
// for the routing agents.
//
// The model: directed channels, each a queue drained at a capacity in
// packets/s (bandwidth / (8 × mean packet bytes)) followed by a propagation
// delay, and a demand matrix in packets/s per ordered pair of nodes. Flows
// are splittable and routed per destination.
//
// A Solver holds one network and reusable buffers:
//
//   - MinMaxUtil: the least maximum channel utilisation λ* of any
//     splittable routing (maximum concurrent flow; 1/λ* is the factor by
//     which the demand could grow and still fit). Garg–Könemann phases with
//     commodities grouped by destination; the result carries the primal
//     utilisation reached, a certified lower bound from the algorithm's own
//     lengths, and the gap between them.
//   - MinDelay: the least mean packet delay under the model of independent
//     channels with propagation (Kleinrock's independence assumption, 1964),
//     each an M/G/1 queue with an infinite buffer and the Pollaczek–Khinchine
//     mean sojourn for the packet service-time variability cs² set by
//     SetServiceSCV (1, M/M/1, by default; 0 for fixed-size packets), by flow deviation
//     (Fratta, Gerla & Kleinrock 1973: Frank–Wolfe with a line search)
//     from the min–max routing; its Frank–Wolfe gap certifies a lower
//     bound. When λ* ≥ 1 no routing keeps every queue stable and no finite
//     mean delay exists: the result says so.
//   - MinLoss: the least expected share of packets lost, with finite
//     buffers (each channel an M/M/1/K queue holding Channel.Room packets:
//     its blocking probability, Kleinrock, Queueing Systems Vol. 1, 1975,
//     §3.6) and a per-channel link loss probability (Channel.Loss); convex
//     in the flows, solved by flow deviation (conjugate Frank–Wolfe
//     directions) with its Frank–Wolfe bound.
//     Every routing is feasible: what does not fit is lost.
//   - MinMix: the least w_d·(mean delay ÷ mean zero-load path time) +
//     w_l·(loss share) + w_u·(maximum utilisation), the maximum made smooth
//     for the iterations by an ℓp norm whose excess over it is at most a
//     factor 1 + ε/2; the bound and gap reported are those of the
//     unsmoothed objective.
//   - Splits: the last solution as per-destination next-hop weights over a
//     loop-free graph (cycles cancelled), what a controller installs.
//
// Every gap is relative and certified: primal/lower − 1, both sides computed,
// never a worst-case promise. The solvers stop at a gap ε in (0, 0.5]
// (DefaultEpsilon 1%). Results are pure functions of the inputs (ties in
// shortest paths go to the lowest index, through package paths), and once a
// Solver exists the solvers allocate nothing.
package optimum
