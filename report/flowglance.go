package report

import (
	"cmp"
	"math"
	"slices"

	"hoplore/results"
	"hoplore/stats"
)

// FlowGlanceMetrics are the flow columns the flows-at-a-glance table
// compares, in its column order: the share of flows completed (which
// ranks the agents first), mean slowdown (which ranks those completing as
// many), mean and 99th-percentile completion time, failed flows.
var FlowGlanceMetrics = []string{"completed_share", "slowdown_mean", "fct_mean_s", "fct_p99_s", "flows_failed"}

// FlowGlanceRow answers, for one panel (topology, load, failure schedule)
// whose runs had flow traffic, which agent's flows were slowed least among
// the agents that complete as many flows as any: completion times and
// slowdowns average the completed flows only, so an agent that fails its
// long flows would otherwise look fastest.
//
// The ranking is in two steps. First, Leader is the agent with the highest
// mean completed share (completed_share) across replicates, and every
// other agent is compared with it run by run (paired by replicate); an
// agent completes clearly fewer flows when the 95% interval of its
// difference lies below zero and the paired t test's p, adjusted by Holm
// (1979) across all these tests of the table, is below Alpha. Those agents
// (Excluded) are left out of the second step: among the rest, Best is the
// one with the lowest mean slowdown. Second is the next agent: the next
// lowest slowdown among the rest, else the excluded agent completing most.
type FlowGlanceRow struct {
	Panel
	Best, Second                 string
	BestSlowdown, SecondSlowdown stats.Estimate // slowdown_mean
	BestShare, SecondShare       stats.Estimate // completed_share
	// Leader completes the highest share of flows; Best when Best does.
	Leader      string
	LeaderShare stats.Estimate
	// BestVsLeader is Best − Leader on completed_share (Holm-adjusted with
	// Excluded's tests); zero-valued when Best is Leader.
	BestVsLeader Comparison
	// Excluded are the agents completing clearly fewer flows than Leader,
	// in order of their mean completed share (highest first), with their
	// comparisons against Leader.
	Excluded []Comparison
	// Diffs holds Best − Second on FlowGlanceMetrics, in order; the
	// p-values are adjusted (Holm 1979) across the table's rows, metric by
	// metric.
	Diffs []Comparison
}

// FewerFlows reports whether Best completes a lower mean share of flows
// than Leader (not clearly fewer: then it would have been excluded).
func (g *FlowGlanceRow) FewerFlows() bool {
	return g.Best != g.Leader && g.BestShare.Mean < g.LeaderShare.Mean
}

// clearlyLower reports whether c's A is clearly below its B: the 95%
// interval of the difference below zero and the Holm-adjusted p of the t
// test below Alpha.
func clearlyLower(c *Comparison) bool {
	return c.Note == "" && c.CI95High < 0 && c.PTHolm < Alpha
}

// FlowGlance returns a FlowGlanceRow for every panel in which at least two
// agents have a mean completed share, in panel order; none when d has no
// flows (HasFlows). FlowGlanceRow says how agents are ranked (ties: sorted
// label order).
func FlowGlance(d *Data) []FlowGlanceRow {
	if !d.HasFlows() {
		return nil
	}
	agents := d.Agents()
	byPanel := map[Panel][]Run{}
	for _, r := range d.Runs {
		p := Panel{r.Topology, r.Load, r.Failure}
		byPanel[p] = append(byPanel[p], r)
	}
	share, slow, ranks, family := completionTests(d, "completed_share", "slowdown_mean")
	// step 2: slowdown among the agents not completing clearly fewer
	var out []FlowGlanceRow
	for _, pr := range ranks {
		row, sd := share[pr.row], slow[pr.row].Est
		sub := &Data{Dir: d.Dir, Experiment: d.Experiment, Runs: byPanel[row.Panel]}
		vsOf := map[int]Comparison{}
		in := []int{pr.leader}
		var out2 []int
		for k, j := range pr.vs {
			c := family[pr.firstVs+k]
			vsOf[j] = c
			if clearlyLower(&c) {
				out2 = append(out2, j)
			} else {
				in = append(in, j)
			}
		}
		if len(in)+len(out2) < 2 {
			continue
		}
		slices.SortStableFunc(in, func(a, b int) int { return cmpNaNLast(sd[a].Mean, sd[b].Mean) })
		// out2 keeps the order of the first step: highest share first
		order := append(slices.Clone(in), out2...)
		b, s := order[0], order[1]
		cs, err := Compare(sub, agents[b], agents[s], FlowGlanceMetrics...)
		if err != nil {
			continue // the two never shared a replicate index
		}
		g := FlowGlanceRow{Panel: row.Panel, Best: agents[b], Second: agents[s],
			BestSlowdown: sd[b], SecondSlowdown: sd[s], BestShare: row.Est[b], SecondShare: row.Est[s],
			Leader: agents[pr.leader], LeaderShare: row.Est[pr.leader], Diffs: cs}
		if b != pr.leader {
			g.BestVsLeader = vsOf[b]
		}
		for _, j := range out2 {
			g.Excluded = append(g.Excluded, vsOf[j])
		}
		out = append(out, g)
	}
	// one family per metric: the table's tests of it (Holm 1979)
	for mi := range FlowGlanceMetrics {
		diffs := make([]Comparison, len(out))
		for i := range out {
			diffs[i] = out[i].Diffs[mi]
		}
		adjustHolm(diffs, func(*Comparison) bool { return true })
		for i := range out {
			out[i].Diffs[mi] = diffs[i]
			out[i].Diffs[mi].Verdict = verdict(&out[i].Diffs[mi])
		}
	}
	return out
}

