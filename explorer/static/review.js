// Review file logic: swap map slices and assemble a clicked point's balance in the page.
// (The callbacks that use these functions are in review-maps.js.)
// Inputs: the page's JSON block "rw-data" (R below: axes, inlet flows, slices' layers, table
// layout), and the Bokeh models passed as CustomJS args (pts holds the solved outlet flows).
// No network, no Python: every number comes from data embedded in this file.

function unpackRepeats(v) {
  // explorer.review_data.pack_repeats wrote a long list of few distinct values as
  // {rw_table: distinct values, rw_index: one index per entry}; this restores the list.
  if (Array.isArray(v)) return v.map(unpackRepeats);
  if (v === null || typeof v !== "object") return v;
  if ("rw_table" in v && "rw_index" in v) return v.rw_index.map((i) => v.rw_table[i]);
  for (const k of Object.keys(v)) v[k] = unpackRepeats(v[k]);
  return v;
}

const R = (window.__rwData = window.__rwData ||
           unpackRepeats(JSON.parse(document.getElementById("rw-data").textContent)));

const S = R.species;              // gas species, in the order of every flow array
const MW = R.molar_mass;          // kg/mol per species
const NS = S.length;

function pyFixed(v, d) {
  // Python's f"{v:,.{d}f}": toFixed rounds the exact binary value as Python does, exact
  // ties (half-even in Python, away from zero in toFixed) are settled first; then thousands
  // separators go on the integer part.
  let s = v.toFixed(d);
  const exact = Math.abs(v).toFixed(100);  // the binary value's own digits (|v| > 1e-14)
  const dot = exact.indexOf(".");
  if (/^50*$/.test(exact.slice(dot + 1 + d))) {
    let n = BigInt(exact.slice(0, dot) + exact.slice(dot + 1, dot + 1 + d));
    if (n % 2n === 1n) n += 1n;
    const digits = n.toString().padStart(d + 1, "0");
    const body = d > 0 ? digits.slice(0, -d) + "." + digits.slice(-d) : digits;
    s = (v < 0 ? "-" : "") + body;
  }
  const neg = s.startsWith("-");
  const [whole, frac] = (neg ? s.slice(1) : s).split(".");
  const grouped = whole.replace(/\B(?=(\d{3})+(?!\d))/g, ",");
  return (neg ? "-" : "") + grouped + (frac !== undefined ? "." + frac : "");
}

function pyG(v, p) {
  // Python's f"{v:.{p}g}"
  if (v === 0) return "0";
  const e = Math.floor(Math.log10(Math.abs(Number(v.toPrecision(p)))));
  if (e < -4 || e >= p) {
    let [m, x] = v.toExponential(p - 1).split("e");
    if (m.includes(".")) m = m.replace(/0+$/, "").replace(/\.$/, "");
    const sign = x[0] === "-" ? "-" : "+";
    const digits = x.replace(/^[-+]/, "").padStart(2, "0");
    return `${m}e${sign}${digits}`;
  }
  let s = v.toFixed(Math.max(p - 1 - e, 0));
  if (s.includes(".")) s = s.replace(/0+$/, "").replace(/\.$/, "");
  return s;
}

function toDisplay(value, kind) {
  // explorer.display.to_display: SI to the page's unit system (R.conversions comes from
  // explorer.display.conversions; this script holds no factor of its own).
  const [scale, offset, divisor] = R.conversions[kind];
  const v = divisor ? value / divisor : value * scale;
  return offset ? v + offset : v;
}

function display(value, conv, decimals) {
  if (value === null || value === undefined || !Number.isFinite(value)) return "-";
  const v = toDisplay(value, conv);
  if (decimals < 0) return pyG(v, -decimals);
  const text = pyFixed(v, decimals);
  // explorer.tables.display: a value that rounds to zero reads without a sign.
  return text.startsWith("-") && /^-[0.,]*$/.test(text) ? text.slice(1) : text;
}

function lookup(d, path) {
  let cur = d;
  for (const part of path.split(".")) {
    if (cur === null || typeof cur !== "object" || !(part in cur)) return null;
    cur = cur[part];
  }
  return cur;
}

