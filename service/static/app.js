// The browser page of the pellet effectiveness service: plain JavaScript, no framework,
// nothing loaded from another host. It builds the JSON case from the form, posts it to
// /v1/effectiveness, shows the answer, fetches the SVG pictures, and writes the same request
// as a spreadsheet cell formula, a curl command and a JSON body.
"use strict";

const UNITS = {
  length: [["mm", "mm"], ["um", "µm"], ["cm", "cm"], ["m", "m"]],
  volume: [["mm^3", "mm³"], ["cm^3", "cm³"], ["m^3", "m³"]],
  area: [["mm^2", "mm²"], ["cm^2", "cm²"], ["m^2", "m²"]],
  diffusivity: [["m^2/s", "m²/s"], ["cm^2/s", "cm²/s"], ["mm^2/s", "mm²/s"]],
  concentration: [["mol/m^3", "mol/m³"], ["mol/L", "mol/L"], ["kmol/m^3", "kmol/m³"]],
  velocity: [["m/s", "m/s"], ["cm/s", "cm/s"]],
  molar_volume: [["m^3/mol", "m³/mol"], ["L/mol", "L/mol"]],
  energy: [["kJ/mol", "kJ/mol"], ["J/mol", "J/mol"]],
  conductivity: [["W/(m*K)", "W/(m·K)"]],
  temperature: [["K", "K"], ["degC", "°C"]],
};

// One entry per form field: [request name, label, kind, default value, required, help].
// kind: a key of UNITS (number + unit), "number" (plain), "unit-text" (number + typed unit),
// or ["choice", [values]].
const PELLET = {
  sphere: [["radius", "Radius", "length", "1.5", true]],
  cylinder: [["radius", "Radius", "length", "1.2", true],
             ["length", "Length (empty: infinite)", "length", "", false]],
  slab: [["thickness", "Thickness", "length", "2", true],
         ["exposed_faces", "Faces open to the fluid", ["choice", [2, 1]], "2", true]],
  hollow_cylinder: [["outer_radius", "Outer radius", "length", "3", true],
                    ["inner_radius", "Inner radius", "length", "1", true],
                    ["length", "Length (empty: infinite)", "length", "", false]],
  extrudate: [["lobes", "Lobes", ["choice", [3, 4]], "3", true],
              ["lobe_diameter", "Lobe diameter", "length", "1.2", true],
              ["length", "Length (empty: infinite)", "length", "", false]],
  custom: [["volume", "Volume", "volume", "14", true],
           ["external_area", "External area", "area", "28", true]],
};
const KINETICS = {
  power_law: [["order", "Order n", "number", "1", true],
              ["rate_constant", "Rate constant k", "unit-text", "12", true,
               "unit follows the order: (mol/m³)^(1−n)/s, e.g. 1/s for n = 1"]],
  langmuir_hinshelwood: [["rate_constant", "Rate constant k", "unit-text", "12", true],
                         ["adsorption_constant", "Adsorption constant K", "molar_volume", "0.05", true],
                         ["exponent", "Exponent m", ["choice", [1, 2]], "1", true]],
  reversible_first_order: [["rate_constant", "Rate constant k", "unit-text", "12", true],
                           ["equilibrium_concentration", "Equilibrium concentration c_eq",
                            "concentration", "5", true]],
};
const TRANSPORT = [["effective_diffusivity", "Effective diffusivity D_e", "diffusivity", "1.2e-6", true]];
const SURFACE = [["concentration", "Surface concentration c_s", "concentration", "40", true]];
const BULK = [["concentration", "Bulk concentration c_b", "concentration", "40", true]];
const FILM = [["mass_transfer_coefficient", "Mass transfer coefficient k_m", "velocity", "0.05", true]];
const THERMAL_NUMBERS = [["prater_number", "Prater number β", "number", "0.05", true],
                         ["arrhenius_number", "Arrhenius number γ", "number", "20", true]];
const THERMAL_DATA = [["heat_of_reaction", "Heat of reaction ΔH (negative: exothermic)", "energy", "-150", true],
                      ["activation_energy", "Activation energy E", "energy", "90", true],
                      ["effective_thermal_conductivity", "Effective thermal conductivity λ_e",
                       "conductivity", "0.3", true]];
