/* lotwise plan review: reads the inputs, asks the local JSON API, draws the
   results. Plain JavaScript, no external code; numbers formatted as on the
   plan sheets (Pa to four decimals, risks as percentages to three figures). */
"use strict";

const $ = (id) => document.getElementById(id);
const SVGNS = "http://www.w3.org/2000/svg";
const CSP = ["csp1", "csp2", "csp3"];
const RATIOS = [2, 3, 4, 5, 6, 8, 10, 15];
const FIELDS = ["aql", "rql", "alpha", "beta", "lot_size", "model", "scheme", "c", "max_n",
  "sigma", "lower", "upper", "sigma_value", "aoql", "f", "proposal", "process_average",
  "deliveries_per_year"];
let timer = null;
let generation = 0;
let controller = null;
let state = {};

/* --- numbers as on the sheets: lotwise.core.numbers, line for line --------- */
function g(v, digits) {            // Python's format(v, ".Ng")
  if (!isFinite(v)) return "-";
  return String(parseFloat(Number(v).toPrecision(digits)));
}
function fixed(v, digits, trim) {  // numbers._fixed: `digits` significant figures, fixed notation
  const mag = Math.floor(Math.log10(Math.abs(v)));
  let text = v.toFixed(Math.min(100, Math.max(0, digits - 1 - mag)));
  if (trim && text.includes(".")) text = text.replace(/0+$/, "").replace(/\.$/, "");
  return text;
}
function fmtPct(x, digits = 3, trim = false) {   // numbers.percent: percent, ppm below 0.1 %
  if (x === null || x === undefined || isNaN(x)) return "-";
  x = Number(Number(x).toPrecision(digits));  // round first: the unit follows the rounded value
  if (x === 0) return "0 %";
  if (Math.abs(x) >= 1e-3) return fixed(100 * x, digits, trim) + " %";
  const v = x * 1e6;
  if (Math.abs(v) >= 1e-3) return fixed(v, digits, trim) + " ppm";
  return expo(v, digits, trim) + " ppm";
}
function expo(v, digits, trim) {   // Python's format(v, ".{digits-1}e"), trailing zeros dropped if trim
  let [mant, exp] = v.toExponential(digits - 1).split("e");
  if (trim && mant.includes(".")) mant = mant.replace(/0+$/, "").replace(/\.$/, "");
  const e = Number(exp);
  return `${mant}e${e < 0 ? "-" : "+"}${String(Math.abs(e)).padStart(2, "0")}`;
}
function fmtLevel(x, perUnit) {     // numbers.level
  if (x === null || x === undefined || isNaN(x)) return "-";
  if (perUnit) return (x === 0 ? "0" : g(x, 6)) + " per unit";
  return fmtPct(x, 4, true);
}
function fmtPa(x, decimals = 4) {  // numbers.probability
  if (x === null || x === undefined || isNaN(x)) return "-";
  x = Number(x);
  if (x !== 0 && Math.abs(x) < 0.5 * 10 ** -decimals) return expo(x, 2, true);  // Python's ".2g"
  return x.toFixed(decimals);
}
const fmtUnits = (x) => (x === null || x === undefined ? "-" : Number(x).toFixed(1));

/* --- small DOM helpers -------------------------------------------------------- */
function el(tag, attrs = {}, ...kids) {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, v);
  for (const k of kids) e.append(k instanceof Node ? k : document.createTextNode(String(k)));
  return e;
}
function table(header, rows, caption) {
  const t = el("table");
  if (caption) t.append(el("caption", {class: "visually"}, caption));
  const thead = el("thead"), tr = el("tr");
  header.forEach((h) => tr.append(el("th", {scope: "col"}, h)));
  thead.append(tr); t.append(thead);
  const tb = el("tbody");
  rows.forEach((r) => {
    const row = el("tr");
    r.forEach((cell, i) => {
      const td = el(i === 0 ? "th" : "td", i === 0 ? {scope: "row"} : {}, cell);
      if (cell === "NO") td.className = "no";
      row.append(td);
    });
    tb.append(row);
  });
  t.append(tb);
  return t;
}
function fill(id, ...nodes) { const e = $(id); e.replaceChildren(...nodes); }
function val(id) { const e = $(id); return e ? e.value.trim() : ""; }

