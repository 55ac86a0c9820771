package report

import "html/template"

// css is the whole style sheet of the page: sober, printable, no web
// fonts (the reader's own sans-serif is used).
const css = `
:root{--ink:#1d2733;--muted:#5b6673;--line:#d5dae0;--bg:#fbfbfa;--accent:#1f5f8b;--warm:#b5521b;--good:#2e7d4f;--bad:#a52a2a;--warnc:#9a6b00}
*{box-sizing:border-box}
body{margin:0;background:var(--bg);color:var(--ink);font:15px/1.45 system-ui,-apple-system,"Segoe UI",Helvetica,Arial,sans-serif}
main{max-width:1100px;margin:0 auto;padding:24px 28px 48px}
h1{font-size:1.7em;margin:0 0 .2em}
h2{font-size:1.25em;margin:2em 0 .6em;padding-bottom:.2em;border-bottom:2px solid var(--ink)}
h3{font-size:1.05em;margin:1.4em 0 .4em}
.sub{color:var(--muted);margin:.2em 0}
.caution{border-left:6px solid var(--warm);background:#fbeee6;padding:.7em 1em;margin:1em 0;font-size:1.05em}
table{border-collapse:collapse;margin:.6em 0;font-variant-numeric:tabular-nums}
th,td{padding:.3em .7em;text-align:left;border-bottom:1px solid var(--line);vertical-align:top}
th{font-weight:600;border-bottom:2px solid var(--ink);white-space:nowrap}
td.num{text-align:right;white-space:nowrap}
tr.front td{font-weight:600;background:#eef4f9}
.grid2{display:flex;flex-wrap:wrap;gap:2em;align-items:flex-start}
.counts span{display:inline-block;margin-right:1.2em}
.counts b{font-size:1.2em}
.tag{display:inline-block;font-size:.78em;padding:0 .45em;border:1px solid currentColor;border-radius:3px;margin-left:.4em}
.good{color:var(--good)}.bad{color:var(--bad)}.warn{color:var(--warnc)}
figure{margin:.8em 0}
figcaption{color:var(--muted);font-size:.9em;max-width:720px}
svg{max-width:100%;height:auto;background:#fff}
details{border:1px solid var(--line);border-radius:4px;margin:.5em 0;background:#fff}
details>summary{cursor:pointer;padding:.5em .8em;font-weight:600}
details>div{padding:0 1em 1em}
dl.meta{display:grid;grid-template-columns:max-content 1fr;gap:.15em 1em;margin:.4em 0}
dl.meta dt{color:var(--muted)}dl.meta dd{margin:0}
pre.log{background:#1d2733;color:#f1f1ef;padding:.8em 1em;overflow-x:auto;font-size:.85em;line-height:1.35;white-space:pre-wrap}
.flag{border-left:6px solid var(--warnc);background:#fbf5e4;padding:.5em 1em}
footer{margin-top:3em;color:var(--muted);font-size:.85em}
@media print{body{background:#fff;font-size:11pt}main{max-width:none;padding:0}details{break-inside:avoid}figure{break-inside:avoid}svg{background:none}}
`

var page = template.Must(template.New("page").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Name}} · study report</title>
<style>` + css + `</style>
</head>
<body>
<main>
<header>
<h1>{{.Name}}</h1>
{{with .Description}}<p class="sub">{{.}}</p>{{end}}
{{with .Generated}}<p class="sub">Report generated {{.}}</p>{{end}}
{{with .Caution}}<p class="caution"><strong>Caution.</strong> {{.}}</p>{{end}}
</header>

<section id="recipe">
<h2>Recipe</h2>
<div class="grid2">
<table>
<thead><tr><th>Parameter</th><th>Kind</th><th>Range or levels</th><th>Unit</th></tr></thead>
<tbody>
{{range .Params}}<tr><td>{{.Name}}</td><td>{{.Kind}}</td><td>{{.Range}}</td><td>{{.Unit}}</td></tr>
{{else}}<tr><td colspan="4">no parameters</td></tr>
{{end}}</tbody>
</table>
<dl class="meta">
<dt>Design</dt><dd>{{.Design}}</dd>
<dt>Variants</dt><dd>{{.NVariants}}</dd>
<dt>Objective</dt><dd>{{.Objective}}{{with .Better}} ({{.}} is better){{end}}</dd>
{{with .Baseline}}<dt>Baseline</dt><dd>{{.}}</dd>{{end}}
</dl>
</div>
<p class="counts"><span><b class="good">{{.Counts.Done}}</b> done</span><span><b class="bad">{{.Counts.Failed}}</b> failed</span><span><b>{{.Counts.Running}}</b> running</span><span><b>{{.Counts.Pending}}</b> pending</span><span>of {{.Total}}</span></p>
</section>

