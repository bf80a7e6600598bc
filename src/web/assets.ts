/**
 * The pages' one stylesheet and one script, served from this server (no CDN, no web fonts: lab networks are
 * often offline). The script only enhances: every page works without it (drag-and-drop onto the upload
 * field, the wavelength under the pointer on plots).
 */
import { createHash } from 'node:crypto';

const CSS = `
:root{--ink:#1f2a30;--muted:#55626b;--paper:#fcfbf8;--panel:#f2efe8;--line:#c9c3b6;--accent:#1e5a78;--accent-ink:#fff;--warn:#7a4b00;--warn-bg:#fff4d9;--bad:#8a1c1c;--bad-bg:#fde8e6;--good:#1d5e2f;--good-bg:#e3f3e6}
*{box-sizing:border-box}
html{font-family:system-ui,-apple-system,"Segoe UI",Roboto,"DejaVu Sans",sans-serif;color:var(--ink);background:var(--paper);line-height:1.45}
body{margin:0}
a{color:var(--accent)}
a:focus-visible,button:focus-visible,input:focus-visible,select:focus-visible,textarea:focus-visible,summary:focus-visible{outline:3px solid #d08a00;outline-offset:2px}
.skip{position:absolute;left:-999px}.skip:focus{left:8px;top:8px;background:#fff;padding:6px;z-index:9}
header.top{display:flex;flex-wrap:wrap;align-items:center;gap:4px 24px;padding:10px 24px;border-bottom:3px double var(--line);background:var(--panel)}
header.top .brand{font-weight:700;font-size:1.15rem;letter-spacing:.02em;text-decoration:none;color:var(--ink)}
header.top .brand span{font-weight:400;color:var(--muted)}
nav ul{display:flex;flex-wrap:wrap;gap:4px 18px;list-style:none;margin:0;padding:0}
nav a[aria-current=page]{font-weight:700;text-decoration-thickness:3px}
.who{margin-left:auto;display:flex;gap:10px;align-items:center;font-size:.92rem}
main{max-width:1100px;margin:0 auto;padding:16px 24px 40px}
footer{max-width:1100px;margin:0 auto;padding:12px 24px 32px;color:var(--muted);font-size:.85rem;border-top:1px solid var(--line)}
h1{font-size:1.6rem;margin:.4em 0 .2em}h2{font-size:1.2rem;margin:1.6em 0 .5em;border-bottom:1px solid var(--line);padding-bottom:3px}
caption{text-align:left}
table{border-collapse:collapse;width:100%;font-size:.93rem}
th,td{text-align:left;padding:5px 8px;border-bottom:1px solid var(--line);vertical-align:top;overflow-wrap:anywhere}
th{background:var(--panel);font-weight:600}
td.num,th.num{text-align:right;font-variant-numeric:tabular-nums}
code,.mono{font-family:ui-monospace,"DejaVu Sans Mono",monospace;font-size:.9em;overflow-wrap:anywhere}
pre{background:var(--panel);padding:8px 10px;overflow-x:auto;border-left:3px solid var(--line)}
.status{display:inline-block;padding:0 6px;border:1px solid;border-radius:3px;font-size:.85rem;white-space:nowrap}
.status-approved{color:var(--good);background:var(--good-bg)}
.status-draft{color:#2d3e8a;background:#e9ecfb;border-style:dashed}
.status-retired{color:var(--muted);background:#eee;text-decoration:line-through}
.status-withdrawn{color:var(--bad);background:var(--bad-bg);border-style:dotted}
.verdict{font-weight:600}
.note{padding:8px 12px;margin:10px 0;border-left:5px solid}
.note-warn{background:var(--warn-bg);border-color:#c88a12;color:var(--warn)}
.note-bad{background:var(--bad-bg);border-color:var(--bad);color:var(--bad)}
.note-good{background:var(--good-bg);border-color:var(--good);color:var(--good)}
.note-info{background:#eaf2f6;border-color:var(--accent)}
.note strong{margin-right:.3em}
form.inline{display:inline}
fieldset{border:1px solid var(--line);margin:12px 0;padding:8px 14px 12px}
legend{font-weight:600;padding:0 4px}
label{display:block;font-weight:600;margin:8px 0 2px}
label.plain{display:inline;font-weight:400}
.hint{color:var(--muted);font-size:.85rem;margin:2px 0}
input[type=text],input[type=search],input[type=password],input[type=date],input[type=number],select,textarea{font:inherit;padding:5px 7px;border:1px solid #8c8577;border-radius:3px;background:#fff;max-width:100%}
input[type=text],input[type=search],input[type=password],textarea{width:34em}
button,.button{font:inherit;padding:6px 14px;border:1px solid var(--accent);border-radius:3px;background:var(--accent);color:var(--accent-ink);cursor:pointer;text-decoration:none;display:inline-block}
button.quiet{background:#fff;color:var(--accent)}
button.danger{background:var(--bad);border-color:var(--bad)}
.row{display:flex;flex-wrap:wrap;gap:8px 16px;align-items:flex-end}
.row>div{min-width:10em}
dl.facts{display:grid;grid-template-columns:max-content 1fr;gap:3px 16px;margin:0}
dl.facts dt{font-weight:600;color:var(--muted)}dl.facts dd{margin:0}
.plot{overflow-x:auto;margin:8px 0;position:relative}
.plot svg{max-width:100%;height:auto;background:#fff;border:1px solid var(--line)}
.plot-readout{position:absolute;top:4px;right:8px;background:#fffd;border:1px solid var(--line);padding:1px 6px;font-size:.85rem}
.tags a,.tag{display:inline-block;margin:0 4px 2px 0;padding:0 6px;border:1px solid var(--line);border-radius:10px;font-size:.82rem;text-decoration:none;color:var(--ink);background:#fff}
.counts{font-size:.85rem;color:var(--muted)}
.dropzone{border:2px dashed #8c8577;padding:14px;background:#fff}
.dropzone.over{border-color:var(--accent);background:#eaf2f6}
.actions{display:flex;flex-wrap:wrap;gap:10px;margin-top:8px}
.review-item{border:1px solid var(--line);padding:10px 14px;margin:14px 0;background:#fff}
.muted{color:var(--muted)}
@media (max-width:640px){main{padding:8px 10px}input[type=text],input[type=search],input[type=password],textarea{width:100%}}
`;