/* --- the queries ---------------------------------------------------------------- */
function designParams() {
  const scheme = val("scheme");
  const p = new URLSearchParams();
  p.set("scheme", scheme);
  if (CSP.includes(scheme)) {
    p.set("aoql", val("aoql"));
    if (val("f")) p.set("f", val("f"));
    return p;
  }
  for (const k of ["aql", "rql", "alpha", "beta", "lot_size", "max_n"]) if (val(k)) p.set(k, val(k));
  if (scheme === "variables") {
    p.set("sigma", val("sigma"));
    for (const k of ["lower", "upper", "sigma_value"]) if (val(k)) p.set(k, val(k));
    if ($("per_unit").checked) p.set("per_unit", "1");
    return p;
  }
  if (val("model")) p.set("model", val("model"));
  if (val("c")) p.set("c", val("c"));
  if ($("per_unit").checked) p.set("per_unit", "1");
  return p;
}
function scopeParams(plan, extra = {}) {
  const p = new URLSearchParams();
  p.set("plan", plan);
  const scheme = state.design ? state.design.scheme : "single";
  if (!CSP.includes(scheme) && scheme !== "variables") {
    if (val("lot_size")) p.set("lot_size", val("lot_size"));
    if (val("model")) p.set("model", val("model"));
    if ($("per_unit").checked) p.set("per_unit", "1");
  }
  for (const [k, v] of Object.entries(extra)) if (v !== "" && v !== null && v !== undefined) p.set(k, v);
  return p;
}
async function ask(path, params, signal) {
  const r = await fetch(path + "?" + params.toString(), {signal});
  let body = null;
  try { body = await r.json(); } catch (e) { body = {message: "the server's answer was not JSON"}; }
  return {status: r.status, body, exit: r.headers.get("X-Lotwise-Exit")};
}

/* --- messages on the fields ------------------------------------------------------- */
function clearMessages() {
  document.querySelectorAll(".msg").forEach((m) => { m.textContent = ""; });
  document.querySelectorAll("[aria-invalid]").forEach((e) => e.removeAttribute("aria-invalid"));
}
function showError(body, fallbackField) {
  const field = body.field && $(body.field) ? body.field : fallbackField;
  const text = body.message || body.reason || "the request could not be completed";
  if (field && $(field + "-msg")) {
    $(field + "-msg").textContent = text;
    $(field).setAttribute("aria-invalid", "true");
  }
  return text;
}

