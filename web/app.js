// The formulation page of lampwright serve. It draws what the server's API answers and computes
// no figure of its own: every number shown comes from /api/evaluate or /api/fit (docs/serve-api.md).
"use strict";

const page = {
  kind: "blend",     // "blend" (mass fractions) or "layer" (loadings and thickness)
  components: [],    // [{id, value}] as the sliders stand: mass fraction, or loading for a layer
  thickness: 0,      // layer thickness, um (layers only)
  phosphors: [],     // the library (phosphors --format json)
  catalogue: null,   // targets and objectives
  undo: [],          // earlier component lists
  inFlight: false,   // one evaluation at a time; the newest state is sent when it returns
  pending: false,
  timer: 0,
  inputAt: 0,        // performance.now() of the input that the pending request answers
  lastRedrawMs: null,
  evaluations: 0,    // evaluations drawn (the browser test waits on it)
  fitJob: null,
};
// Okabe-Ito colours, in the order the server's spectrum chart stacks the components.
const STACK = ["#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"];
const SVGNS = "http://www.w3.org/2000/svg";

const $ = (id) => document.getElementById(id);

function setStatus(text, isError) {
  const s = $("status");
  s.textContent = text;
  s.className = isError ? "error" : "";
}

async function api(method, path, body) {
  const opts = { method, headers: {} };
  if (body !== undefined) {
    opts.headers["Content-Type"] = "application/json";
    opts.body = JSON.stringify(body);
  }
  const res = await fetch(path, opts);
  const data = await res.json();
  if (!res.ok) {
    const e = new Error(data.error || ("HTTP " + res.status));
    e.data = data;
    throw e;
  }
  return data;
}

// ---- the request --------------------------------------------------------------------------

function numberOrNull(id) {
  const v = $(id).value.trim();
  return v === "" ? null : Number(v);
}

function targetRequest() {
  const kind = $("target-kind").value;
  if (kind === "ansi") return { kind, nominal_K: Number($("target-ansi").value) };
  if (kind === "flamp") return { kind, name: $("target-flamp").value, steps: Number($("target-steps").value) };
  if (kind === "cct") return { kind, cct_K: Number($("target-cct").value), duv: Number($("target-duv").value) };
  return { kind, x: Number($("target-x").value), y: Number($("target-y").value) };
}

function evaluationRequest() {
  const key = page.kind === "layer" ? "loading" : "mass_fraction";
  const req = {
    components: page.components.map((c) => ({ id: c.id, [key]: c.value })),
    target: targetRequest(),
    tolerance_uv_prime: Number($("target-tol").value),
  };
  if (page.kind === "layer") req.thickness_um = page.thickness;
  return req;
}

// Debounced and coalesced: at most one request in flight; a burst of slider moves sends the last.
function scheduleEvaluation() {
  if (!page.pending) page.inputAt = performance.now();
  page.pending = true;
  clearTimeout(page.timer);
  page.timer = setTimeout(sendEvaluation, 10);
}

async function sendEvaluation() {
  if (page.inFlight || !page.pending) return;
  page.pending = false;
  page.inFlight = true;
  const startedAt = page.inputAt;
  try {
    const data = await api("POST", "/api/evaluate", evaluationRequest());
    const answeredAt = performance.now();
    render(data);
    document.body.dataset.renderMs = (performance.now() - answeredAt).toFixed(1);
    document.body.dataset.answerMs = (answeredAt - startedAt).toFixed(1);
    document.body.dataset.serverMs = data.ms.toFixed(1);
    page.lastRedrawMs = performance.now() - startedAt;
    page.evaluations += 1;
    document.body.dataset.evaluations = String(page.evaluations);
    document.body.dataset.redrawMs = page.lastRedrawMs.toFixed(1);
    setStatus("redrawn in " + page.lastRedrawMs.toFixed(0) + " ms (server " + data.ms.toFixed(1) + " ms)");
  } catch (e) {
    showError(e);
  } finally {
    page.inFlight = false;
    if (page.pending) {
      page.inputAt = performance.now();
      sendEvaluation();
    }
  }
}

function showError(e) {
  let text = e.message;
  if (e.data && e.data.line) text = "line " + e.data.line + ": " + e.data.problem;
  setStatus(text, true);
}

// ---- drawing ------------------------------------------------------------------------------

function fmt(v, digits, unit) {
  if (v === null || v === undefined) return "–";
  return v.toFixed(digits) + (unit ? " " + unit : "");
}

function setReadout(id, text, dataset) {
  const el = $(id);
  el.textContent = text;
  for (const [k, v] of Object.entries(dataset || {})) el.dataset[k] = v === null ? "" : String(v);
}