<section id="ranking-section">
<h2>Ranking</h2>
{{if .Ranking}}
<table id="ranking">
<thead><tr><th>Rank</th><th>Variant</th><th title="variants sharing a letter cannot be told apart at the 95 % level">Group</th>{{range .ParamNames}}<th>{{.}}</th>{{end}}<th>Mean ± 95 % half-width</th><th>Verdict</th>{{if .Baseline}}<th>Δ vs baseline</th><th>Change</th>{{end}}</tr></thead>
<tbody>
{{range .Ranking}}<tr class="rank-row"><td class="num">{{.Rank}}</td><td>{{.Label}}{{if .Name}} <span class="sub">{{.Name}}</span>{{end}}{{if .IsBaseline}}<span class="tag">baseline</span>{{end}}</td><td>{{.Group}}</td>{{range .Params}}<td>{{.}}</td>{{end}}<td class="num">{{.Mean}}</td><td class="{{.VerdictClass}}">{{.Verdict}}</td>{{if $.Baseline}}<td class="num">{{.Delta}}</td><td class="num">{{.Change}}</td>{{end}}</tr>
{{end}}</tbody>
</table>
<figure>{{.RankFigure}}<figcaption>Mean of {{.Objective}} per ranked variant, best at the top, with its 95 % confidence interval{{if .Baseline}}; the dashed line is the baseline{{end}}.</figcaption></figure>
{{else}}<p>No variant has been ranked yet.</p>{{end}}
</section>