/* --- rendering ------------------------------------------------------------------- */
function riskTable(rep) {
  const rows = Object.entries(rep.models || {}).map(([m, r]) => [
    m + (m === rep.model ? " *" : ""), fmtPa(r.pa_aql), fmtPct(r.alpha),
    fmtPct(r.beta), r.meets ? "yes" : "NO"]);
  const box = el("div");
  box.append(table(["model", "Pa(AQL)", "α", "β", "meets"], rows),
    el("p", {class: "note"}, `* the model the plan is judged by; β is Pa at the RQL. Targets: α at most ${fmtPct(rep.targets.alpha)} at the AQL, β at most ${fmtPct(rep.targets.beta)} at the RQL.`));
  return box;
}
function facts(rep) {
  const pu = !!rep.per_unit;
  const items = [];
  if (rep.asn) {
    items.push(`Average sample number ${fmtUnits(rep.asn.aql)} at the AQL, ${fmtUnits(rep.asn.rql)} at the RQL; ` +
      `largest ${fmtUnits(rep.asn.max)}; never more than ${rep.max_sample} units.`);
  }
  if (rep.aoql !== undefined && rep.aoql !== null && rep.ati) {
    items.push(`AOQL ${fmtLevel(rep.aoql, pu)} at ${fmtLevel(rep.aoql_p, pu)} incoming; ` +
      `ATI ${fmtUnits(rep.ati.aql)} units at the AQL, ${fmtUnits(rep.ati.rql)} at the RQL (rejected lots screened).`);
  }
  if (rep.scheme === "variables") {
    items.push(`Measure ${rep.n} units; accept when the distance to the limit is at least k = ${rep.k} standard deviations.`);
  }
  if (rep.lot_counts) {
    items.push(`Lot of ${rep.lot_size}: AQL taken as ${rep.lot_counts.aql}, RQL as ${rep.lot_counts.rql} nonconforming items.`);
  }
  const ul = el("ul", {class: "facts"});
  items.forEach((t) => ul.append(el("li", {}, t)));
  return ul;
}
function verdict(id, rep) {
  const v = $(id);
  v.textContent = rep.meets ? "meets both targets" : "FALLS SHORT of the targets";
  v.className = "verdict " + (rep.meets ? "ok" : "short");
}
function renderDesigned(rep) {
  if (CSP.includes(rep.scheme)) {
    $("designed-plan").textContent = `${rep.scheme.toUpperCase()}: i = ${rep.i}, f = ${g(rep.f, 4)}`;
    $("designed-verdict").textContent = `AOQL ${fmtPct(rep.aoql, 4)} at ${fmtPct(rep.aoql_p, 4)} nonconforming`;
    $("designed-verdict").className = "verdict";
    fill("designed-risks"); fill("designed-extra");
    fill("statements", el("li", {}, "A continuous sampling plan limits the long-run average outgoing quality, not the quality of any one unit."));
    $("poisson").textContent = "Does not apply: units are judged one by one (binomial).";
    return;
  }
  $("designed-plan").textContent = rep.label;
  verdict("designed-verdict", rep);
  fill("designed-risks", riskTable(rep));
  fill("designed-extra", facts(rep));
  const ul = $("statements");
  ul.replaceChildren(...(rep.statements || []).map((s) => el("li", {}, s)));
  const pv = rep.poisson_verdict;
  $("poisson").textContent = pv ? (pv.summary || pv.note || "") : "The exact model of this plan is its own; no Poisson comparison.";
}
function renderSupplier(rep) {
  $("supplier-plan").textContent = rep.label;
  verdict("supplier-verdict", rep);
  fill("supplier-risks", riskTable(rep));
  fill("supplier-extra", facts(rep));
}
function clearSupplier(text) {
  $("supplier-plan").textContent = text;
  $("supplier-verdict").textContent = "";
  $("supplier-verdict").className = "verdict";
  fill("supplier-risks"); fill("supplier-extra");
}