function render(data) {
  const b = data.blend || data.layer;
  const layer = !data.blend;
  $("spectrum-svg").innerHTML = data.charts.spectrum_svg;
  $("uv-svg").innerHTML = data.charts.uv_svg;
  $("cvg-svg").innerHTML = data.charts.cvg_svg || "<p>No TM-30 figures (no CCT).</p>";
  setReadout("readout-xy", fmt(b.x, 4) + ", " + fmt(b.y, 4), { x: b.x, y: b.y });
  setReadout("readout-uv", fmt(b.u_prime, 4) + ", " + fmt(b.v_prime, 4), { u: b.u_prime, v: b.v_prime });
  setReadout("readout-cct", fmt(b.cct_K, 0, "K") + ", " + fmt(b.duv, 4), { cct: b.cct_K, duv: b.duv });
  const t = data.target;
  setReadout("readout-target", t.description + " (" + t.tolerance + ")");
  let dist = "Δu'v' " + fmt(t.distance_uv_prime, 4);
  if (t.macadam_steps !== null) dist += ", " + fmt(t.macadam_steps, 2) + " MacAdam steps";
  if (t.inside_ansi_quadrangle !== null) dist += t.inside_ansi_quadrangle ? ", inside the quadrangle" : ", outside the quadrangle";
  const d = $("readout-distance");
  d.textContent = dist;
  d.className = t.within_tolerance ? "ok" : "bad";
  setReadout("readout-ra", "Ra " + fmt(b.Ra, 1) + ", R9 " + fmt(b.R9, 1), { ra: b.Ra, r9: b.R9 });
  setReadout("readout-rf", "Rf " + fmt(b.Rf, 1), { rf: b.Rf });
  setReadout("readout-rg", "Rg " + fmt(b.Rg, 1), { rg: b.Rg });
  setReadout("readout-ler", fmt(b.ler_lm_per_W, 1, "lm/W of light"), { ler: b.ler_lm_per_W });
  if (layer) {
    setReadout("readout-efficacy", fmt(b.efficacy_lm_per_W_pump, 1, "lm per W of pump"), { efficacy: b.efficacy_lm_per_W_pump });
    $("qy-label").textContent = "total efficiency";
    setReadout("readout-qy", fmt(b.total_efficiency, 3, "W/W"));
    $("radiant-label").textContent = "converted efficiency";
    setReadout("readout-radiant", fmt(b.converted_efficiency, 3, "W/W"));
  } else {
    setReadout("readout-efficacy", fmt(b.efficacy_lm_per_W_absorbed, 1, "lm per W absorbed"), { efficacy: b.efficacy_lm_per_W_absorbed });
    $("qy-label").textContent = "quantum yield";
    setReadout("readout-qy", fmt(b.quantum_yield, 3));
    $("radiant-label").textContent = "radiant efficiency";
    setReadout("readout-radiant", fmt(b.radiant_efficiency, 3, "W/W"));
  }
  drawRenderingBars(b);
  // The normalised fractions as the model used them.
  for (const c of b.components) {
    const el = document.querySelector('.comp[data-id="' + CSS.escape(c.id) + '"] .share');
    if (!el) continue;
    if (layer) el.textContent = "QE " + c.quantum_efficiency.toFixed(2) + ", " + c.photons_escaping.toFixed(3) + " photons out per pump photon";
    else el.textContent = (100 * c.mass_fraction).toFixed(2) + " %, " + (100 * c.photon_share).toFixed(1) + " % of photons";
  }
  const ul = $("warnings");
  ul.replaceChildren();
  const warnings = b.warnings.slice();
  if (b.caution) warnings.push("CAUTION: " + b.caution);
  for (const w of warnings) {
    const li = document.createElement("li");
    li.textContent = w;
    ul.appendChild(li);
  }
  if (!warnings.length) {
    const li = document.createElement("li");
    li.textContent = "none";
    ul.appendChild(li);
  }
}

function svgEl(name, attrs, text) {
  const e = document.createElementNS(SVGNS, name);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, v);
  if (text !== undefined) e.textContent = text;
  return e;
}