const SURFACE_TEMPERATURE = [["temperature", "Surface temperature T_s", "temperature", "600", true]];
const BULK_TEMPERATURE = [["temperature", "Bulk temperature T_b", "temperature", "600", true]];

const $ = (id) => document.getElementById(id);
const remembered = {}; // values typed per field id, kept when a block is redrawn

function fieldId(block, name) { return `${block}-${name}`.replace(/_/g, "-"); }

function renderFields(container, block, specs) {
  for (const input of container.querySelectorAll("input, select")) remembered[input.id] = input.value;
  container.replaceChildren();
  for (const [name, label, kind, value, required, help] of specs) {
    const id = fieldId(block, name);
    const row = document.createElement("div");
    row.className = "row";
    const lab = document.createElement("label");
    lab.htmlFor = id;
    lab.textContent = label;
    row.append(lab);
    const group = document.createElement("div");
    group.className = "inputs";
    let control;
    if (Array.isArray(kind)) {
      control = document.createElement("select");
      for (const choice of kind[1]) control.append(new Option(String(choice), String(choice)));
    } else {
      control = document.createElement("input");
      control.type = "text";
      control.inputMode = "decimal";
      control.autocomplete = "off";
      control.required = required;
    }
    control.id = id;
    control.dataset.field = `${block}.${name}`;
    control.dataset.kind = Array.isArray(kind) ? "choice" : kind;
    control.value = remembered[id] ?? value;
    group.append(control);
    if (kind === "unit-text") {
      const unit = document.createElement("input");
      unit.type = "text";
      unit.id = `${id}-unit`;
      unit.className = "unit-text";
      unit.value = remembered[unit.id] ?? "1/s";
      unit.setAttribute("aria-label", `${label}: unit`);
      group.append(unit);
    } else if (UNITS[kind]) {
      const unit = document.createElement("select");
      unit.id = `${id}-unit`;
      unit.className = "unit";
      unit.setAttribute("aria-label", `${label}: unit`);
      for (const [code, shown] of UNITS[kind]) unit.append(new Option(shown, code));
      unit.value = remembered[unit.id] ?? UNITS[kind][0][0];
      group.append(unit);
    }
    if (help) {
      const note = document.createElement("small");
      note.id = `${id}-help`;
      note.textContent = help;
      control.setAttribute("aria-describedby", note.id);
      group.append(note);
    }
    row.append(group);
    container.append(row);
  }
}

function thermalOn() { return $("thermal-on").checked; }
function withFilm() { return $("conditions-bulk").checked; }

function drawForm() {
  renderFields($("pellet-fields"), "pellet", PELLET[$("pellet-shape").value]);
  renderFields($("kinetics-fields"), "kinetics", KINETICS[$("kinetics-model").value]);
  renderFields($("transport-fields"), "transport", TRANSPORT);
  const conditions = $("conditions-fields");
  for (const input of conditions.querySelectorAll("input, select")) remembered[input.id] = input.value;
  conditions.replaceChildren();
  const parts = withFilm()
    ? [["bulk", BULK], ["film", FILM]].concat(
        thermalOn() && $("thermal-form").value === "data" ? [["bulk", BULK_TEMPERATURE]] : [])
    : [["surface", SURFACE]];
  for (const [block, specs] of parts) {
    const holder = document.createElement("div");
    renderFields(holder, block, specs);
    conditions.append(...holder.children);
  }
  $("thermal-block").hidden = !thermalOn();
  const thermalSpecs = $("thermal-form").value === "numbers" ? THERMAL_NUMBERS
    : THERMAL_DATA.concat(withFilm() ? [] : SURFACE_TEMPERATURE);
  renderFields($("thermal-fields"), "thermal", thermalOn() ? thermalSpecs : []);
}

// ---------------------------------------------------------------- the request

function readValue(control) {
  const text = control.value.trim();
  if (text === "") return undefined;
  const kind = control.dataset.kind;
  if (kind === "choice") return Number(text);
  if (kind === "number") return Number.isFinite(Number(text)) ? Number(text) : text;
  const unit = $(`${control.id}-unit`);
  const unitText = unit ? unit.value.trim() : "";
  return unitText ? `${text} ${unitText}` : text;
}