/* --- the OC chart (SVG drawn from the API's OC table) ------------------------- */
function svg(tag, attrs = {}, text) {
  const e = document.createElementNS(SVGNS, tag);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, v);
  if (text !== undefined) e.textContent = text;
  return e;
}
function niceTicks(top, count) {
  const raw = top / count;
  const mag = Math.pow(10, Math.floor(Math.log10(raw)));
  const step = [1, 2, 2.5, 5, 10].map((m) => m * mag).find((s) => s >= raw);
  const out = [];
  for (let v = 0; v <= top * (1 + 1e-9); v += step) out.push(v);
  return out;
}
const STYLES = {
  "designed exact": {stroke: "#000", "stroke-width": 4},
  "designed Poisson": {stroke: "#000", "stroke-width": 2.5, "stroke-dasharray": "10 6"},
  "supplier exact": {stroke: "#666", "stroke-width": 3, marker: "circle"},
  "supplier Poisson": {stroke: "#666", "stroke-width": 2, "stroke-dasharray": "2 5", marker: "circle"},
};
function drawChart(host, curves, opts) {
  const W = 860, L = 72, R = 20, T = 20, B = 64, PH = 400;
  const H = PH + 30 * Math.ceil(curves.length / 2) + 10;
  const top = opts.top > 0 ? opts.top : 1;
  const x = (p) => L + (W - L - R) * p / top;
  const y = (v) => T + (PH - T - B) * (1 - v);
  const s = svg("svg", {viewBox: `0 0 ${W} ${H}`, role: "img", "aria-labelledby": "oc-title oc-desc",
    "font-family": "DejaVu Sans, Liberation Sans, Arial, sans-serif", "font-size": "17"});
  s.append(svg("title", {id: "oc-title"}, opts.title));
  s.append(svg("desc", {id: "oc-desc"}, opts.desc));
  for (const v of [0, 0.25, 0.5, 0.75, 1]) {
    s.append(svg("line", {x1: L, x2: W - R, y1: y(v), y2: y(v), stroke: "#bbb", "stroke-width": 1}));
    s.append(svg("text", {x: L - 8, y: y(v) + 6, "text-anchor": "end"}, v.toFixed(2)));
  }
  for (const t of niceTicks(top, 6)) {
    s.append(svg("line", {x1: x(t), x2: x(t), y1: y(0), y2: y(0) + 6, stroke: "#000"}));
    s.append(svg("text", {x: x(t), y: y(0) + 26, "text-anchor": "middle"}, fmtLevel(t, opts.perUnit)));
  }
  s.append(svg("line", {x1: L, x2: W - R, y1: y(0), y2: y(0), stroke: "#000", "stroke-width": 2}));
  s.append(svg("line", {x1: L, x2: L, y1: y(0), y2: y(1), stroke: "#000", "stroke-width": 2}));
  s.append(svg("text", {x: (L + W - R) / 2, y: PH - 8, "text-anchor": "middle"}, opts.xlabel));
  s.append(svg("text", {x: 18, y: (T + PH - B) / 2, "text-anchor": "middle",
    transform: `rotate(-90 18 ${(T + PH - B) / 2})`}, opts.ylabel));
  for (const [name, at] of [["AQL", opts.aql], ["RQL", opts.rql]]) {
    if (at === null || at === undefined || at > top) continue;
    s.append(svg("line", {x1: x(at), x2: x(at), y1: y(0), y2: y(1), stroke: "#000", "stroke-width": 1.5, "stroke-dasharray": "3 3"}));
    s.append(svg("text", {x: x(at) + 5, y: y(1) + 16}, `${name} ${fmtLevel(at, opts.perUnit)}`));
  }
  curves.forEach((c) => {
    const st = STYLES[c.style];
    const d = c.ps.map((p, i) => `${i ? "L" : "M"}${x(p).toFixed(1)},${y(c.pa[i]).toFixed(1)}`).join(" ");
    const attrs = {d, fill: "none", "stroke-linejoin": "round"};
    for (const [k, v] of Object.entries(st)) if (k !== "marker") attrs[k] = v;
    s.append(svg("path", attrs));
    if (st.marker) {
      const every = Math.max(1, Math.floor(c.ps.length / 12));
      c.ps.forEach((p, i) => {
        if (i % every) return;
        s.append(svg("circle", {cx: x(p), cy: y(c.pa[i]), r: 4.5, fill: c.style.endsWith("exact") ? "#666" : "#fff", stroke: "#666", "stroke-width": 2}));
      });
    }
  });
  // legend: a line sample and the words, so no colour is needed to tell curves apart
  curves.forEach((c, i) => {
    const st = STYLES[c.style];
    const lx = L + (i % 2) * 400;
    const ly = PH + 24 + 30 * Math.floor(i / 2);
    const attrs = {x1: lx, x2: lx + 46, y1: ly - 6, y2: ly - 6};
    for (const [k, v] of Object.entries(st)) if (k !== "marker") attrs[k] = v;
    s.append(svg("line", attrs));
    if (st.marker) s.append(svg("circle", {cx: lx + 23, cy: ly - 6, r: 4.5, fill: c.style.endsWith("exact") ? "#666" : "#fff", stroke: "#666", "stroke-width": 2}));
    s.append(svg("text", {x: lx + 56, y: ly}, c.label));
  });
  host.replaceChildren(s);
}
function curvesFrom(oc, who, label) {
  const cols = oc.columns;
  const ps = oc.rows.map((r) => r[0]);
  const out = [];
  if (cols[1] === "afi") {   // continuous sampling: fraction passed under sampling
    out.push({style: who + " exact", label: `${label}: share of units passed under sampling`, ps,
      pa: oc.rows.map((r) => r[cols.indexOf("pa")])});
    return out;
  }
  const exact = cols[1];
  out.push({style: who + " exact", label: `${label}, ${exact}`, ps, pa: oc.rows.map((r) => r[1])});
  const ip = cols.indexOf("poisson");
  if (ip > 1) out.push({style: who + " Poisson", label: `${label}, Poisson`, ps, pa: oc.rows.map((r) => r[ip])});
  return out;
}