// Ra and R1-R14 as bars (CIE 13.3 special indices, values from the API).
function drawRenderingBars(b) {
  const keys = ["Ra"].concat(Array.from({ length: 14 }, (_, i) => "R" + (i + 1)));
  const W = 460, H = 260, left = 44, right = 10, top = 24, bottom = 34;
  const lo = Math.min(0, ...keys.map((k) => (b[k] === null ? 0 : Math.floor(b[k] / 20) * 20)));
  const hi = 100;
  const y = (v) => top + (H - top - bottom) * (hi - v) / (hi - lo);
  const svg = svgEl("svg", { width: W, height: H, viewBox: "0 0 " + W + " " + H, id: "ri-chart", "font-size": "11" });
  svg.appendChild(svgEl("text", { x: W / 2, y: 14, "text-anchor": "middle", "font-size": "13" }, "CIE 13.3 colour rendering indices"));
  for (let v = lo; v <= hi; v += 20) {
    svg.appendChild(svgEl("line", { x1: left, x2: W - right, y1: y(v), y2: y(v), stroke: "#ddd" }));
    svg.appendChild(svgEl("text", { x: left - 4, y: y(v) + 4, "text-anchor": "end" }, String(v)));
  }
  svg.appendChild(svgEl("text", { x: 12, y: (top + H - bottom) / 2, transform: "rotate(-90 12 " + (top + H - bottom) / 2 + ")",
                                  "text-anchor": "middle" }, "index (0-100, dimensionless)"));
  const step = (W - left - right) / keys.length;
  keys.forEach((k, i) => {
    const v = b[k];
    const x = left + i * step + 3;
    if (v !== null) {
      const y0 = y(0), y1 = y(v);
      const bar = svgEl("rect", { x, width: step - 6, y: Math.min(y0, y1), height: Math.abs(y1 - y0),
                                  fill: k === "Ra" ? "#0072B2" : v < 0 ? "#D55E00" : "#56B4E9", "data-key": k, "data-value": v });
      bar.appendChild(svgEl("title", {}, k + " = " + v.toFixed(1)));
      svg.appendChild(bar);
      svg.appendChild(svgEl("text", { x: x + (step - 6) / 2, y: Math.min(y0, y1) - 3, "text-anchor": "middle", "font-size": "9" }, v.toFixed(0)));
    }
    svg.appendChild(svgEl("text", { x: x + (step - 6) / 2, y: H - bottom + 14, "text-anchor": "middle" }, k));
  });
  svg.appendChild(svgEl("line", { x1: left, x2: W - right, y1: y(0), y2: y(0), stroke: "#333" }));
  $("ri-svg").replaceChildren(svg);
}

// ---- components ---------------------------------------------------------------------------

function pushUndo() {
  page.undo.push({ components: page.components.map((c) => ({ ...c })), thickness: page.thickness, kind: page.kind });
  if (page.undo.length > 100) page.undo.shift();
  $("undo-button").disabled = false;
}

// One row: name, the model's figures for it, a slider and a number field (and a remove button).
function sliderRow(opts) {
  const row = document.createElement("div");
  row.className = "comp";
  row.dataset.id = opts.id;
  const name = document.createElement("div");
  name.className = "name";
  if (opts.colour) {
    const sw = document.createElement("span");
    sw.className = "swatch";
    sw.style.background = opts.colour;
    name.appendChild(sw);
  }
  name.appendChild(document.createTextNode(opts.label));
  const share = document.createElement("div");
  share.className = "share";
  const line = document.createElement("div");
  line.className = "row";
  const range = document.createElement("input");
  range.type = "range";
  const num = document.createElement("input");
  num.type = "number";
  for (const el of [range, num]) {
    el.min = String(opts.min);
    el.max = String(opts.max);
    el.step = String(opts.step);
    el.value = String(opts.value);
  }
  range.className = "frac-range";
  num.className = "frac-number";
  range.setAttribute("aria-label", opts.aria);
  num.setAttribute("aria-label", opts.aria + " (number)");
  let undoPushed = false;
  const onInput = (src, other) => () => {
    const v = Number(src.value);
    if (!Number.isFinite(v) || v < opts.min) return;
    if (!undoPushed) {
      pushUndo();
      undoPushed = true;
    }
    opts.set(v);
    other.value = src.value;
    scheduleEvaluation();
  };
  range.addEventListener("input", onInput(range, num));
  num.addEventListener("input", onInput(num, range));
  const settle = () => { undoPushed = false; };
  range.addEventListener("change", settle);
  num.addEventListener("change", settle);
  line.append(range, num);
  if (opts.remove) {
    const remove = document.createElement("button");
    remove.type = "button";
    remove.className = "remove";
    remove.textContent = "×";
    remove.title = "remove " + opts.id;
    remove.addEventListener("click", opts.remove);
    line.appendChild(remove);
  }
  row.append(name, share, line);
  return row;
}