{{with .Tradeoff}}
<section id="tradeoff">
<h2>Trade-off</h2>
<p>{{.Title}}{{with .Limits}}, within {{.}}{{end}}. The front holds the variants no other beats in every objective{{if .Limits}} while keeping the limits{{end}}; the chance of being on it accounts for every average's uncertainty ({{.Draws}} draws, each average normal with its standard error).</p>
<table id="tradeoff-table">
<thead><tr><th>Variant</th>{{range $.ParamNames}}<th>{{.}}</th>{{end}}{{range .Objectives}}<th>{{.}} ± 95 % half-width</th>{{end}}<th>Chance on front</th><th>Status</th></tr></thead>
<tbody>
{{range .Rows}}<tr{{if .Front}} class="front"{{end}}><td>{{.Label}}</td>{{range .Params}}<td>{{.}}</td>{{end}}{{range .Values}}<td class="num">{{.}}</td>{{end}}<td class="num">{{.Chance}}</td><td>{{.Status}}</td></tr>
{{end}}</tbody>
</table>
{{if .Figure}}<figure>{{.Figure}}<figcaption>Each variant's averages of the first two objectives with their 95 % intervals. Blue, joined and labelled: the front of the measured means; grey: the other variants; orange dashes: the front the response surfaces predict (a model's: confirm a point by running it); orange dots: the limits of a plotted objective.</figcaption></figure>{{end}}
{{with .PredictedNote}}<p class="sub">{{.}}</p>{{end}}
</section>
{{end}}
<section id="variants">
<h2>Variants</h2>
{{range .Variants}}<details{{if .Open}} open{{end}}>
<summary>{{.Label}}{{if .Name}} · {{.Name}}{{end}} <span class="tag {{.StateClass}}">{{.State}}</span></summary>
<div>
<dl class="meta">
{{range .Params}}<dt>{{.K}}</dt><dd>{{.V}}</dd>{{end}}
{{with .Runtime}}<dt>Run time</dt><dd>{{.}}</dd>{{end}}
{{if .Cores}}<dt>Cores</dt><dd>{{.Cores}}</dd>{{end}}
{{with .ExitStatus}}<dt>Exit</dt><dd class="bad">{{.}}</dd>{{end}}
</dl>
{{with .Log}}<p>Last lines of the log:</p>
<pre class="log">{{.}}</pre>{{end}}
{{range .Quantities}}<h3>{{.Name}}: {{.Mean}}{{with .Verdict}} <span class="tag">{{.}}</span>{{end}}</h3>
{{if .Message}}<p class="{{.VerdictClass}}">{{.Message}}</p>{{end}}
{{if .Figure}}<figure>{{.Figure}}<figcaption>History of {{.Name}} ({{.Samples}} samples, at most 2000 drawn). Grey: start-up transient, discarded. Blue band: mean and its 95 % confidence interval over the averaging window.</figcaption></figure>{{else}}<p class="sub">No history recorded.</p>{{end}}
{{end}}</div>
</details>
{{else}}<p>No variants.</p>{{end}}
</section>
{{with .Surface}}
<section id="surface">
<h2>Response surface</h2>
<dl class="meta">
<dt>Model</dt><dd>{{.Model}}</dd>
<dt>Response</dt><dd>{{.Response}}</dd>
<dt>Leave-one-out RMSE</dt><dd>{{.LOORMSE}}</dd>
<dt>Noise (run scatter)</dt><dd>{{.Noise}}</dd>
{{with .Q2}}<dt>Q²</dt><dd>{{.}}</dd>{{end}}
{{with .Choice}}<dt>Chosen</dt><dd>{{.}}</dd>{{end}}
<dt>Recommended optimum</dt><dd>{{.OptimumValue}}{{with .Source}} ({{if eq . "surface"}}the surface's prediction{{else}}{{.}}, measured{{end}}){{end}}</dd>
{{range .Optimum}}<dt>at {{.K}}</dt><dd>{{.V}}</dd>{{end}}
</dl>
{{with .Flag}}<p class="flag">{{.}}</p>{{end}}
{{with .Notes}}<ul class="warn">{{range .}}<li>{{.}}</li>{{end}}</ul>{{end}}
{{if .Curve}}<figure>{{.Curve}}<figcaption>{{$.Surface.Response}} against {{.CurveParam}}: the fitted mean in its 95 % band, and the runs with their own 95 % intervals.</figcaption></figure>{{end}}
{{range .Contours}}<figure>{{.Figure}}<figcaption>{{$.Surface.Response}} over {{.XName}} and {{.YName}}, other parameters at the optimum. Circles: runs; cross: the recommended optimum (a measured run when the surface promises no proven improvement on it).</figcaption></figure>
{{end}}
<div class="grid2">
{{if .LOO}}<figure>{{.LOO}}<figcaption>Leave-one-out check: each run predicted by the surface fitted without it. Points on the dashed 1:1 line are predicted exactly.</figcaption></figure>{{end}}
{{if .Sens}}<figure>{{.Sens}}<figcaption>Sobol' sensitivity indices: first order (blue) and total (orange), with 95 % error bars (±1.96 standard errors).</figcaption></figure>{{end}}
</div>
{{if .Sensitivities}}<table>
<thead><tr><th>Parameter</th><th>First order</th><th>Total</th></tr></thead>
<tbody>
{{range .Sensitivities}}<tr><td>{{.Param}}</td><td class="num">{{printf "%.3f" .First}} ± {{printf "%.3f" .FirstSE}}</td><td class="num">{{printf "%.3f" .Total}} ± {{printf "%.3f" .TotalSE}}</td></tr>
{{end}}</tbody>
</table>
<p class="sub">± one standard error.</p>{{end}}
{{with .SensNote}}<p class="sub">{{.}}</p>{{end}}
</section>
{{end}}
{{if not .Surface}}{{with .SurfaceNote}}
<section id="surface">
<h2>Response surface</h2>
<p>No surface is shown: {{.}}</p>
</section>
{{end}}{{end}}
{{if .Mesh}}
<section id="mesh">
<h2>Mesh studies</h2>
{{range .Mesh}}<h3>{{.Title}}</h3>
<div class="grid2">
{{if .Figure}}<figure>{{.Figure}}<figcaption>Value on each grid with its 95 % interval; dashed: Richardson extrapolation to h = 0; shaded: fine-grid value ± GCI.</figcaption></figure>{{end}}
<div>
<table>
<thead><tr><th>h</th><th>Value ± 95 % half-width</th></tr></thead>
<tbody>
{{range .Rows}}<tr><td class="num">{{.H}}</td><td class="num">{{.Value}}</td></tr>
{{end}}</tbody>
</table>
<dl class="meta">
<dt>Extrapolated (h = 0)</dt><dd>{{.Extrapolated}}</dd>
<dt>Apparent order</dt><dd>{{.Order}}</dd>
{{with .GCI}}<dt>GCI, fine grid</dt><dd>{{.}}</dd>{{end}}
{{with .Band}}<dt>Fine value ± GCI</dt><dd>{{.}}</dd>{{end}}
{{with .Convergence}}<dt>Convergence</dt><dd>{{.}}</dd>{{end}}
</dl>
{{with .Warnings}}<ul class="warn">{{range .}}<li>{{.}}</li>{{end}}</ul>{{end}}
</div>
</div>
{{end}}
</section>
{{end}}
<footer>Written by sweep. Self-contained page: no script, no external resource.</footer>
</main>
</body>
</html>
`))
