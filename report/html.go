package report

// pageHTML is the report page. It loads nothing from outside: styles and
// the image check are inline, charts are data URLs. The script at the end
// marks the body with data-images="ok" once every chart image has decoded,
// so a headless browser's DOM dump shows whether the page rendered.
const pageHTML = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="color-scheme" content="light dark">
<title>hoplore report: {{.Name}}</title>
<style>
:root { --ink:#1b1b1b; --muted:#5c5c5c; --bg:#f6f6f4; --card:#ffffff; --line:#dcdcdc; --best:#d9ecf7; --accent:#0072B2; }
@media (prefers-color-scheme: dark) {
  :root { --ink:#e8e8e8; --muted:#a6a6a6; --bg:#121214; --card:#1c1c1e; --line:#3c3c3c; --best:#123a52; --accent:#56B4E9; }
}
* { box-sizing: border-box; }
body { margin:0; background:var(--bg); color:var(--ink); font:15px/1.45 "Liberation Sans", Arial, Helvetica, sans-serif; }
header, main { max-width: 1320px; margin: 0 auto; padding: 0 20px; }
header { padding-top: 24px; }
h1 { font-size: 1.5em; margin: 0 0 4px; }
h2 { font-size: 1.2em; margin: 32px 0 8px; }
h3 { font-size: 1em; margin: 18px 0 6px; }
dl.facts { display:grid; grid-template-columns: max-content 1fr; gap: 2px 14px; margin: 10px 0; color: var(--muted); }
dl.facts dt { font-weight: bold; color: var(--ink); }
dl.facts dd { margin: 0; }
nav ol { columns: 2; padding-left: 1.2em; }
a { color: var(--accent); }
figure.chart { background:var(--card); border:1px solid var(--line); border-radius:6px; margin: 12px 0 20px; padding: 10px; overflow-x: auto; }
figure.chart img { display:block; max-width:100%; height:auto; margin: 0 auto; }
figcaption { color: var(--muted); font-size: 0.9em; margin-top: 6px; }
table { border-collapse: collapse; background: var(--card); margin: 8px 0 20px; font-size: 0.9em; }
th, td { border: 1px solid var(--line); padding: 4px 8px; text-align: right; white-space: nowrap; }
th { background: var(--bg); }
td.dim { text-align: left; }
td.best { background: var(--best); font-weight: bold; }
td.best::after { content: " ★"; color: var(--accent); }
td.clear { font-weight: bold; color: var(--accent); }
td.caveat { font-style: italic; }
.note { color: var(--muted); }
.scroll { overflow-x: auto; }
</style>
</head>
<body data-images="pending">
<header>
<h1>Experiment {{.Name}}</h1>
<dl class="facts">
<dt>runs</dt><dd>{{.Runs}} ({{.Replicates}} replicates per cell)</dd>
<dt>topologies</dt><dd>{{.Topologies}}</dd>
<dt>agents</dt><dd>{{range $i, $a := .Agents}}{{if $i}}, {{end}}{{$a}}{{end}}</dd>
<dt>loads</dt><dd>{{.Loads}} (normalised: 1 saturates the busiest channel under hop-count shortest path)</dd>
<dt>failure schedules</dt><dd>{{.Failures}}</dd>
</dl>
<nav aria-label="contents"><ol>
{{if .Glance}}<li><a href="#glance">At a glance: the fastest agent in each cell</a></li>
{{end}}{{if .FlowGlance}}<li><a href="#flow-glance">Flows at a glance: among the agents completing the most flows, the one whose flows were slowed least in each cell</a></li>
{{end}}{{range .Charts}}<li><a href="#{{.ID}}">{{.Title}}</a></li>
{{end}}{{if .Events}}<li><a href="#recovery">Recovery after each failure event</a></li>
{{end}}{{if .Worst}}<li><a href="#worst">The worst single failures of each agent</a></li>
{{end}}{{range .Tables}}<li><a href="#{{.ID}}">Table: {{.Title}}</a></li>
{{end}}</ol></nav>
{{range .Notes}}<p class="note">{{.}}</p>
{{end}}</header>
<main>
{{if .Glance}}<section id="glance">
<h2>At a glance: the fastest agent in each cell</h2>
<p class="note">Fastest: lowest mean delivery time across replicates. The runner-up is compared with it run by run (same replicate, same seeds): difference in mean delivery time with its 95% confidence interval, its size relative to the runner-up, paired t test and Wilcoxon signed-rank test. The t test's p-value is shown raw and adjusted by Holm's step-down method (1979) across the rows of this table, since the table makes one test per row. Loss rates beside them, since an agent that drops slow packets can look fast. Verdict "faster": the 95% confidence interval of the difference lies below zero and the adjusted p is below 0.05; "unclear": not both; "untested": fewer than 3 paired replicates, or the same difference in every replicate (no interval or p-value can be drawn from those). Model optimum: the least mean delivery time of any splittable routing of the cell's offered matrix, with every channel an independent M/G/1 queue with unlimited buffer for the run's packet-size variability (Pollaczek–Khinchine mean: M/D/1 for a fixed size, M/M/1 for exponential sizes; Kleinrock's independence assumption) plus propagation, solved for every topology state of the cell's failure schedule (optimum.parquet) as if re-solved the instant the state changes, and averaged over the measured window (warm-up to end) weighted by each state's time in it and the share of the demand it can route — the packets the optimum delivers there ("optimum over" lists the states and their shares of the window; without failures it is the intact optimum, runs.parquet opt_delay_mean_s). "÷ optimum" is an agent's mean delivery time over it. The optimum's loss is the demand a failure leaves with no path (to a down node, or across a cut), over the demand sent (a down node sends nothing); below every state's load limit it loses nothing else, so an agent's loss above it is routing's doing, its reaction to failures included. Not given (–, with the reason) when some state in the window is beyond its load limit (no routing keeps the channels stable there), or when random failures leave the states unsolved.</p>
<div class="scroll"><table class="glance" data-table="glance">
<thead><tr><th>topology</th><th>failures</th><th>load</th><th>fastest</th><th>delivery ({{.GlanceUnit}})</th><th>loss (%)</th><th>runner-up</th><th>delivery ({{.GlanceUnit}})</th><th>loss (%)</th><th>difference ({{.GlanceUnit}}) ± 95% CI</th><th>relative</th><th>p (t)</th><th>p (t), Holm</th><th>p (Wilcoxon)</th><th>verdict</th><th>model optimum ({{.GlanceUnit}})</th><th>optimum over</th><th>optimum loss (%)</th><th>fastest ÷ optimum</th><th>runner-up ÷ optimum</th><th>loss above optimum (%, fastest / runner-up)</th></tr></thead>
<tbody>
{{range .Glance}}<tr><td class="dim">{{.Topology}}</td><td class="dim">{{.Failure}}</td><td>{{.Load}}</td><td class="dim"><b>{{.Best}}</b></td><td>{{.BestMean}}</td><td>{{.BestLoss}}</td><td class="dim">{{.Second}}</td><td>{{.SecondMean}}</td><td>{{.SecondLoss}}</td><td>{{.Diff}}</td><td>{{.Rel}}</td><td>{{.PT}}</td><td>{{.PTHolm}}</td><td>{{.PW}}</td><td class="dim{{if .Clear}} clear{{end}}">{{.Verdict}}</td><td>{{.Opt}}</td><td class="dim">{{.OptOver}}</td><td>{{.OptLoss}}</td><td>{{.BestRatio}}</td><td>{{.SecondRatio}}</td><td>{{.BestExtra}} / {{.SecondExtra}}</td></tr>
{{end}}</tbody></table></div>
</section>
{{end}}{{if .FlowGlance}}<section id="flow-glance">
<h2>Flows at a glance: among the agents completing the most flows, the one whose flows were slowed least in each cell</h2>
<p class="note">Completion times and slowdowns average the completed flows only: an agent that fails its long flows (any lost packet fails a flow) would show the short flows' times and look fastest. So the agents are ranked in two steps. First by the share of flows completed (runs.parquet completed_share: flows completed over flows started after the warm-up; the rest failed or were unfinished at the end): the agent completing the highest mean share is compared run by run (same replicate, same seeds, hence the same flows) with every other agent, and an agent completes clearly fewer flows when the 95% confidence interval (Student t) of the difference lies below zero and the paired t test's p-value, adjusted by Holm's step-down method (1979) across all these tests of the table, is below 0.05. Those agents are left out of the second step (last column). Then, among the rest, least slowed: lowest mean slowdown (a completed flow's completion time over its completion time alone on the idle network, slowdown_mean) across replicates; the runner-up is the next lowest, or, when no other agent is left, the left-out agent completing most. The two are compared run by run: differences (least slowed − runner-up) in the share completed, mean slowdown, mean and 99th-percentile completion time and failed flows, each with its 95% confidence interval and the paired t test's p-value adjusted by Holm across the rows of this table, metric by metric. Verdict "less slowed": the interval of the slowdown difference lies below zero and its adjusted p is below 0.05; "unclear": not both; "untested": fewer than 3 paired replicates, or the same difference in every replicate. A verdict that adds "but completes fewer flows" names an agent completing fewer flows than the leader or the runner-up by a difference the replicates do not establish: its lower slowdown may come from the flows it did not complete. hoplore compare tests these and the other flow columns per agent pair.</p>
<div class="scroll"><table class="glance" data-table="flow-glance">
<thead><tr><th>topology</th><th>failures</th><th>load</th><th>least slowed</th><th>completed (%)</th><th>slowdown</th><th>runner-up</th><th>completed (%)</th><th>slowdown</th><th>completed: difference (points) ± 95% CI</th><th>Holm p</th><th>slowdown: difference ± 95% CI</th><th>relative</th><th>p (t)</th><th>p (t), Holm</th><th>verdict</th><th>completion time, mean: difference ({{.FCTUnit}})</th><th>Holm p</th><th>completion time, p99: difference ({{.FCTUnit}})</th><th>Holm p</th><th>failed flows: difference</th><th>Holm p</th><th>left out: completing clearly fewer flows (%)</th></tr></thead>
<tbody>
{{range .FlowGlance}}<tr><td class="dim">{{.Topology}}</td><td class="dim">{{.Failure}}</td><td>{{.Load}}</td><td class="dim"><b>{{.Best}}</b></td><td>{{.BestShare}}</td><td>{{.BestSD}}</td><td class="dim">{{.Second}}</td><td>{{.SecondShare}}</td><td>{{.SecondSD}}</td><td>{{.Share}}</td><td>{{.ShareHolm}}</td><td>{{.SD}}</td><td>{{.SDRel}}</td><td>{{.SDPT}}</td><td>{{.SDPTHolm}}</td><td class="dim{{if .Clear}} clear{{end}}{{if .Caveat}} caveat{{end}}">{{.Verdict}}</td><td>{{.FCT}}</td><td>{{.FCTHolm}}</td><td>{{.P99}}</td><td>{{.P99Holm}}</td><td>{{.Failed}}</td><td>{{.FailedHolm}}</td><td class="dim">{{.Excluded}}</td></tr>
{{end}}</tbody></table></div>
</section>
{{end}}{{range .Charts}}<section class="chart-section">
<h2>{{.Title}}</h2>
<figure class="chart" id="{{.ID}}" data-chart="{{.ID}}">
<img class="chart-img" id="img-{{.ID}}" alt="{{.Title}}" width="{{.W}}" height="{{.H}}" src="{{.Src}}">
<figcaption>{{.Caption}}</figcaption>
</figure>
</section>
{{end}}{{if .Events}}<section id="recovery">
<h2>Recovery after each failure event</h2>
<p class="note">Recovery time: from the event until binned delivery time and loss are back near their pre-event level for three bins in a row; mean ± 95% CI over the replicates that recovered.</p>
{{range .Events}}<h3>{{.Topology}} · {{.Failure}}: {{.Event}} (load {{.Load}})</h3>
<table class="recovery"><thead><tr><th>agent</th><th>recovery time</th><th>never recovered</th><th>packets lost (mean)</th></tr></thead><tbody>
{{range .Rows}}<tr><td class="dim">{{.Agent}}</td><td>{{.Recovery}}</td><td>{{.NotRecovered}}</td><td>{{.Lost}}</td></tr>
{{end}}</tbody></table>
{{end}}</section>
{{end}}{{if .Worst}}<section id="worst">
<h2>The worst single failures of each agent</h2>
<p class="note">Up to {{.WorstShown}} per agent, worst first: most reachable packets lost, then the longest reconnect time, then the largest delay ratio; each a mean over the replicates in which the failure happened. Reconnect: from the failure to the last drop of a reachable packet it caused (exact). Settle: until delivery time is stable at its new level. Delay ratio: new level over the level before.</p>
{{range .Worst}}<h3>{{.Agent}}</h3>
<div class="scroll"><table class="worst" data-table="worst"><thead><tr><th>topology</th><th>schedule</th><th>element</th><th>reachable lost</th><th>reconnect</th><th>settle</th><th>delay ratio</th><th>replicates</th></tr></thead><tbody>
{{range .Rows}}<tr><td class="dim">{{.Topology}}</td><td class="dim">{{.Failure}}</td><td class="dim">{{.Element}}</td><td>{{.LostReachable}}</td><td>{{.Reconnect}}</td><td>{{.Settle}}</td><td>{{.DelayRatio}}</td><td>{{.Of}}</td></tr>
{{end}}</tbody></table></div>
{{end}}</section>
{{end}}{{range .Tables}}<section class="table-section">
<h2 id="{{.ID}}">{{.Title}}{{if .Unit}} ({{.Unit}}){{end}}, mean ± 95% CI</h2>
<p class="note">★ marks the lowest mean in each row.{{if .Share}} Completed flows only: each cell gives the agent's mean share of {{.Share}} completed when below 100%; the lowest mean may be that of an agent that fails the slow flows.{{end}}</p>
<div class="scroll"><table class="cells" data-table="{{.ID}}">
<thead><tr><th>topology</th><th>load</th><th>failures</th>{{range .Agents}}<th>{{.}}</th>{{end}}</tr></thead>
<tbody>
{{range .Rows}}<tr><td class="dim">{{.Topology}}</td><td>{{.Load}}</td><td class="dim">{{.Failure}}</td>{{range .Cells}}<td{{if .Best}} class="best"{{end}} title="{{.Title}}">{{.Text}}</td>{{end}}</tr>
{{end}}</tbody></table></div>
</section>
{{end}}</main>
<script>
window.addEventListener("load", function () {
  var imgs = document.querySelectorAll("img");
  var ok = 0;
  for (var i = 0; i < imgs.length; i++) {
    if (imgs[i].complete && imgs[i].naturalWidth > 0) { ok++; imgs[i].setAttribute("data-decoded", "yes"); }
    else { imgs[i].setAttribute("data-decoded", "no"); }
  }
  document.body.setAttribute("data-images-total", String(imgs.length));
  document.body.setAttribute("data-images-decoded", String(ok));
  document.body.setAttribute("data-images", ok === imgs.length ? "ok" : "failed");
});
</script>
</body>
</html>
`