function renderComponents() {
  const layer = page.kind === "layer";
  $("components-heading").textContent = layer ? "Components (loading: phosphor mass fraction of the layer)"
                                              : "Components (mass fraction, any scale; shown normalised)";
  const box = $("components");
  box.replaceChildren();
  page.components.forEach((c, i) => {
    box.appendChild(sliderRow({
      id: c.id, label: c.id, colour: layer ? null : STACK[i % STACK.length], value: c.value,
      min: 0, max: layer ? 0.5 : 1, step: layer ? 0.0005 : 0.001,
      aria: (layer ? "loading of " : "mass fraction of ") + c.id,
      set: (v) => { c.value = v; },
      remove: () => {
        pushUndo();
        page.components.splice(i, 1);
        renderComponents();
        scheduleEvaluation();
      },
    }));
  });
  if (layer)
    box.appendChild(sliderRow({
      id: "thickness", label: "layer thickness (µm)", value: page.thickness, min: 5, max: 1000, step: 1,
      aria: "layer thickness in micrometres", set: (v) => { page.thickness = v; },
    }));
  for (const el of document.querySelectorAll(".blend-only")) el.hidden = layer;
  for (const el of document.querySelectorAll(".layer-only")) el.hidden = !layer;
}

function showPhosphor(id) {
  const p = page.phosphors.find((q) => q.id === id);
  const dl = $("phosphor-data");
  dl.replaceChildren();
  if (!p) return;
  const rows = [["use", p.use], ["emission", p.emission_model], ["peak", fmt(p.peak_nm, 1, "nm")], ["FWHM", fmt(p.fwhm_nm, 1, "nm")],
    ["absorption 254 nm", fmt(p.absorption_254nm, 3)], ["absorption 405 nm", fmt(p.absorption_405nm, 3)], ["QE 254 nm", fmt(p.qe_254nm, 2)],
    ["QE 365-405 nm", fmt(p.qe_365_405nm, 2)], ["density", fmt(p.density_g_per_cm3, 2, "g/cm³")], ["body colour", p.body_colour],
    ["source", p.source]];
  for (const [k, v] of rows) {
    const dt = document.createElement("dt");
    dt.textContent = k;
    const dd = document.createElement("dd");
    dd.textContent = v === null || v === "" ? "–" : v;
    dl.append(dt, dd);
  }
}

function setComponents(list, thickness) {
  page.components = list.map((c) => ({ id: c.id, value: page.kind === "layer" ? c.loading : c.mass_fraction }));
  if (thickness !== undefined) page.thickness = thickness;
  renderComponents();
  scheduleEvaluation();
}

function setRecipe(recipe) {
  page.kind = recipe.kind;
  $("recipe-name").textContent = recipe.name + " (" + recipe.excitation + ")";
  setComponents(recipe.components, recipe.thickness_um);
}

// ---- fit ----------------------------------------------------------------------------------

async function startFit() {
  const body = evaluationRequest();
  body.objective = $("fit-objective").value;
  body.r9_weight = Number($("fit-r9-weight").value);
  const keys = [["min_ra", "fit-min-ra"], ["min_r9", "fit-min-r9"]];
  if (page.kind === "blend") keys.push(["min_ler", "fit-min-ler"], ["min_rf", "fit-min-rf"], ["min_rg", "fit-min-rg"], ["max_rg", "fit-max-rg"]);
  else body.fit_thickness = $("fit-thickness").checked;
  for (const [key, id] of keys) {
    const v = numberOrNull(id);
    if (v !== null) body[key] = v;
  }
  try {
    const { job } = await api("POST", "/api/fit", body);
    page.fitJob = job;
    $("fit-button").disabled = true;
    $("cancel-button").disabled = false;
    const bar = $("fit-progress");
    bar.hidden = false;
    bar.value = 0;
    $("fit-message").textContent = "fitting…";
    pollFit(job);
  } catch (e) {
    showError(e);
  }
}

async function pollFit(job) {
  let s;
  try {
    s = await api("GET", "/api/fit/" + job);
  } catch (e) {
    showError(e);
    return finishFit();
  }
  if (s.state === "running") {
    const bar = $("fit-progress");
    if (s.starts_total > 0) {
      bar.max = s.starts_total;
      bar.value = s.starts_done;
      $("fit-message").textContent = "fitting: start " + (s.starts_done + 1) + " of " + s.starts_total;
    }
    setTimeout(() => pollFit(job), 150);
    return;
  }
  finishFit();
  const msg = $("fit-message");
  if (s.state === "cancelled") {
    msg.textContent = "fit cancelled; the sliders are unchanged";
    return;
  }
  if (s.state === "failed") {
    msg.textContent = "fit failed: " + s.result.error;
    msg.className = "bad";
    return;
  }
  const r = s.result;
  msg.className = r.feasible ? "ok" : "bad";
  msg.textContent = (r.feasible ? "feasible: " : "not feasible: ") + r.message + " (" + r.method + ", " + r.evaluations + " evaluations)";
  document.body.dataset.fitState = r.feasible ? "feasible" : "infeasible";
  if (r.feasible) {
    pushUndo();
    setComponents(r.components, r.thickness_um);
  }
}