/* --- outlook and trade-off ------------------------------------------------------- */
function renderOutlook(body) {
  const rows = body.plans.map((r, i) => [i === 0 ? `designed ${r.label}` : `supplier ${r.label}`,
    fmtPa(r.pa), fmtPct(r.p_reject),
    r.rejected_per_year === null ? "-" : r.rejected_per_year.toFixed(1)]);
  fill("outlook",
    el("p", {}, `At a process average of ${fmtLevel(body.process_average, body.per_unit)} ` +
      "(lots drawn from the supplier's process; type B curve):"),
    table(["plan", "Pa", "lots rejected", `rejected of ${body.deliveries_per_year || "-"} a year`], rows));
}
function renderTrade(body) {
  const rows = body.rows.map((r) => [g(r.ratio, 3), fmtLevel(r.rql), r.n === null ? "-" : String(r.n),
    r.c === null ? "-" : String(r.c), r.beta_actual === null ? "-" : fmtPct(r.beta_actual),
    r.supplier_p_reject === null ? "-" : fmtPct(r.supplier_p_reject)]);
  fill("trade-table", table(["RQL/AQL", "RQL", "n", "c", "β", "lots rejected"], rows));
  const pts = body.rows.filter((r) => r.n !== null);
  if (!pts.length) { fill("trade-chart"); return; }
  const W = 440, H = 300, L = 64, R = 16, T = 16, B = 56;
  const xmax = Math.max(...pts.map((r) => r.ratio)), nmax = Math.max(...pts.map((r) => r.n));
  const ny = niceTicks(nmax, 4); const ytop = ny[ny.length - 1] >= nmax ? ny[ny.length - 1] : nmax;
  const x = (v) => L + (W - L - R) * v / xmax, y = (v) => T + (H - T - B) * (1 - v / ytop);
  const s = svg("svg", {viewBox: `0 0 ${W} ${H}`, role: "img", "aria-label": "Sample size against the RQL/AQL ratio",
    "font-family": "DejaVu Sans, Liberation Sans, Arial, sans-serif", "font-size": "17"});
  s.append(svg("title", {}, "Sample size against the RQL/AQL ratio"));
  for (const t of ny) {
    s.append(svg("line", {x1: L, x2: W - R, y1: y(t), y2: y(t), stroke: "#bbb"}));
    s.append(svg("text", {x: L - 6, y: y(t) + 5, "text-anchor": "end"}, String(t)));
  }
  for (const t of niceTicks(xmax, 5)) s.append(svg("text", {x: x(t), y: H - 32, "text-anchor": "middle"}, g(t, 3)));
  s.append(svg("line", {x1: L, x2: W - R, y1: y(0), y2: y(0), stroke: "#000", "stroke-width": 2}));
  s.append(svg("line", {x1: L, x2: L, y1: y(0), y2: T, stroke: "#000", "stroke-width": 2}));
  s.append(svg("text", {x: (L + W) / 2, y: H - 8, "text-anchor": "middle"}, "RQL / AQL"));
  s.append(svg("text", {x: 16, y: (T + H - B) / 2, "text-anchor": "middle", transform: `rotate(-90 16 ${(T + H - B) / 2})`}, "sample size n"));
  s.append(svg("path", {d: pts.map((r, i) => `${i ? "L" : "M"}${x(r.ratio)},${y(r.n)}`).join(" "), fill: "none", stroke: "#000", "stroke-width": 3}));
  pts.forEach((r) => s.append(svg("rect", {x: x(r.ratio) - 5, y: y(r.n) - 5, width: 10, height: 10, fill: "#000"})));
  fill("trade-chart", s);
}

