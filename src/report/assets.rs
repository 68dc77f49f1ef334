//! The report page's style sheet and script.

pub(super) const CSS: &str = r#"
:root{--ink:#1d1d1f;--muted:#555;--rule:#ddd;--blue:#0072B2;--verm:#D55E00;--green:#009E73;--orange:#E69F00}
*{box-sizing:border-box}
body{margin:0;background:#f6f6f4;color:var(--ink);font:15px/1.5 system-ui,-apple-system,"Segoe UI",Roboto,"DejaVu Sans",sans-serif}
main{max-width:1180px;margin:0 auto;padding:28px 28px 48px;background:#fff}
h1{font-size:26px;line-height:1.25;margin:2px 0 6px}
h2{font-size:19px;margin:34px 0 6px;padding-top:10px;border-top:1px solid var(--rule)}
h3{font-size:16px;margin:22px 0 6px}
.kicker{margin:0;color:var(--muted);font-size:13px;letter-spacing:.06em;text-transform:uppercase}
.meta,.sub,.help,figcaption{color:var(--muted);font-size:13px}
.meta{margin:0 0 12px}
code{font:12.5px ui-monospace,SFMono-Regular,Menlo,Consolas,monospace}
.verdict{font-size:17px;font-weight:600;margin:10px 0}
.mark{display:inline-block;width:1.3em;text-align:center;font-weight:700}
.met_within_noise .mark,.v.met_within_noise .mark{color:var(--green)}
.met_approximately .mark,.v.met_approximately .mark{color:var(--orange)}
.not_met .mark,.v.not_met .mark{color:var(--verm)}
.caution{border-left:4px solid var(--orange);background:#fdf6e7;padding:10px 14px;margin:12px 0 4px;font-size:14px}
.caution p{margin:0 0 6px}.caution p:last-child{margin:0}
.verdict.not_met{color:#8a2a00}
tr.tiebreak td,tr.flat td{background:#fdf6e7}
tr.bound td{background:#fbeee6}
table{border-collapse:collapse;margin:8px 0 4px;font-size:13.5px}
th,td{padding:4px 10px;border-bottom:1px solid var(--rule);text-align:left;vertical-align:top}
thead th{border-bottom:2px solid #999;font-weight:600}
table.quant td,table.summary td:nth-child(n+3):not(:nth-child(8)){text-align:right;font-variant-numeric:tabular-nums}
table.quant td{text-align:right;font-variant-numeric:tabular-nums}
.how{margin:4px 0 8px;padding-left:20px;color:#6b2d00}
.figs{display:flex;flex-wrap:wrap;gap:18px}
figure{margin:8px 0;flex:1 1 520px;max-width:580px}
figure.wide{max-width:620px}
svg.plot{width:100%;height:auto;display:block}
svg.plot text{font-size:12px;fill:#222}
svg.plot .label{font-size:13px}
svg.plot .note{font-size:11px;fill:#444}
svg.plot .grid line{stroke:#e6e6e6;stroke-width:1}
svg.plot .axis line{stroke:#444;stroke-width:1}
details{margin:6px 0}
pre{background:#f4f4f4;padding:8px;overflow:auto;font-size:12px}
footer{margin-top:36px;padding-top:10px;border-top:1px solid var(--rule);color:var(--muted);font-size:12.5px}
@media print{
  @page{size:A4;margin:14mm}
  body{background:#fff;font-size:11pt}
  main{max-width:none;padding:0}
  h2{break-after:avoid}
  section.belief,figure,table{break-inside:avoid}
  .figs{gap:8px}
  figure{flex:1 1 45%}
  a{color:inherit;text-decoration:none}
  details{display:none}
}
"#;

/// Marks for automated checks (headless browser): the number of plots that
/// rendered with a non-empty box, and any script error. Nothing visible.
pub(super) const JS: &str = r#"
(function(){
  var errs=[];
  window.addEventListener('error',function(e){errs.push(String(e.message));document.documentElement.setAttribute('data-errors',errs.join(' | '));});
  function check(){
    var plots=document.querySelectorAll('svg.plot'),ok=0;
    for(var i=0;i<plots.length;i++){var r=plots[i].getBoundingClientRect();if(r.width>50&&r.height>50&&plots[i].querySelector('path,rect,circle,line'))ok++;}
    document.documentElement.setAttribute('data-plots',String(plots.length));
    document.documentElement.setAttribute('data-plots-rendered',String(ok));
  }
  if(document.readyState==='complete'){check();}else{window.addEventListener('load',check);}
})();
"#;