function finishFit() {
  page.fitJob = null;
  $("fit-button").disabled = false;
  $("cancel-button").disabled = true;
  $("fit-progress").hidden = true;
}

// ---- save and load ------------------------------------------------------------------------

async function saveRecipe() {
  try {
    const { toml } = await api("POST", "/api/recipe/export", evaluationRequest());
    $("saved-panel").hidden = false;
    $("saved-recipe").value = toml;
    document.body.dataset.saved = String(Date.now());
    const a = document.createElement("a");
    a.href = URL.createObjectURL(new Blob([toml], { type: "text/plain" }));
    a.download = "recipe.toml";
    document.body.appendChild(a);
    a.click();
    a.remove();
    setStatus("recipe saved (recipe.toml)");
  } catch (e) {
    showError(e);
  }
}

async function loadRecipe(file) {
  try {
    const text = await file.text();
    const recipe = await api("POST", "/api/recipe/load", { toml: text });
    page.undo = [];  // the earlier states belong to the recipe the server no longer holds
    $("undo-button").disabled = true;
    setRecipe(recipe);
  } catch (e) {
    showError(e);
  }
}

// ---- start --------------------------------------------------------------------------------

function showTargetFields() {
  const kind = $("target-kind").value;
  for (const k of ["ansi", "flamp", "cct", "xy"])
    for (const el of document.querySelectorAll(".t-" + k)) el.hidden = k !== kind;
  for (const el of document.querySelectorAll(".t-tol")) el.hidden = kind === "flamp";
}

async function start() {
  const s = await api("GET", "/api/state");
  page.phosphors = s.phosphors;
  page.catalogue = s.targets;
  $("cautions").textContent = s.cautions;
  for (const c of s.targets.ansi_c78377) $("target-ansi").add(new Option(c.nominal_K + " K", String(c.nominal_K)));
  for (const c of s.targets.ansi_c78376) $("target-flamp").add(new Option(c.name, c.name));
  for (const o of s.targets.objectives) $("fit-objective").add(new Option(o.label, o.key));
  for (const p of s.phosphors) $("phosphor-select").add(new Option(p.id + " (" + p.use + ")", p.id));
  $("target-tol").value = String(s.targets.default_tolerance_uv_prime);
  $("target-steps").value = String(s.targets.default_steps);
  const t = s.default_target;
  $("target-kind").value = t.kind;
  if (t.kind === "ansi") $("target-ansi").value = String(t.nominal_K);
  showTargetFields();
  showPhosphor($("phosphor-select").value);
  $("phosphor-select").addEventListener("change", (e) => showPhosphor(e.target.value));
  $("add-button").addEventListener("click", () => {
    const id = $("phosphor-select").value;
    if (page.components.some((c) => c.id === id)) return setStatus(id + " is already in the blend", true);
    pushUndo();
    page.components.push({ id, value: page.kind === "layer" ? 0.02 : 0.1 });
    renderComponents();
    scheduleEvaluation();
  });
  for (const id of ["target-kind", "target-ansi", "target-flamp", "target-steps", "target-cct", "target-duv", "target-x", "target-y", "target-tol"])
    $(id).addEventListener("input", () => { showTargetFields(); scheduleEvaluation(); });
  $("fit-button").addEventListener("click", startFit);
  $("cancel-button").addEventListener("click", () => { if (page.fitJob) api("POST", "/api/fit/" + page.fitJob + "/cancel", {}).catch(showError); });
  $("undo-button").addEventListener("click", () => {
    const prev = page.undo.pop();
    $("undo-button").disabled = page.undo.length === 0;
    if (prev) {
      page.components = prev.components;
      page.thickness = prev.thickness;
      renderComponents();
      scheduleEvaluation();
    }
  });
  $("save-button").addEventListener("click", saveRecipe);
  $("load-input").addEventListener("change", (e) => { if (e.target.files.length) loadRecipe(e.target.files[0]); e.target.value = ""; });
  setRecipe(s.recipe);
}

start().catch(showError);