/* --- the update cycle ---------------------------------------------------------- */
function toggleScheme() {
  const scheme = val("scheme");
  document.querySelectorAll(".var-only").forEach((e) => { e.hidden = scheme !== "variables"; });
  document.querySelectorAll(".csp-only").forEach((e) => { e.hidden = !CSP.includes(scheme); });
  document.querySelectorAll(".attr-only").forEach((e) => { e.hidden = CSP.includes(scheme) || scheme === "variables"; });
}
function schedule() {
  clearTimeout(timer);
  timer = setTimeout(update, 350);
}
async function update() {
  const mine = ++generation;
  if (controller) controller.abort();
  controller = new AbortController();
  const signal = controller.signal;
  const status = $("status");
  status.textContent = "Working...";
  document.body.dataset.state = "busy";
  try {
    const d = await ask("/api/design", designParams(), signal);
    if (mine !== generation) return;
    clearMessages();
    if (d.status !== 200) {
      state = {};
      const text = d.status === 400 ? showError(d.body, "aql") : (d.body.reason || d.body.message);
      status.textContent = (d.status === 422 ? "No plan: " : "Check the inputs: ") + text;
      $("designed-plan").textContent = "-";
      $("designed-verdict").textContent = d.status === 422 ? "no plan meets these targets" : "";
      fill("designed-risks"); fill("designed-extra"); fill("oc-chart"); fill("statements");
      document.body.dataset.state = "error";
      return;
    }
    const rep = d.body;
    state = {design: rep};
    renderDesigned(rep);
    await updateCurves(rep, mine, signal);
    if (mine !== generation) return;
    await updateOutlook(rep, mine, signal);
    await updateTrade(rep, mine, signal);
    if (mine !== generation) return;
    status.textContent = `Updated: ${CSP.includes(rep.scheme) ? rep.scheme.toUpperCase() + " i = " + rep.i : rep.label}` +
      (rep.meets === false ? " (falls short)" : "");
    document.body.dataset.state = "ready";
  } catch (e) {
    if (e.name === "AbortError") return;
    status.textContent = "The page could not reach lotwise serve: " + e.message;
    document.body.dataset.state = "error";
  }
}
async function updateCurves(rep, mine, signal) {
  const isCsp = CSP.includes(rep.scheme);
  const t = rep.targets || {};
  const extra = {points: "101"};
  if (!isCsp) { extra.aql = val("aql"); extra.rql = val("rql"); }
  const oc = await ask("/api/oc", scopeParams(rep.notation || planNotation(rep), extra), signal);
  if (mine !== generation || oc.status !== 200) return;
  const top = oc.body.rows[oc.body.rows.length - 1][0];
  let curves = curvesFrom(oc.body, "designed", "designed " + (rep.label || rep.scheme));
  const proposal = val("proposal");
  if (proposal && !isCsp) {
    const chk = await ask("/api/check", scopeParams(proposal, {aql: val("aql"), rql: val("rql"),
      alpha: val("alpha"), beta: val("beta")}), signal);
    if (mine !== generation) return;
    if (chk.status === 200) {
      renderSupplier(chk.body);
      state.proposal = chk.body;
      const oc2 = await ask("/api/oc", scopeParams(proposal, {points: "101", max_p: String(top)}), signal);
      if (mine !== generation) return;
      if (oc2.status === 200) curves = curves.concat(curvesFrom(oc2.body, "supplier", "supplier " + chk.body.label));
    } else {
      const body = chk.body;
      if (body.field === "plan" || body.field === "n" || body.field === "c" || !body.field) {
        body.field = "proposal";
      }
      clearSupplier("not checked");
      $("proposal-msg").textContent = body.message || body.reason;
      $("proposal").setAttribute("aria-invalid", "true");
    }
  } else {
    clearSupplier(isCsp ? "not compared for continuous sampling" : "none entered");
  }
  const perUnit = !!rep.per_unit;
  drawChart($("oc-chart"), curves, {
    top, aql: t.aql, rql: t.rql, perUnit,
    xlabel: isCsp ? "fraction nonconforming p" : (perUnit ? "nonconformities per unit" : "fraction nonconforming in the lot or process"),
    ylabel: isCsp ? "share passed under sampling" : "probability of acceptance Pa",
    title: "Operating characteristic curves",
    desc: curves.map((c) => c.label).join("; "),
  });
  $("oc-caption").textContent = isCsp ? "Share of units passed under sampling against the incoming fraction nonconforming." :
    "Probability of accepting a lot against its quality: thick lines the designed plan, thin lines with circles the supplier's; solid exact, dashed or dotted Poisson.";
}
function planNotation(rep) {
  return `${rep.scheme}: i=${rep.i},f=${rep.f}` + (rep.k ? `,k=${rep.k}` : "") + (rep.burst ? `,burst=${rep.burst}` : "");
}
async function updateOutlook(rep, mine, signal) {
  if (CSP.includes(rep.scheme) || !val("process_average")) {
    fill("outlook", el("p", {}, CSP.includes(rep.scheme) ? "Continuous sampling rejects no lots." : "Enter the supplier's process average."));
    return;
  }
  const p = new URLSearchParams();
  p.append("plan", rep.notation);
  if (state.proposal) p.append("plan", state.proposal.notation);
  p.set("process_average", val("process_average"));
  if (val("deliveries_per_year")) p.set("deliveries_per_year", val("deliveries_per_year"));
  if ($("per_unit").checked && rep.scheme !== "variables") p.set("per_unit", "1");
  const o = await ask("/api/outlook", p, signal);
  if (mine !== generation) return;
  if (o.status === 200) renderOutlook(o.body);
  else { fill("outlook"); showError(o.body, "process_average"); }
}
async function updateTrade(rep, mine, signal) {
  const t = rep.targets;
  if (CSP.includes(rep.scheme) || rep.per_unit || !t || rep.scheme === "variables") {
    fill("trade-table", el("p", {}, "The trade-off grid is drawn for single plans by attributes (items nonconforming)."));
    fill("trade-chart");
    return;
  }
  const rqls = RATIOS.map((k) => k * t.aql).filter((r) => r < 1).map((r) => String(parseFloat(r.toPrecision(12))));
  const p = new URLSearchParams();
  p.set("aql", String(t.aql)); p.set("rql", rqls.join(","));
  p.set("alpha", val("alpha")); p.set("beta", val("beta"));
  if (val("lot_size")) p.set("lot_size", val("lot_size"));
  if (val("model") && val("model") !== "poisson") p.set("model", val("model"));
  if (val("process_average")) p.set("process_average", val("process_average"));
  if (val("deliveries_per_year")) p.set("deliveries_per_year", val("deliveries_per_year"));
  const r = await ask("/api/tradeoff", p, signal);
  if (mine !== generation) return;
  if (r.status === 200) renderTrade(r.body);
  else fill("trade-table", el("p", {}, r.body.message || ""));
}

