package report

import "html/template"

// crewTemplate is the crew report. It is self-contained: inline CSS and
// SVG, no scripts, no fonts or images fetched from anywhere.
var crewTemplate = template.Must(template.New("crew").Parse(crewHTML))

const crewHTML = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}}</title>
<style>
:root { --ink:#1f2933; --muted:#5f6b7a; --rule:#d5dae0; --fit:#1b6f8a; --warn:#b3261e; --caut:#c98a00; --info:#5f6b7a; --paper:#ffffff; --band:#f3f5f7; }
* { box-sizing: border-box; }
body { margin: 0 auto; max-width: 62rem; padding: 1.5rem 2rem 3rem; color: var(--ink); background: var(--paper);
  font: 15px/1.45 "Liberation Sans", Arial, Helvetica, sans-serif; }
h1 { font-size: 1.6rem; margin: 0 0 .2rem; }
h2 { font-size: 1.15rem; margin: 2rem 0 .6rem; padding-bottom: .25rem; border-bottom: 2px solid var(--ink); }
h3 { font-size: 1rem; margin: 1.2rem 0 .4rem; }
.sub { color: var(--muted); margin: 0 0 1rem; }
.cautions { border: 2px solid var(--ink); padding: .7rem 1rem; margin: 1rem 0 1.2rem; background: var(--band); }
.cautions h2 { text-transform: uppercase; letter-spacing: .06em; font-size: .85rem; margin: 0 0 .3rem; padding: 0; border: 0; }
.cautions ol { margin: 0; padding-left: 1.3rem; }
.summary p { margin: .35rem 0; }
.summary .lead { font-size: 1.08rem; }
.summary .counts { font-size: 1.08rem; border-left: 4px solid var(--ink); padding-left: .6rem; }
.howsure { color: var(--muted); }
table { border-collapse: collapse; width: 100%; margin: .5rem 0; font-size: .9rem; }
th, td { text-align: left; vertical-align: top; padding: .3rem .45rem; border-bottom: 1px solid var(--rule); }
th { background: var(--band); font-weight: 600; }
td.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
tr.bad td { color: var(--muted); }
.sev { display: inline-block; min-width: 4.8rem; text-align: center; padding: .05rem .4rem; border-radius: 3px;
  font-size: .78rem; font-weight: 700; text-transform: uppercase; letter-spacing: .04em; color: #fff;
  border: 1.5px solid var(--ink); -webkit-print-color-adjust: exact; print-color-adjust: exact; }
.sev-warning { background: var(--warn); border-color: var(--warn); }
.sev-caution { background: var(--caut); border-color: var(--caut); color: var(--ink); }
.sev-info { background: var(--info); border-color: var(--info); }
.note { border-left: 3px solid var(--caut); padding: .2rem .7rem; margin: .5rem 0; }
.values { color: var(--muted); font-size: .85rem; }
figure { margin: 1rem 0; break-inside: avoid; page-break-inside: avoid; }
figcaption { color: var(--muted); font-size: .85rem; margin-top: .2rem; }
.plan svg { max-width: 34rem !important; }
/* The plan's insets: places with findings on a long route, two or three
   to a row, one on a phone. */
.insets { display: flex; flex-wrap: wrap; gap: 0 1.5rem; }
.insets figure { flex: 0 1 19rem; margin: .5rem 0; }
dl { display: grid; grid-template-columns: 14rem 1fr; gap: .25rem 1rem; margin: .5rem 0; font-size: .92rem; }
dt { font-weight: 600; }
dd { margin: 0; }
code { font-size: .85em; word-break: break-all; }
.wide { overflow-x: auto; }
.scroll-hint { display: none; color: var(--muted); font-size: .85rem; font-style: italic; margin: .2rem 0; }
/* Each figure is drawn twice: wide for screens and print, narrow for a
   phone, where the wide one's text would be scaled down to 5-7 px. */
.fig-narrow { display: none; }
@media screen and (max-width: 40rem) {
  body { padding: 1rem .6rem 2rem; }
  .fig-wide { display: none; }
  .fig-narrow { display: block; }
  dl { grid-template-columns: 1fr; gap: 0 1rem; }
  dd { margin-bottom: .4rem; }
  /* The findings stack, one block each: number, severity and kind on a
     line, then the detail (the numbers a crew acts on), then where. */
  table.findings thead { display: none; }
  table.findings, table.findings tbody { display: block; }
  table.findings tr { display: flex; flex-wrap: wrap; align-items: baseline; gap: 0 .5rem;
    padding: .4rem 0; border-bottom: 1px solid var(--rule); }
  table.findings td { display: block; border: 0; padding: .1rem 0; }
  table.findings td.detail { order: 4; flex-basis: 100%; }
  table.findings td.where { order: 5; flex-basis: 100%; color: var(--muted); font-size: .85rem; }
  /* The table of every group scrolls sideways (about 1150 px on the
     demo): Group and Chainage stay at the left, so that the cover read
     six columns on still has its place, and the Fit column gives the
     status, its explanation below the table as on paper (a poor fit's
     text, 3 words a line in a squeezed column, made a row 1000 px tall). */
  table.groups .stick { position: sticky; left: 0; z-index: 1; background: var(--paper);
    width: 4.5rem; min-width: 4.5rem; max-width: 4.5rem; overflow-wrap: anywhere; }
  table.groups .stick2 { left: 4.5rem; width: auto; min-width: 0; max-width: none; overflow-wrap: normal; box-shadow: inset -1px 0 0 var(--rule); }
  table.groups thead th.stick { background: var(--band); }
  .scroll-hint { display: block; }
  table.groups td.fit { min-width: 9rem; }
  table.groups .fit-detail { display: none; }
  table.groups td.fit .print-only, div.fit-why { display: revert; }
}
table.groups { font-size: .85rem; }
table.groups tbody th { background: var(--paper); }
table.groups th, table.groups td { padding: .25rem .35rem; }
footer { margin-top: 2.5rem; padding-top: .5rem; border-top: 1px solid var(--rule); color: var(--muted); font-size: .8rem; }
.print-only { display: none; }
/* On paper every page carries the one-line caution and the title at its
   foot, and the table of every group repeats its head (with the caution)
   on each page it runs to: a page taken from the report alone, a page of
   depths handed to an excavation crew, still says to confirm them. */
@page { size: A4; margin: 14mm 12mm 18mm;
  @bottom-left { content: "{{.Title}}: {{.CautionShort}}"; font: 7pt "Liberation Sans", Arial, Helvetica, sans-serif; color: #1f2933; vertical-align: top; padding-top: 3mm; }
  @bottom-right { content: "page " counter(page) " of " counter(pages); font: 7pt "Liberation Sans", Arial, Helvetica, sans-serif; color: #1f2933; vertical-align: top; padding-top: 3mm; }
}
@media print {
  thead { display: table-header-group; }
  tr.print-only th { background: none; font-weight: 600; font-size: 7pt; border-bottom: 1.5px solid var(--ink); }
  /* The Fit column held a poor fit's whole explanation: squeezed to
     1.5 cm by the numbers' columns, one row ran to a third of a page. On
     paper it gives the status, and the explanations follow the table. */
  table.groups th.fit, table.groups td.fit { min-width: 3.2cm; }
  .fit-detail { display: none; }
  .print-only, tr.print-only { display: revert; }
  body { max-width: none; padding: 0; font-size: 10.5pt; }
  h2, h3 { break-after: avoid; page-break-after: avoid; }
  table, .cautions { break-inside: auto; }
  tr { break-inside: avoid; page-break-inside: avoid; }
  .wide { overflow: visible; }
  table.groups { font-size: 7.5pt; }
  /* A printer may drop backgrounds whatever the page asks: the badges
     then read as dark text in a box, the warning's box thicker. */
  .sev, .sev-warning, .sev-caution, .sev-info { color: var(--ink); background: none; border: 1.5px solid var(--ink); }
  .sev-warning { border-width: 3px; }
  .sev-caution { border-style: dashed; }
}
</style>
</head>
<body>
<header>
<h1>{{.Title}}</h1>
<p class="sub">{{if .ShowSite}}{{.D.Site}} · {{end}}{{with .D.Created}}made {{.}} · {{end}}{{or .D.Tool.Name "undercurrent"}} {{.D.Tool.Version}}</p>
</header>

<main>
<section class="cautions">
<h2>Read before acting on this report</h2>
<ol>
{{range .Cautions}}<li>{{.}}</li>
{{end}}</ol>
</section>

<section class="summary">
<h2>Summary</h2>
<p class="counts">{{.Counts}}{{with .MostPressing}} <strong>{{.}}</strong>{{end}}{{if .Findings}} <a href="#findings">Go to the findings</a>.{{end}}</p>
{{range $i, $h := .Headline}}<p{{if eq $i 0}} class="lead"{{end}}>{{$h}}</p>
{{end}}{{with .HowSure}}<p class="howsure">{{.}}</p>{{end}}
{{with .SigmaNote}}<p class="note">{{.}}</p>{{end}}
</section>
{{if .Findings}}
<section id="findings">
<h2>Findings</h2>
<div class="wide"><table class="findings">
<thead><tr><th>#</th><th>Severity</th><th>What</th><th>Where</th><th>Detail</th></tr></thead>
<tbody>
{{range .Findings}}<tr><td class="num">{{.N}}</td><td><span class="sev sev-{{.Severity}}">{{.Severity}}</span></td><td>{{.Kind}}</td><td class="where">{{.Where}}</td><td class="detail">{{.Message}}{{with .Values}}<div class="values">({{.}})</div>{{end}}{{with .Items}}<ul class="values">{{range .}}<li>{{.}}</li>{{end}}</ul>{{end}}</td></tr>
{{end}}</tbody>
</table></div>
</section>
{{end}}

<section>
<h2>Plan view</h2>
<figure class="plan">{{.Plan}}
<figcaption>Readings (grey){{with .PlanShows}}{{if .Fits}}, fitted conductor{{if .Route}} and route{{end}} (blue){{if .Gap}}, the route dotted past a station whose fit is not used{{end}}{{end}}{{end}}{{if .Tracks}}, further conductors followed along the route (dark grey, each with its own line pattern, named in the legend){{end}}{{if .Findings}}, findings numbered as in the summary (triangles: a warning solid red, a caution half filled amber, a note hollow grey; a finding about the whole route's current, its steady fall, has none){{end}}{{if .Current}}; groups named in grey beside their readings (every few where they crowd){{if .PlanShows.Start}}, and chainage 0 ringed, with an arrow along increasing chainage{{end}}{{end}}.{{with .PlanShows}}{{if .Failed}} {{if .Fits}}No conductor is drawn at a group whose fit failed (no current found, or nothing fitted): its readings alone show where it was{{if .Route}}, and the route is drawn only between groups whose fits are used{{end}}.{{else}}No conductor is drawn: no group's fit found one.{{end}}{{end}}{{end}}{{with .Zoomed}} {{.}}{{end}} Coordinates: {{.FrameText}}.</figcaption>
</figure>{{with .Insets}}
<div class="insets">{{range .}}<figure class="inset">{{.SVG}}<figcaption>{{.Caption}}</figcaption></figure>{{end}}</div>{{end}}{{with .InsetsMore}}
<p class="values">{{.}}</p>{{end}}
</section>

{{if .Current}}<section>
<h2>Along the route</h2>
<figure>{{.Current}}
<figcaption>{{if .D.Route.PairNet}}The go-and-return pair's fitted net current per group (the sum of its two cores' currents, the current that does not return through the pair; each core's own current is far larger, see the table of fits){{else}}Fitted current per group{{end}} with ± two standard deviations, joined by a line that is dotted across groups not used; a group whose fit is poor or ambiguous (used with care, as its finding says) is an amber square, not a blue dot; a stretch an “unsearched” caution names, where no group gives a usable current and no step could be searched for, is shaded amber; groups the route does not use are grey: a magnetised object as a ring and a group past the conductor's end as a triangle, at their values (a value far outside the range of the groups used as a plus at the axis's edge it lies beyond; the table gives it), a failed fit (no current found), which has no value, as a cross on the chainage axis; dashed red lines mark steps in {{if .D.Route.PairNet}}net current (current leaving or joining the circuit){{else}}current (current leaving or joining the conductor){{end}} at their most likely chainage, shaded ± one standard deviation, or midway between the stations either side where a finding gives no such chainage. Current is signed along the route's direction of increasing chainage.{{with .FirstWalk}} The route was walked more than once at currents that differ (the walks-differ caution): every group is drawn at the level of {{.}}, as the steps and the summary take it, and the line joins each station's walks pooled at that level; the later walks' own currents, which hold for their own time only, are drawn as open triangles, not joined.{{end}}</figcaption>
</figure>
{{if .Phase}}<figure>{{.Phase}}
<figcaption>Fitted phase of the current per group with ± two standard deviations, each taken within 180° of the group before it, joined and marked as the current above. Where current leaves or joins the conductor at an angle to the line current the phase turns there, though the RMS current may change little or even rise.</figcaption>
</figure>
{{end}}<figure>{{.Depth}}
<figcaption>{{.DepthCaption}} Depths are measured {{.DepthRef}}.{{with .DepthNote}} {{.}}{{end}} Poor fits are amber squares, groups not used grey, the line dotted across them and unsearched stretches shaded, as above.</figcaption>
</figure>
</section>
{{end}}

{{range .Tracks}}<section>
<h2>Conductor {{.Number}} along the route</h2>
<p>{{.Lead}} Its findings are listed in the summary, marked “conductor {{.Number}}”. Chainage here is measured along conductor {{.Number}} from its first station.</p>
<figure>{{.Current}}
<figcaption>{{if .PairNet}}Fitted net current of conductor {{.Number}}, a go-and-return pair (the sum of its two cores' currents, the current that does not return through the pair),{{else}}Fitted current of conductor {{.Number}}{{end}} per group with ± two standard deviations, joined by a line that is dotted across groups not used (a poor fit, used with care, an amber square; a stretch an “unsearched” caution names shaded amber); dashed red lines mark its steps in current at their most likely chainage, shaded ± one standard deviation, or midway between the stations either side where a finding gives no such chainage. Current is signed along the direction of increasing chainage.{{with .FirstWalk}} Its groups are drawn at the level of {{.}}, the line joining each station's walks pooled at that level; the later walks' own currents are drawn as open triangles, not joined (the walks-differ caution).{{end}}</figcaption>
</figure>
{{if .Phase}}<figure>{{.Phase}}
<figcaption>Fitted phase of conductor {{.Number}}'s current per group with ± two standard deviations, each taken within 180° of the group before it; dashed red lines mark its steps as above.</figcaption>
</figure>
{{end}}<figure>{{.Depth}}
<figcaption>Conductor {{.Number}}. {{$.DepthCaption}} Depths are measured {{$.DepthRef}}.{{with $.DepthNote}} {{.}}{{end}}</figcaption>
</figure>
</section>

{{end}}{{if .Profiles}}<section>
<h2>Measured and fitted field</h2>
<p>For a few groups: the field measured (markers) and the field of the fitted model (lines), east, north and up components, across the conductor, both less the fitted uniform background.{{if .Quadrature}} For AC each group has two panels: the RMS field in phase with the strongest conductor's current, and in quadrature with it (a quarter cycle apart). A good fit runs through the markers in both: where the conductors differ in phase (the cores of a three-phase cable, a cable beside a lagging pipe) a fit can miss mostly in quadrature and still look good in phase.{{else}} A good fit runs through the markers.{{end}} Where a group has more readings than are drawn (240), every few readings across it are drawn and, beside them, always those the fit misses most and the peaks, so that what made a fit poor (a spike, a bend) shows.</p>
{{range .Profiles}}<figure>{{.}}</figure>
{{end}}</section>
{{end}}

<section>
<h2>Every group</h2>
<p class="scroll-hint" aria-hidden="true">The table is wider than the screen: swipe it sideways for every column →</p>
<div class="wide"><table class="groups">
<thead><tr class="print-only"><th colspan="{{.GroupCols}}">{{.CautionShort}}</th></tr>
<tr><th class="stick">Group</th><th class="stick stick2">Chainage (m)</th>{{if .LogCol}}<th>Log</th>{{end}}{{if .D.Conductors}}<th>Conductor</th>{{end}}<th>{{.CoverHead}}</th>{{if .DepthCol}}<th>{{.DepthHead}}</th>{{end}}<th>Current (A)</th>{{if eq .D.Signal.Mode "ac"}}<th>Phase (°)</th>{{end}}<th>{{if .D.Frame.Origin}}Lat, lon (°){{else}}E, N (m){{end}}</th><th>Azimuth (°)</th><th>RMS (nT)</th><th>Readings</th><th class="fit">Fit</th></tr></thead>
<tbody>
{{$ac := eq .D.Signal.Mode "ac"}}{{$tracks := .D.Conductors}}{{$depthCol := .DepthCol}}{{$logCol := .LogCol}}{{range .Groups}}<tr{{if .Bad}} class="bad"{{end}}><th scope="row" class="stick">{{.Key}}</th><td class="num stick stick2">{{.Chainage}}</td>{{if $logCol}}<td>{{.Log}}</td>{{end}}{{if $tracks}}<td class="num">{{range $i, $v := .Conductor}}{{if $i}}<br>{{end}}{{$v}}{{end}}</td>{{end}}<td class="num">{{range $i, $v := .Cover}}{{if $i}}<br>{{end}}{{$v}}{{end}}</td>{{if $depthCol}}<td class="num">{{range $i, $v := .Depth}}{{if $i}}<br>{{end}}{{$v}}{{end}}</td>{{end}}<td class="num">{{range $i, $v := .Current}}{{if $i}}<br>{{end}}{{$v}}{{end}}</td>{{if $ac}}<td class="num">{{range $i, $v := .Phase}}{{if $i}}<br>{{end}}{{$v}}{{end}}</td>{{end}}<td class="num">{{range $i, $v := .Position}}{{if $i}}<br>{{end}}{{$v}}{{end}}</td><td class="num">{{range $i, $v := .Azimuth}}{{if $i}}<br>{{end}}{{$v}}{{end}}</td><td class="num">{{.RMS}}</td><td class="num">{{.Points}}</td><td class="fit">{{if .StatusShort}}<span class="fit-detail">{{.Status}}</span><span class="print-only">{{.StatusShort}} (why: below the table)</span>{{else}}{{.Status}}{{end}}</td></tr>
{{end}}</tbody>
</table></div>
<p class="values">One line per fitted conductor, strongest first. {{if .D.Frame.Origin}}Lat, lon{{else}}E, N{{end}}: where each conductor passes closest to the centre of its group's readings (for an object, where it lies; for a pair of lines not told apart, the pair's centre){{if .D.Frame.Origin}}, WGS84 latitude and longitude in decimal degrees, negative south and west (results.csv and results.json give the local east and north too){{else}}, local east and north in metres as on the plan view{{end}}.{{if .D.Conductors}} Conductor: 1 for the one the route follows, 2, 3, ... for the further conductors followed along it, – for a source in no track. Chainage is along the route (conductor 1); a further conductor's own chainage, measured along it from its first station as its findings give it, follows its number in brackets where it differs.{{end}}{{if .PlanShows.Failed}} A fit that failed gives no current, depth, cover or place: its numbers mean nothing there (the Fit column says why; results.json keeps them with the fit's problem).{{end}} Uncertainties are one standard deviation from {{.SigmaFrom}}; they do not count the error of the model, which is often many times larger{{with .Scatter}} (see the realistic spread in the summary){{end}}. {{if .DepthCol}}Cover is the depth below the ground; the depth below the sensors is measured {{else}}Cover is the depth {{end}}{{.DepthRef}}.{{if .CoverNA}} *Cover n/a: the sensors' height above the ground was not given, so the depth of cover below the ground cannot be computed: it is less than the depth below the sensors by their height above the ground (give it with --sensor-height, or the ground level with --reference-z).{{end}}</p>
{{if .FitDetails}}<div class="print-only fit-why"><h3>Why fits failed or are poor</h3>
<ul class="values">
{{range .FitDetails}}<li>{{index . 0}}: {{index . 1}}</li>
{{end}}</ul></div>{{end}}
{{if .FitNotes}}<h3>Notes from the fits</h3>
<ul class="values">
{{range .FitNotes}}<li>{{.}}</li>
{{end}}</ul>{{end}}
</section>

<section>
<h2>Data, corrections and settings</h2>
<dl>
<dt>Calibration</dt><dd>{{with .D.Calibration}}{{.Summary}}{{with .File}} (<code>{{.}}</code>){{end}}{{else}}none applied: sensor offsets and scale errors are in the readings{{end}}</dd>
<dt>Base-station correction</dt><dd>{{with .D.BaseStation}}{{.Summary}}{{with .File}} (<code>{{.}}</code>){{end}}{{else}}none applied{{end}}</dd>
<dt>Signal</dt><dd>{{.SignalText}}</dd>
<dt>Coordinates</dt><dd>{{.FrameText}}</dd>
<dt>Depth reference</dt><dd>{{.DepthRef}}</dd>
{{with .CoverSigma}}<dt>Cover uncertainty</dt><dd>{{.}}</dd>{{end}}
<dt>Minimum cover</dt><dd>{{with .D.MinCover}}{{printf "%.2f" .Depth}} m{{with .Code}} ({{.}}){{else}} (no code named){{end}}{{else}}not given: no cover check (published codes differ by country){{end}}</dd>
{{range .Settings}}<dt>{{index . 0}}</dt><dd>{{index . 1}}</dd>
{{end}}<dt>Tables for spreadsheets</dt><dd>{{.CSVText}}</dd>
</dl>
{{if .D.Inputs}}<h3>Input files</h3>
<div class="wide"><table>
<thead><tr><th>Role</th><th>File</th><th>Readings</th><th>SHA-256</th></tr></thead>
<tbody>
{{range .D.Inputs}}<tr><td>{{.Role}}</td><td><code>{{.Path}}</code></td><td class="num">{{if .Rows}}{{.Rows}}{{else}}n/a{{end}}</td><td><code>{{.SHA256}}</code></td></tr>
{{end}}</tbody>
</table></div>{{if .InputsNA}}
<p class="values">Readings n/a: the file holds no readings of the survey (a calibration file).</p>{{end}}{{end}}
{{if .D.Warnings}}<h3>Warnings from the run</h3>
<ul>
{{range .D.Warnings}}<li>{{.}}</li>
{{end}}</ul>{{end}}
{{if .D.Notes}}<h3>Notes from the run</h3>
<ul>
{{range .D.Notes}}<li>{{.}}</li>
{{end}}</ul>{{end}}
</section>
</main>

<footer>Made by {{or .D.Tool.Name "undercurrent"}} {{.D.Tool.Version}}{{with .D.Tool.Build}} ({{.}}){{end}} · result document schema {{.D.SchemaVersion}}. Positions in metres, fields in nanotesla, currents in amperes{{if eq .D.Signal.Mode "ac"}} (RMS){{end}}.</footer>
</body>
</html>
`