// completionRank is one panel's first ranking step (completionTests): the
// agent completing most and the agents compared with it.
type completionRank struct {
	row     int   // index in the share and slowdown tables
	leader  int   // agent index
	vs      []int // agent indices compared with the leader
	firstVs int   // index of vs[0]'s comparison in the family
}

// completionTests is the first step of the flows-at-a-glance ranking on
// the share-completed column share, with slowdown breaking ties: per panel
// in which at least two agents have a mean share, the leader (highest mean
// share; ties: lower mean slowdown, a NaN slowdown last, then label
// order) and every other agent's comparison with it (agent − leader,
// paired by replicate), all of them one family adjusted by Holm (1979).
// It returns the cell tables of share and slowdown, the panels' ranks and
// the family.
func completionTests(d *Data, share, slowdown string) (shares, slows []TableRow, ranks []completionRank, family []Comparison) {
	agents := d.Agents()
	byPanel := map[Panel][]Run{}
	for _, r := range d.Runs {
		p := Panel{r.Topology, r.Load, r.Failure}
		byPanel[p] = append(byPanel[p], r)
	}
	shares = cellTable(d, results.Runs.Index(share))
	slows = cellTable(d, results.Runs.Index(slowdown))
	for i, row := range shares {
		var have []int
		for j, e := range row.Est {
			if !math.IsNaN(e.Mean) {
				have = append(have, j)
			}
		}
		if len(have) < 2 {
			continue
		}
		sd := slows[i].Est
		slices.SortStableFunc(have, func(a, b int) int {
			return cmp.Or(cmp.Compare(row.Est[b].Mean, row.Est[a].Mean), cmpNaNLast(sd[a].Mean, sd[b].Mean))
		})
		pr := completionRank{row: i, leader: have[0], firstVs: len(family)}
		sub := &Data{Dir: d.Dir, Experiment: d.Experiment, Runs: byPanel[row.Panel]}
		for _, j := range have[1:] {
			cs, err := Compare(sub, agents[j], agents[pr.leader], share)
			if err != nil {
				continue // the two never shared a replicate index
			}
			pr.vs = append(pr.vs, j)
			family = append(family, cs[0])
		}
		ranks = append(ranks, pr)
	}
	// one family: every completion test made (Holm 1979)
	adjustHolm(family, func(*Comparison) bool { return true })
	for i := range family {
		family[i].Verdict = verdict(&family[i])
	}
	return shares, slows, ranks, family
}

// fewerCompleted returns the cells whose agent completes clearly fewer
// flows (share column share) than the panel's leader (completionTests).
func fewerCompleted(d *Data, share, slowdown string) map[Cell]bool {
	_, _, _, family := completionTests(d, share, slowdown)
	out := map[Cell]bool{}
	for i := range family {
		if c := &family[i]; clearlyLower(c) {
			out[Cell{c.Topology, c.AgentA, c.Load, c.Failure}] = true
		}
	}
	return out
}

// cmpNaNLast compares a and b ascending, NaN after every number.
func cmpNaNLast(a, b float64) int {
	switch an, bn := math.IsNaN(a), math.IsNaN(b); {
	case an && bn:
		return 0
	case an:
		return 1
	case bn:
		return -1
	}
	return cmp.Compare(a, b)
}