function buildCase() {
  const body = {};
  for (const control of document.querySelectorAll("#case-form [data-field]")) {
    const value = readValue(control);
    if (value === undefined) continue;
    const [block, name] = control.dataset.field.split(".");
    (body[block] ??= {})[name] = value;
  }
  // put the blocks in the order the documentation uses
  const order = ["pellet", "kinetics", "transport", "surface", "bulk", "film", "thermal"];
  return Object.fromEntries(order.filter((k) => k in body).map((k) => [k, body[k]]));
}

function flatten(body, prefix = "", out = []) {
  for (const [key, value] of Object.entries(body)) {
    const name = prefix ? `${prefix}.${key}` : key;
    if (value !== null && typeof value === "object") flatten(value, name, out);
    else out.push([name, String(value)]);
  }
  return out;
}

function getUrl(body) {
  const query = flatten(body).map(([k, v]) => `${k}=${encodeURIComponent(v)}`).join("&");
  return `${window.location.origin}/v1/effectiveness?${query}&format=value`;
}

// Excel limits a text constant in a formula to 255 characters: a longer URL is cut before
// one of its "&" (or, for a very long parameter, anywhere) and the pieces are joined with &.
const PIECE = 250;
function cellFormula(url) {
  const pieces = [];
  let rest = url;
  while (rest.length > PIECE) {
    let cut = rest.lastIndexOf("&", PIECE);
    if (cut <= 0) cut = PIECE;
    pieces.push(rest.slice(0, cut));
    rest = rest.slice(cut);
  }
  pieces.push(rest);
  return `=VALUE(WEBSERVICE(${pieces.map((p) => `"${p}"`).join("&")}))`;
}

