// live_page.cpp — the floor page's HTML, CSS and script.
#include "live_page.h"

#include <cmath>

#include <fmt/format.h>

#include "core/chart/svg_writer.h"

namespace heft {
namespace {

constexpr const char* kHead = R"html(<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>heft — lines</title>
<style>
body { margin: 0; background: #10151c; color: #f2f4f7; font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; }
header { display: flex; justify-content: space-between; align-items: baseline; padding: 12px 24px; background: #1b222c; }
header h1 { margin: 0; font-size: 32px; }
header .clock { font-size: 24px; color: #c3cad4; }
#tiles { display: grid; grid-template-columns: repeat(auto-fill, minmax(380px, 1fr)); gap: 16px; padding: 16px 24px; }
.tile { background: #1f2833; border-radius: 10px; padding: 14px 18px; border-left: 14px solid #6f7b8a; cursor: pointer; }
.tile.running { border-left-color: #4f8fdc; }
.tile.settling { border-left-color: #9aa3af; border-left-style: dashed; }
.tile.alert { border-left-color: #f0922b; }
.tile.waiting { border-left-color: #56606c; border-left-style: dotted; }
.tile.chosen { outline: 3px solid #f2f4f7; }
.tile h2 { margin: 0; font-size: 40px; display: flex; justify-content: space-between; }
.state { font-size: 28px; font-weight: bold; }
.level { font-size: 56px; font-weight: bold; font-variant-numeric: tabular-nums; }
.unit { font-size: 28px; color: #c3cad4; }
.sub { font-size: 24px; color: #c3cad4; font-variant-numeric: tabular-nums; }
.alarms { font-size: 24px; color: #f6b26b; min-height: 30px; }
#chart-box { padding: 0 24px 24px; }
#chart-box h2 { font-size: 28px; margin: 8px 0; }
#chart { width: 100%; height: 360px; background: #ffffff; border-radius: 8px; display: block; }
.stale { opacity: 0.55; }
.alarm { display: flex; flex-direction: column; gap: 8px; margin-top: 10px; padding: 8px 12px; border-radius: 8px; font-size: 24px; }
.alarm.unack { background: #3a2a14; border: 3px solid #f0922b; }
.alarm.acked { background: #232c37; border: 3px dashed #8d98a6; color: #c3cad4; }
.alarm .what { font-weight: bold; overflow-wrap: break-word; }
button.ack { font-size: 30px; font-weight: bold; min-height: 64px; width: 100%; padding: 8px 18px; border-radius: 10px; border: 3px solid #f2f4f7; background: #f0922b; color: #10151c; cursor: pointer; }
button.ack:focus { outline: 4px solid #ffffff; outline-offset: 3px; }
button.ack:disabled { background: #56606c; color: #f2f4f7; cursor: wait; }
#notice { font-size: 24px; font-weight: bold; }
</style>
</head>
)html";

constexpr const char* kBodyStart =
    R"html(<header><h1>heft — lines</h1><span id="notice" role="status"></span><span class="clock" id="clock"></span></header>
<main>
<section id="tiles">
)html";

constexpr const char* kTail = R"html(</section>
<section id="chart-box">
<h2 id="chart-title">Run chart</h2>
<svg id="chart" viewBox="0 0 1200 360" preserveAspectRatio="none" role="img" aria-label="live run chart"></svg>
<p class="sub">Dots: the newest packs (triangles: rejected). Solid dark line: baseline level; dashed orange: baseline ± 3 sigma; teal: nominal. Updated every 2 s.</p>
</section>
</main>
<script>
"use strict";
let chosen = null;
// Acknowledge buttons only when heftd has an operator token (set server-side).
const ACTIONS = document.body.dataset.actions === "1";
let alarmsByLine = {};
const SHAPES = {running: "●", settling: "◐", alert: "▲", waiting: "○"};
function fmt(v, d) { return (v === null || v === undefined || !isFinite(v)) ? "–" : Number(v).toFixed(d); }
function tileHtml(l) {
  const target = l.target_g !== null ? "target " + fmt(l.target_g, 1) + " g" : "no target";
  const give = l.giveaway_g_per_pack !== null ? "giveaway " + fmt(l.giveaway_g_per_pack, 2) + " g/pack (" + fmt(l.giveaway_percent, 2) + " %)" : "no nominal";
  const alarms = l.open_events && l.open_events.length ? "open: " + l.open_events.join(", ") : (l.open_findings > 0 ? l.open_findings + " open" : "no open alarms");
  return '<h2><span class="name"></span><span class="state">' + SHAPES[l.state] + " " + l.state + "</span></h2>" +
    '<div><span class="level">' + fmt(l.level_g, 1) + '</span> <span class="unit">g</span></div>' +
    '<div class="sub">' + target + " · σ " + fmt(l.sigma_g, 2) + " g</div>" +
    '<div class="sub">' + give + "</div>" +
    '<div class="alarms">' + alarms + "</div>";
}
function notice(text) { document.getElementById("notice").textContent = text; }
// One row per alarm in a tile: shape and words as well as colour.
function alarmRows(t, line) {
  for (const a of alarmsByLine[line] || []) {
    const row = document.createElement("div");
    const unack = a.state === "active_unack";
    row.className = "alarm " + (unack ? "unack" : "acked");
    const what = document.createElement("span");
    what.className = "what";
    what.textContent = (unack ? "▲ NOT ACKNOWLEDGED · " : "■ acknowledged · ") + a.kind +
      (a.head !== null ? " head " + a.head : "") + " (" + a.priority + ")";
    row.appendChild(what);
    if (unack) {
      const b = document.createElement("button");
      b.className = "ack";
      b.type = "button";
      b.dataset.alarm = a.id;
      b.textContent = "Acknowledge";
      b.onclick = (e) => { e.stopPropagation(); acknowledge(a.id, b); };
      row.appendChild(b);
    }
    t.appendChild(row);
  }
}
function operatorToken() {
  let token = sessionStorage.getItem("heft-token");
  if (!token) {
    token = prompt("Operator token (asked once for this browser tab)");
    if (!token) return null;
    sessionStorage.setItem("heft-token", token);
  }
  return token;
}
async function acknowledge(id, button) {
  const token = operatorToken();
  if (!token) return;
  button.disabled = true;
  button.textContent = "Sending…";
  try {
    const r = await fetch("/api/alarms/" + encodeURIComponent(id) + "/ack", {
      method: "POST", cache: "no-store",
      headers: {"Authorization": "Bearer " + token, "Content-Type": "application/json"},
      body: JSON.stringify({by: "floor screen"})});
    const answer = await r.json().catch(() => ({}));
    if (r.status === 401) { sessionStorage.removeItem("heft-token"); notice("✖ token refused — try again"); }
    else if (r.status !== 202) notice("✖ " + (answer.error || "refused (" + r.status + ")"));
    else {
      notice("… acknowledging " + id);
      for (let i = 0; i < 10; ++i) {
        await new Promise(done => setTimeout(done, 500));
        const q = await (await fetch(answer.href, {cache: "no-store"})).json();
        if (q.status === "done") { notice("✔ acknowledged " + id); break; }
        if (q.status === "refused") { notice("✖ " + q.result); break; }
      }
    }
  } catch (e) {
    notice("✖ heftd did not answer");
  }
  refresh();
}
function updateTiles(lines) {
  const box = document.getElementById("tiles");
  for (const l of lines) {
    let t = box.querySelector('[data-line="' + CSS.escape(l.line) + '"]');
    if (!t) { t = document.createElement("article"); t.dataset.line = l.line; box.appendChild(t); }
    t.className = "tile " + l.state + (l.line === chosen ? " chosen" : "");
    t.innerHTML = tileHtml(l);
    t.querySelector(".name").textContent = l.line;
    if (ACTIONS) alarmRows(t, l.line);
    t.onclick = () => { chosen = l.line; refresh(); };
  }
  if (!chosen && lines.length) chosen = lines[0].line;
}
function el(name, attrs) {
  const e = document.createElementNS("http://www.w3.org/2000/svg", name);
  for (const k in attrs) e.setAttribute(k, attrs[k]);
  return e;
}
function drawChart(data, line) {
  const svg = document.getElementById("chart");
  while (svg.firstChild) svg.removeChild(svg.firstChild);
  document.getElementById("chart-title").textContent = "Run chart — " + chosen + " (newest " + data.grams.length + " packs)";
  const W = 1200, H = 360, L = 70, R = 20, T = 16, B = 30;
  const g = data.grams;
  if (!g.length) { const t = el("text", {x: W / 2, y: H / 2, "text-anchor": "middle", "font-size": 28, fill: "#55606e"}); t.textContent = "No packs yet"; svg.appendChild(t); return; }
  const live = data.live || {};
  const refs = [];
  if (live.baseline_sigma_g > 0 && !live.settling) {
    refs.push([live.baseline_level_g, "#1d232b", ""]);
    refs.push([live.baseline_level_g + 3 * live.baseline_sigma_g, "#c4610a", "10 6"]);
    refs.push([live.baseline_level_g - 3 * live.baseline_sigma_g, "#c4610a", "10 6"]);
  }
  if (line && line.nominal_g !== null) refs.push([line.nominal_g, "#11776a", ""]);
  let lo = Math.min(...g), hi = Math.max(...g);
  for (const r of refs) { lo = Math.min(lo, r[0]); hi = Math.max(hi, r[0]); }
  if (hi - lo < 1e-9) { lo -= 1; hi += 1; }
  const pad = (hi - lo) * 0.05; lo -= pad; hi += pad;
  const X = i => L + (W - L - R) * (g.length > 1 ? i / (g.length - 1) : 0.5);
  const Y = v => T + (H - T - B) * (1 - (v - lo) / (hi - lo));
  const step = Math.pow(10, Math.floor(Math.log10((hi - lo) / 4)));
  const nice = [1, 2, 5, 10].map(m => m * step).find(s => (hi - lo) / s <= 6);
  for (let v = Math.ceil(lo / nice) * nice; v <= hi; v += nice) {
    svg.appendChild(el("line", {x1: L, x2: W - R, y1: Y(v), y2: Y(v), stroke: "#dfe3e8"}));
    const t = el("text", {x: L - 8, y: Y(v) + 6, "text-anchor": "end", "font-size": 18, fill: "#55606e"});
    t.textContent = v.toFixed(nice < 1 ? 1 : 0); svg.appendChild(t);
  }
  for (const r of refs) svg.appendChild(el("line", {x1: L, x2: W - R, y1: Y(r[0]), y2: Y(r[0]), stroke: r[1], "stroke-width": 3, "stroke-dasharray": r[2]}));
  svg.appendChild(el("polyline", {points: g.map((v, i) => X(i) + "," + Y(v)).join(" "), fill: "none", stroke: "#a9c1e4", "stroke-width": 1.5}));
  g.forEach((v, i) => {
    if (data.status[i] === 1) svg.appendChild(el("polygon", {points: [X(i), Y(v) - 7, X(i) + 6, Y(v) + 4, X(i) - 6, Y(v) + 4].join(" "), fill: "#c4610a"}));
    else svg.appendChild(el("circle", {cx: X(i), cy: Y(v), r: 3, fill: "#2b5fa8", class: "point"}));
  });
  const yt = el("text", {x: 16, y: H / 2, "font-size": 18, fill: "#1d232b", transform: "rotate(-90 16 " + H / 2 + ")", "text-anchor": "middle"});
  yt.textContent = "net weight (g)"; svg.appendChild(yt);
}
async function refresh() {
  document.getElementById("clock").textContent = new Date().toLocaleTimeString();
  try {
    const lines = (await (await fetch("/api/lines", {cache: "no-store"})).json()).lines;
    if (ACTIONS) {
      const alarms = (await (await fetch("/api/alarms", {cache: "no-store"})).json()).alarms || [];
      alarmsByLine = {};
      for (const a of alarms) {
        if (a.state !== "active_unack" && a.state !== "active_ack") continue;
        (alarmsByLine[a.line] = alarmsByLine[a.line] || []).push(a);
      }
    }
    updateTiles(lines);
    document.body.classList.remove("stale");
    if (chosen) {
      const data = await (await fetch("/api/samples?line=" + encodeURIComponent(chosen) + "&last=600", {cache: "no-store"})).json();
      drawChart(data, lines.find(l => l.line === chosen));
    }
  } catch (e) {
    document.body.classList.add("stale");
  }
}
refresh();
setInterval(refresh, 2000);
</script>
</body>
</html>
)html";

std::string Fixed(double v, int decimals) {
  return std::isfinite(v) ? fmt::format("{:.{}f}", v, decimals) : std::string("–");
}

}  // namespace

std::string RenderLivePage(const Plant& plant, bool operator_actions) {
  std::string html = kHead;
  html += operator_actions ? "<body data-actions=\"1\">\n" : "<body>\n";
  html += kBodyStart;
  for (const LineSnapshot& s : plant.Snapshot()) {
    const LineSettings& settings = plant.SettingsFor(s.line);
    const char* state = s.packs == 0          ? "waiting"
                        : s.settling          ? "settling"
                        : s.open_findings > 0 ? "alert"
                                              : "running";
    const char* shape = s.packs == 0 ? "○" : s.settling ? "◐" : s.open_findings > 0 ? "▲" : "●";
    const std::string line = chart::EscapeXml(s.line);
    const std::string target =
        settings.target_g ? "target " + Fixed(*settings.target_g, 1) + " g" : "no target";
    const std::string giveaway =
        settings.nominal_g && s.packs > 0
            ? "giveaway " + Fixed(s.level_g - *settings.nominal_g, 2) + " g/pack"
            : "no nominal";
    html += fmt::format(
        "<article class=\"tile {}\" data-line=\"{}\"><h2><span class=\"name\">{}</span>"
        "<span class=\"state\">{} {}</span></h2><div><span class=\"level\">{}</span> "
        "<span class=\"unit\">g</span></div><div class=\"sub\">{} · σ {} g</div>"
        "<div class=\"sub\">{}</div><div class=\"alarms\">{}</div></article>\n",
        state, line, line, shape, state, Fixed(s.level_g, 1), target, Fixed(s.sigma_g, 2), giveaway,
        s.open_findings > 0 ? std::to_string(s.open_findings) + " open" : "no open alarms");
  }
  html += kTail;
  return html;
}

}  // namespace heft