/* --- downloads --------------------------------------------------------------------- */
async function download(name) {
  const msg = $("download-msg");
  msg.textContent = "";
  let params;
  if (name === "oc.csv") {
    if (!state.design) { msg.textContent = "No designed plan to tabulate yet."; return; }
    params = scopeParams(state.design.notation || planNotation(state.design),
      CSP.includes(state.design.scheme) ? {} : {aql: val("aql"), rql: val("rql")});
  } else {
    params = designParams();
    if (val("part")) params.set("part", val("part"));
    if (val("supplier")) params.set("supplier", val("supplier"));
  }
  const r = await fetch(`/download/${name}?${params.toString()}`);
  if (!r.ok) {
    let body = {};
    try { body = await r.json(); } catch (e) { /* not JSON */ }
    msg.textContent = body.message || body.reason || `download failed (${r.status})`;
    return;
  }
  const cd = r.headers.get("Content-Disposition") || "";
  const m = /filename="([^"]+)"/.exec(cd);
  const blob = await r.blob();
  const a = el("a", {href: URL.createObjectURL(blob), download: m ? m[1] : name});
  document.body.append(a);
  a.click();
  setTimeout(() => { URL.revokeObjectURL(a.href); a.remove(); }, 1000);
  msg.textContent = "";
  $("status").textContent = `Downloaded ${m ? m[1] : name}`;
}

document.addEventListener("DOMContentLoaded", () => {
  const form = $("inputs");
  form.addEventListener("input", schedule);
  form.addEventListener("change", () => { toggleScheme(); schedule(); });
  form.addEventListener("submit", (e) => { e.preventDefault(); update(); });
  document.querySelectorAll("[data-download]").forEach((b) =>
    b.addEventListener("click", () => download(b.dataset.download)));
  toggleScheme();
  update();
});