const JS = `
(function(){
  // Drag-and-drop onto the upload field: the dropped file becomes the file input's file; the form still posts as without script.
  document.querySelectorAll('.dropzone').forEach(function(zone){
    var input = zone.querySelector('input[type=file]');
    var shown = zone.querySelector('.dropped');
    if(!input) return;
    ['dragenter','dragover'].forEach(function(t){zone.addEventListener(t,function(e){e.preventDefault();zone.classList.add('over');});});
    ['dragleave','drop'].forEach(function(t){zone.addEventListener(t,function(){zone.classList.remove('over');});});
    zone.addEventListener('drop',function(e){
      e.preventDefault();
      if(!e.dataTransfer||!e.dataTransfer.files.length) return;
      input.files = e.dataTransfer.files;
      if(shown) shown.textContent = 'Chosen: ' + e.dataTransfer.files[0].name;
    });
    input.addEventListener('change',function(){ if(shown&&input.files.length) shown.textContent = 'Chosen: ' + input.files[0].name; });
  });
  // Plot hover: the wavelength under the pointer, read from the x axis ticks the plot carries (data-value).
  document.querySelectorAll('.plot').forEach(function(box){
    var svg = box.querySelector('svg'); if(!svg) return;
    var ticks = Array.prototype.slice.call(svg.querySelectorAll('.x-tick')).map(function(t){
      var line = t.querySelector('line'); return line ? [Number(line.getAttribute('x1')), Number(t.getAttribute('data-value'))] : null;
    }).filter(Boolean);
    if(ticks.length < 2) return;
    var a = ticks[0], b = ticks[ticks.length-1];
    var out = document.createElement('div'); out.className = 'plot-readout'; out.setAttribute('aria-hidden','true'); out.hidden = true; box.appendChild(out);
    svg.addEventListener('mousemove',function(e){
      var r = svg.getBoundingClientRect(); var vb = svg.viewBox.baseVal;
      var px = (e.clientX - r.left) * vb.width / r.width;
      var x = a[1] + (px - a[0]) * (b[1] - a[1]) / (b[0] - a[0]);
      if(px < a[0] - 40 || px > b[0] + 40){ out.hidden = true; return; }
      out.hidden = false; out.textContent = x.toFixed(1) + ' nm';
    });
    svg.addEventListener('mouseleave',function(){ out.hidden = true; });
  });
})();
`;

function versioned(body: string, type: string) {
  const hash = createHash('sha256').update(body).digest('hex').slice(0, 12);
  return { body, type, hash };
}

/** The assets by path; the path carries a hash of the content, so they are cached for a year and never stale. */
export const STYLESHEET = versioned(CSS.trim(), 'text/css; charset=utf-8');
export const SCRIPT = versioned(JS.trim(), 'text/javascript; charset=utf-8');
export const STYLESHEET_PATH = `/assets/nkledger-${STYLESHEET.hash}.css`;
export const SCRIPT_PATH = `/assets/nkledger-${SCRIPT.hash}.js`;