// The page's one escaping function: every text that goes into a table or heading.
function esc(t) {
  return String(t).replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;")
    .replace(/"/g, "&#34;").replace(/'/g, "&#39;");
}

function table(head, rows) {
  const th = head.map((h) => `<th>${esc(h)}</th>`).join("");
  const body = rows.map((r) => "<tr>" + r.map((c) => `<td>${esc(c)}</td>`).join("") + "</tr>")
    .join("");
  return `<table class="rw-table"><thead><tr>${th}</tr></thead><tbody>${body}</tbody></table>`;
}

function byName(arr) {
  const o = {};
  for (let i = 0; i < NS; i++) o[S[i]] = arr[i];
  return o;
}

function unravel(p) {
  const idx = {};
  let rem = p;
  for (let k = R.dims.length - 1; k >= 0; k--) {
    const n = R.shape[k];
    idx[R.dims[k]] = rem % n;
    rem = Math.floor(rem / n);
  }
  return idx;
}

function flatIndex(idx) {
  let p = 0;
  for (let k = 0; k < R.dims.length; k++) p = p * R.shape[k] + idx[R.dims[k]];
  return p;
}

function sliceValues(flat, m) {
  // The shown slice's node values (rows of the y axis m, columns of temperature) out of a
  // variable's values of the whole grid in flat order (explorer.review_data.grid_values).
  const idx = {};
  for (const d of R.dims) if (d in sliders) idx[d] = sliders[d].value;
  const nT = R.axes.temperature.length, nY = R.axes[m].length;
  const out = new Array(nT * nY);
  for (let j = 0; j < nY; j++) {
    idx[m] = j;
    for (let i = 0; i < nT; i++) {
      idx.temperature = i;
      out[j * nT + i] = flat[flatIndex(idx)];
    }
  }
  return out;
}

function ratioIndex(idx) {
  let r = 0;
  for (const d of R.ratio_dims) r = r * R.axes[d].length + idx[d];
  return r;
}

function mapMode() {
  // The maps' y axis (mode and sliders are the page's models, passed to every callback).
  return mode.active === 0 ? "pressure" : "steam_to_carbon";
}

function sliceKey(m) {
  // Key of the shown slice in R.layers; hides the slider of the y axis.
  const key = [];
  for (const d of R.dims) {
    if (d === "temperature" || !(d in sliders)) continue;
    const s = sliders[d];
    s.visible = d !== m;
    if (d !== m) key.push(`${d}=${s.value}`);
  }
  return key.join("|");
}

function tappedPoint(m, x, y) {
  // The grid node nearest a click at (x, y in display units): [flat index, T axis [degC],
  // y axis, i, j].
  const T = R.axes.temperature.map((t) => toDisplay(t, "temperature"));
  const Y = R.axes[m].map((v) => (m === "pressure" ? toDisplay(v, "pressure") : v));
  let i = 0, j = 0;
  for (let a = 0; a < T.length; a++) if (Math.abs(T[a] - x) < Math.abs(T[i] - x)) i = a;
  for (let b = 0; b < Y.length; b++) if (Math.abs(Y[b] - y) < Math.abs(Y[j] - y)) j = b;
  const idx = {};
  for (const d of R.dims) if (d in sliders) idx[d] = sliders[d].value;
  idx.temperature = i;
  idx[m] = j;
  return [flatIndex(idx), T, Y, i, j];
}

function assemble(p, D = R, Q = pts) {
  // D: the page data of a scenario (R, or D.proposal); Q: its points source.
  // The balance of flat grid point p, with the key paths of PointResult.to_dict().
  const P = Q.data;
  const idx = unravel(p);
  const T = D.axes.temperature[idx.temperature];
  const Pa = D.axes.pressure[idx.pressure];
  const r = ratioIndex(idx);
  const feed = D.inlet_flow.slice(r * NS, (r + 1) * NS);
  // With a pre-reformer, the primary's inlet is its gas (embedded per point).
  const pre = D.train && D.train.pre;
  const nin = pre ? S.map((s) => P[`${pre}_n_${s}`][p]) : feed;
  const nout = [];
  for (let j = 0; j < NS; j++) nout.push(P["n_" + S[j]][p]);
  const carbon = P.carbon_deposit[p];
  const tot = nout.reduce((a, b) => a + b, 0);
  const iw = S.indexOf("H2O");
  const dryTot = tot - nout[iw];
  const x = nout.map((n) => n / tot);
  const xd = nout.map((n, j) => (j === iw ? 0 : n / dryTot));
  const hcC = (n) => n[S.indexOf("CH4")] + 2 * n[S.indexOf("C2H6")] + 3 * n[S.indexOf("C3H8")];
  const cin = hcC(feed);
  const get = (n, s) => n[S.indexOf(s)];
  const h2 = get(nout, "H2"), co = get(nout, "CO");
  const duty = P.duty[p];
  const hin = pre ? P.primary_hin[p] : D.inlet_enthalpy[r];
  const lnP = Math.log(Pa / D.standard_pressure);
  const lx = (s) => Math.log(x[S.indexOf(s)]);
  const qRef = Math.exp(lx("CO") + 3 * lx("H2") - lx("CH4") - lx("H2O") + 2 * lnP);
  const qShift = Math.exp(lx("CO2") + lx("H2") - lx("CO") - lx("H2O"));
  const elem = D.elements;  // {C: [atoms per species], ...}
  const closure = {};
  for (const e of ["C", "H", "O", "N"]) {
    let bi = 0, bo = 0;
    for (let j = 0; j < NS; j++) { bi += elem[e][j] * nin[j]; bo += elem[e][j] * nout[j]; }
    if (e === "C") bo += carbon;
    closure[e] = bi > 0 ? Math.abs(bo - bi) / bi : 0;
  }
  const ratios = {steam_to_carbon: null, oxygen_to_carbon: 0, co2_to_carbon: 0};
  for (const k of Object.keys(ratios)) {
    if (k in idx) ratios[k] = D.axes[k][idx[k]];
    else if (k in D.fixed_ratios) ratios[k] = D.fixed_ratios[k];
  }
  const d = {
    temperature_K: T, pressure_Pa: Pa,
    equilibrium_temperature_K: T - D.approach_K,
    steam_to_carbon: ratios.steam_to_carbon, oxygen_to_carbon: ratios.oxygen_to_carbon,
    co2_to_carbon: ratios.co2_to_carbon, approach_K: D.approach_K,
    converged: P.converged[p] > 0,
    inlet: {temperature_K: D.inlet_temperature_K, flow_mol_per_s: byName(nin),
            mass_flow_kg_per_s: byName(nin.map((n, j) => n * MW[j])), enthalpy_W: hin},
    outlet: {temperature_K: T, flow_mol_per_s: byName(nout),
             mass_flow_kg_per_s: byName(nout.map((n, j) => n * MW[j])),
             mole_fraction: byName(x), mole_fraction_dry: byName(xd), enthalpy_W: hin + duty},
    carbon_deposit_mol_per_s: carbon,
    carbon_activity: P.carbon_activity[p],
    // The binding carbon verdict (thermo.carbon), computed by the core and embedded.
    carbon_free: P.carbon_free[p] > 0,
    carbon_activity_path_max: P.carbon_activity_path_max[p],
    carbon_path_max_temperature: P.carbon_path_max_temperature[p],
    carbon_activity_real_gas: P.carbon_activity_real_gas[p],
    h2_yield: h2 / cin, h2_potential: (h2 + co) / cin,
    methane_slip_dry: xd[S.indexOf("CH4")],
    methane_conversion: 1 - hcC(nout) / cin,
    h2_co_ratio: co > 0 ? h2 / co : Infinity,
    duty_W: duty, duty_per_h2_J_per_mol: h2 > 0 ? duty / h2 : Infinity,
    extents_mol_per_s: {
      reforming: co + get(nout, "CO2") - get(nin, "CO") - get(nin, "CO2"),
      shift: get(nout, "CO2") - get(nin, "CO2"),
    },
    reactions: {
      reforming: {equation: D.equations.reforming, K: D.K_reforming[idx.temperature], Q: qRef,
                  approach_K: P.approach_reforming[p], heat_298_J_per_mol: D.heat_298.reforming,
                  heat_J_per_mol: D.heat_T.reforming[idx.temperature]},
      shift: {equation: D.equations.shift, K: D.K_shift[idx.temperature], Q: qShift,
              approach_K: P.approach_shift[p], heat_298_J_per_mol: D.heat_298.shift,
              heat_J_per_mol: D.heat_T.shift[idx.temperature]},
    },
    element_closure: closure,
  };
  if (D.train && D.train.stages.length > 1) {
    d.train = assembleTrain(p, cin, D, Q);
  } else {
    // The primary alone: the train is the primary's own outlet (thermo.train).
    const prim = {name: "primary_reformer", label: D.train.stages[0].label,
                  outlet_flow_mol_per_s: byName(nout), outlet_mole_fraction_dry: byName(xd)};
    d.train = {stages: [prim], h2_product: h2 / cin, duty_W: Math.max(duty, 0),
               heat_removed_W: Math.min(duty, 0), methane_slip_dry: xd[S.indexOf("CH4")],
               carbon_deposit_mol_per_s: carbon, converged: d.converged,
               product: {temperature_K: T, flow_mol_per_s: byName(nout),
                         mole_fraction_dry: byName(xd)}};
  }
  if (D.plant) d.plant = assemblePlant(p, D, Q);
  return d;
}

function assemblePlant(p, D, Q) {
  // PointResult.to_dict()["plant"] of flat grid point p: the plant's numbers are embedded
  // per point (pl_<Dataset variable>, computed by the core) or are scenario constants.
  const P = Q.data;
  const out = Object.assign({}, D.plant.constants);
  for (const [key, column] of D.plant.arrays) out[key] = P[column][p];
  out.tail_gas_exceeds_need = out.tail_gas_excess_W > 0;
  out.process_gas_below_dew_point = out.process_gas_dew_point_K > D.plant.cooled_K;
  return out;
}

function plantHtml(d) {
  // explorer.tables.plant_html
  if (!d.plant || !R.plant) return "";
  const pl = d.plant;
  const parts = ["<h4>Plant: furnace, purification and steam</h4>" +
    table(["quantity", "value", "unit"], R.spec.plant.map(([label, unit, key, conv, dec]) =>
      [label, display(lookup(d, key), conv, dec), unit]), "rw-table rw-plant")];
  // explorer.tables.plant_warnings
  if (pl.tail_gas_exceeds_need) {
    parts.push(`<p class="rw-warn">${esc("The tail gas alone releases " +
      display(pl.tail_gas_excess_W, "power", 2) + " " + R.spec.symbols.power +
      " more than the radiant box needs: no " +
      "trim gas burns, and the excess must go elsewhere.")}</p>`);
  }
  if (pl.process_gas_below_dew_point) {
    parts.push(`<p class="rw-warn">${esc("The dew point of the process gas (" +
      display(pl.process_gas_dew_point_K, "temperature", 1) + " " +
      R.spec.symbols.temperature + ") lies above the temperature " +
      "it is cooled to: water would condense there.")}</p>`);
  }
  if (Number.isFinite(pl.flue_steam_heat_W) && pl.flue_steam_heat_W < 0) {
    parts.push(`<p class="rw-warn">${esc("The convection section is short of heat for the " +
      "preheats at this stack temperature.")}</p>`);
  }
  parts.push(`<p class='rw-small'>${esc(R.plant.note)}</p>`);
  return parts.join("\n");
}

function balanceHtml(d) {
  const parts = [];
  if (!d.converged) {
    parts.push('<p class="rw-warn">The equilibrium solver did not converge at this point: ' +
               "its numbers are not reliable.</p>");
  }
  const many = d.train && d.train.stages && d.train.stages.length > 1;
  const heading = (t) => (many ? "Primary reformer: " + t[0].toLowerCase() + t.slice(1) : t);
  parts.push(`<h4>${heading("Outlet summary")}</h4>` + table(["quantity", "value", "unit"],
    R.spec.summary.map(([label, unit, key, conv, dec]) =>
      [label, display(lookup(d, key), conv, dec), unit])));
  const srows = S.map((s) => [s].concat(R.spec.species.map(([, key, conv, dec]) =>
    display(lookup(d, key.replace("{s}", s)), conv, dec))));
  srows.push(["total gas"].concat(totalRow(d, R.spec.species)));
  // explorer.tables._graphite_row: graphite in the outlet's molar and mass flows.
  srows.push(["C(gr)"].concat(R.spec.species.map(([, key, conv, dec]) => {
    if (key.startsWith("outlet.flow_mol_per_s") && conv === "molar_flow") {
      return display(d.carbon_deposit_mol_per_s, conv, dec);
    }
    if (key.startsWith("outlet.mass_flow")) {
      return display(d.carbon_deposit_mol_per_s * R.graphite_molar_mass, conv, dec);
    }
    return "";
  })));
  parts.push(`<h4>${heading("Inlet and outlet by species")}</h4>` +
             table(["species"].concat(R.spec.species.map((c) => c[0])), srows));
  parts.push("<h4>Energy balance</h4>" + table(["quantity", "value", "unit"],
    R.spec.energy.map(([label, unit, key, conv, dec]) =>
      [label, display(lookup(d, key), conv, dec), unit])));
  const rrows = ["reforming", "shift"].map((r) => [lookup(d, `reactions.${r}.equation`)].concat(
    R.spec.reactions.map(([, key, conv, dec]) => display(lookup(d, key.replace("{r}", r)),
                                                         conv, dec))));
  parts.push("<h4>Reactions (standard state 1 bar)</h4>" +
             table(["reaction"].concat(R.spec.reactions.map((c) => c[0])), rrows));
  parts.push("<p class='rw-small'>Element closure |out - in| / in: " +
             Object.entries(d.element_closure).map(([k, v]) =>
               `${k} ${v.toExponential(1).replace(/e([+-])(\d)$/, "e$10$2")}`).join(", ") +
             "</p>");
  const t = trainHtml(d);
  if (t) parts.push(t);
  const pl = plantHtml(d);
  if (pl) parts.push(pl);
  parts.push(`<p class='rw-small'>${esc(R.spec.units_note)}</p>`);
  return parts.join("\n");
}

function totalRow(d, columns) {
  // explorer.tables._total: each column summed over the gas species, in the order of S.
  return columns.map(([, key, conv, dec]) => {
    let sum = 0, any = false;
    for (const s of S) {
      const v = lookup(d, key.replace("{s}", s));
      if (v !== null && v !== undefined) { sum += v; any = true; }
    }
    return any ? display(sum, conv, dec) : "-";
  });
}

function trainHtml(d) {
  // explorer.tables.train_html
  const stages = (d.train && d.train.stages) || [];
  if (stages.length < 2) return "";
  const parts = ["<h4>Reforming train</h4>" + table(["quantity", "value", "unit"],
    R.spec.train.map(([label, unit, key, conv, dec]) =>
      [label, display(lookup(d, key), conv, dec), unit]))];
  parts.push(table(["stage"].concat(R.spec.stage.map((c) => c[0])), stages.map((st) =>
    [st.label].concat(R.spec.stage.map(([, key, conv, dec]) =>
      display(lookup(st, key), conv, dec))))));
  const prod = d.train.product;
  const prows = S.map((s) => [s].concat(R.spec.product.map(([, key, conv, dec]) =>
    display(lookup(prod, key.replace("{s}", s)), conv, dec))));
  prows.push(["total gas"].concat(totalRow(prod, R.spec.product)));
  parts.push("<h4>Product gas after the last stage</h4>" +
             table(["species"].concat(R.spec.product.map((c) => c[0])), prows));
  parts.push(`<p class='rw-small'>${esc(R.spec.train_note)}</p>`);
  return parts.join("\n");
}

function dryFractions(n) {
  const iw = S.indexOf("H2O");
  const dry = n.reduce((a, b) => a + b, 0) - n[iw];
  return n.map((v, j) => (j === iw ? 0 : v / dry));
}

function assembleTrain(p, cin, D, Q) {
  // The train of flat grid point p (PointResult.to_dict()["train"]) from the stage arrays
  // embedded in pts (st<k>_...; NaN past a stage that failed, as in the core).
  const P = Q.data;
  const stages = [];
  let carbonAll = 0, supplied = 0, removed = 0, slip = null, product = null, productT = null;
  for (const st of D.train.stages) {
    const k = st.key;
    const n = S.map((sp) => P[`${k}_n_${sp}`][p]);
    const s = {name: st.name, label: st.label, inlet_temperature_K: P[`${k}_Tin`][p],
               temperature_K: P[`${k}_T`][p], equilibrium_temperature_K: P[`${k}_Teq`][p],
               heat_before_W: P[`${k}_heat_before`][p], duty_W: P[`${k}_duty`][p],
               inlet_enthalpy_W: P[`${k}_hin`][p], outlet_enthalpy_W: P[`${k}_hout`][p],
               carbon_deposit_mol_per_s: P[`${k}_carbon`][p], converged: P[`${k}_ok`][p] > 0,
               outlet_flow_mol_per_s: byName(n), outlet_mole_fraction_dry: byName(dryFractions(n))};
    product = n;
    productT = s.temperature_K;
    carbonAll += s.carbon_deposit_mol_per_s;
    // thermo.train: heat in and out of the gas, by sign.
    supplied += Math.max(s.heat_before_W, 0) + Math.max(s.duty_W, 0);
    removed += Math.min(s.heat_before_W, 0) + Math.min(s.duty_W, 0);
    if (!st.name.endsWith("_shift")) slip = s.outlet_mole_fraction_dry.CH4;
    stages.push(s);
  }
  return {
    stages: stages, h2_product: product[S.indexOf("H2")] / cin,
    duty_W: supplied, heat_removed_W: removed, methane_slip_dry: slip,
    carbon_deposit_mol_per_s: carbonAll, converged: P.converged[p] > 0,
    product: {temperature_K: productT, flow_mol_per_s: byName(product),
              mole_fraction_dry: byName(dryFractions(product))},
  };
}

function changeText(a, b, conv, decimals) {
  // explorer.tables.change: b - a in display units (scale only, no offset).
  if (a === null || a === undefined || b === null || b === undefined ||
      !Number.isFinite(a) || !Number.isFinite(b)) return "-";
  // A change: the scale only, never the offset (explorer.display.difference).
  const [scale, , divisor] = R.conversions[conv];
  const v = divisor ? (b - a) / divisor : (b - a) * scale;
  if (decimals < 0) {
    const t = pyG(v, -decimals);
    return t.startsWith("-") ? t : "+" + t;
  }
  let t = pyFixed(v, decimals);
  if (/^-?[0.,]*$/.test(t)) return t.replace(/^-/, "");
  return t.startsWith("-") ? t : "+" + t;
}

function compareHtml(a, b) {
  // explorer.tables.compare_point_html
  const rows = [];
  for (const [label, unit, key, conv, dec] of R.spec.compare) {
    const x = lookup(a, key), y = lookup(b, key);
    if (x === null && y === null) continue;
    rows.push([label, unit, display(x, conv, dec), display(y, conv, dec),
               changeText(x, y, conv, dec)]);
  }
  for (const s of ["CO", "CO2", "CH4"]) {  // H2 is a row above
    const key = `train.product.flow_mol_per_s.${s}`;
    const x = lookup(a, key), y = lookup(b, key);
    const [flow, dec] = R.spec.molar_flow;
    rows.push([`${s} in the product gas`, flow, display(x, "molar_flow", dec),
               display(y, "molar_flow", dec), changeText(x, y, "molar_flow", dec)]);
  }
  let warn = "";
  if (!(a.converged && b.converged)) {
    warn = '<p class="rw-warn">One of the two did not converge at this point: the change ' +
           "is not reliable.</p>";
  }
  return warn + table(["quantity", "unit", "base", "proposal", "change"], rows);
}

// The review limits broken at grid node (i, j) of a slice, and its carbon call, in words
// (the same words as the map's hover).
function nodeVerdict(common, i, j, nT) {
  const k = j * nT + i;
  const limits = common.nodes.feasible[k];
  const ok = limits === "within all limits";
  return `<p class="rw-verdict ${ok ? "rw-ok" : "rw-bad"}"><b>${ok ? "Within every review " +
    "limit." : "Outside the feasible window: " + esc(limits) + "."}</b> Carbon: ` +
    `${esc(common.nodes.carbon[k])}.</p>`;
}

// Legend entries only for the layers this slice draws (no sample without data).
function showLegend(legend, common, selected) {
  const drawn = {
    carbon: common.carbon.xs.length > 0,
    carbon_outlet: common.carbon_outlet.xs.length > 0,
    carbon_catalyst: common.carbon_catalyst.xs.length > 0,
    carbon_graphite: common.carbon_graphite.xs.length > 0,
    edge: common.edge.xs.length > 0,
    infeasible: common.infeasible.xs.length > 0 && common.infeasible.xs[0].length > 0,
    selected: selected,
    best: Boolean(common.best && common.best.x.length > 0),
    design: Boolean(common.design && common.design.x.length > 0),
  };
  for (const item of legend.items) item.visible = Boolean(drawn[item.name]);
}