function curlCommand(body) {
  const json = JSON.stringify(body).replace(/'/g, "'\\''");
  return `curl -s -X POST ${window.location.origin}/v1/effectiveness \\\n` +
    `  -H 'Content-Type: application/json' \\\n  -d '${json}'`;
}

// ---------------------------------------------------------------- the answer

function element(tag, text, className) {
  const node = document.createElement(tag);
  if (text !== undefined) node.textContent = text;
  if (className) node.className = className;
  return node;
}

// five significant digits, trailing zeros of the fraction dropped (10000 stays 10000)
function fmt(x) {
  return Number(x).toPrecision(5).replace(/(\.\d*?)0+(e|$)/, "$1$2").replace(/\.(e|$)/, "$1");
}
function prettyUnit(unit) {
  return unit.replace(/\^2/g, "²").replace(/\^3/g, "³").replace(/\*/g, "·");
}
function quantity(q) { return `${fmt(q.value)} ${prettyUnit(q.unit)}`; }

function showAnswer(answer) {
  const box = $("result");
  box.replaceChildren();
  const headline = element("p", "", "headline");
  headline.append("Effectiveness factor η = ");
  const eta = element("strong", fmt(answer.effectiveness_factor));
  eta.id = "eta";
  eta.dataset.value = String(answer.effectiveness_factor);
  headline.append(eta, ` (${answer.regime} regime, ${answer.method.replace("_", " ")})`);
  box.append(headline);
  const list = element("dl", undefined, "numbers");
  const rows = [
    ["Thiele modulus φ (on " + quantity(answer.thiele_length) + ")", fmt(answer.thiele_modulus)],
    ["Generalized modulus Φ (on V/S = " + quantity(answer.characteristic_length) + ")",
     fmt(answer.generalized_modulus)],
    ["Observed rate", quantity(answer.observed_rate)],
  ];
  if (answer.overall_effectiveness !== undefined)
    rows.push(["Overall effectiveness (with the film)", fmt(answer.overall_effectiveness)]);
  if (answer.surface_concentration)
    rows.push(["Surface concentration", quantity(answer.surface_concentration)]);
  if (answer.thermal && answer.thermal.maximum_temperature_rise)
    rows.push(["Largest temperature rise (Prater)", quantity(answer.thermal.maximum_temperature_rise)]);
  for (const [name, value] of rows) list.append(element("dt", name), element("dd", value));
  box.append(list);
  if (answer.steady_states && answer.steady_states.length > 1) {
    const table = element("table", undefined, "states");
    table.append(element("caption", `${answer.steady_states.length} steady states`));
    const head = table.createTHead().insertRow();
    for (const h of ["State", "η", "Centre concentration", "Stable"]) head.append(element("th", h));
    const tbody = table.createTBody();
    answer.steady_states.forEach((s, i) => {
      const row = tbody.insertRow();
      row.append(element("td", String(i + 1) + (i === answer.headline_state ? " (headline)" : "")),
                 element("td", fmt(s.effectiveness_factor)),
                 element("td", quantity(s.center_concentration)),
                 element("td", s.stable ? "yes" : "no"));
    });
    box.append(table);
  }
  const warnings = element("ul", undefined, "warnings");
  warnings.id = "warnings";
  for (const w of answer.warnings) {
    const item = element("li", undefined, `severity-${w.severity}`);
    item.append(element("span", w.severity, "badge"), ` ${w.code}: ${w.message}`);
    warnings.append(item);
  }
  if (answer.warnings.length) {
    box.append(element("h3", "Warnings"), warnings);
  } else {
    box.append(element("p", "No warnings.", "hint"));
  }
}

function showProblem(problem) {
  const box = $("result");
  box.replaceChildren(element("p", problem.detail || problem.title || "The request failed.", "problem"));
  if (problem.errors) {
    const list = element("ul", undefined, "errors");
    list.id = "errors";
    for (const e of problem.errors) {
      list.append(element("li", `${e.field}: ${e.message}`));
      const control = document.querySelector(`[data-field="${e.field}"]`);
      if (control) control.setAttribute("aria-invalid", "true");
    }
    box.append(list);
  }
}

async function showPlot(path, body, imgId, figureId, alt) {
  const figure = $(figureId);
  try {
    const reply = await fetch(path, {
      method: "POST",
      headers: {"Content-Type": "application/json", "Accept": "image/svg+xml"},
      body: JSON.stringify(body),
    });
    if (!reply.ok) { figure.hidden = true; return; }
    const img = $(imgId);
    if (img.src.startsWith("blob:")) URL.revokeObjectURL(img.src);
    img.src = URL.createObjectURL(await reply.blob());
    img.alt = alt;
    figure.hidden = false;
  } catch (err) {
    figure.hidden = true;
  }
}

async function compute(event) {
  event.preventDefault();
  for (const c of document.querySelectorAll("[aria-invalid]")) c.removeAttribute("aria-invalid");
  const body = buildCase();
  $("busy").hidden = false;
  $("compute").disabled = true;
  try {
    const reply = await fetch("/v1/effectiveness", {
      method: "POST",
      headers: {"Content-Type": "application/json", "Accept": "application/json"},
      body: JSON.stringify(body),
    });
    const answer = await reply.json();
    $("json-body").value = JSON.stringify(body, null, 2);
    $("curl").value = curlCommand(body);
    $("formula").value = cellFormula(getUrl(body));
    $("copy-block").hidden = false;
    if (!reply.ok) {
      showProblem(answer);
      $("profile-figure").hidden = true;
      $("curve-figure").hidden = true;
      return;
    }
    showAnswer(answer);
    const eta = fmt(answer.effectiveness_factor);
    await showPlot("/v1/effectiveness", body, "profile-plot", "profile-figure",
                   `Concentration profile of this pellet; effectiveness factor ${eta}.`);
    await showPlot("/v1/effectiveness/curve", body, "curve-plot", "curve-figure",
                   `Effectiveness factor against the generalized modulus; this case at ${fmt(answer.generalized_modulus)}, η = ${eta}.`);
  } catch (err) {
    showProblem({detail: `The service could not be reached: ${err}`});
  } finally {
    $("busy").hidden = true;
    $("compute").disabled = false;
  }
}

async function copyText(event) {
  const target = $(event.currentTarget.dataset.copy);
  target.select();
  let done = false;
  try {
    await navigator.clipboard.writeText(target.value);
    done = true;
  } catch (err) {
    done = document.execCommand && document.execCommand("copy");
  }
  $("copy-status").textContent = done ? "Copied." : "Selected: press Ctrl+C to copy.";
}

document.addEventListener("DOMContentLoaded", () => {
  drawForm();
  for (const id of ["pellet-shape", "kinetics-model", "thermal-on", "thermal-form",
                    "conditions-surface", "conditions-bulk"]) {
    $(id).addEventListener("change", drawForm);
  }
  $("case-form").addEventListener("submit", compute);
  for (const button of document.querySelectorAll(".copy-button")) {
    button.addEventListener("click", copyText);
  }
});
