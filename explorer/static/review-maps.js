// Review file callbacks: the maps' update (variable, mode or slider changed) and a click on a
// map, for the single file (two maps) and the comparison (base, proposal, change).
// Written after review.js in each callback; the names below are the callback's arguments
// (explorer.export.build_review): figs, srcs, mappers, hovers, legends, selects, mode,
// sliders, pts (and pts2 when comparing), and for a click: which, heading, balance, cb_obj.

const LAYER_NAMES = ["carbon", "carbon_outlet", "carbon_catalyst", "carbon_graphite",
                     "infeasible", "edge", "best", "design"];

function drawSlice(i, L, values, C, pal, title, m, hover) {
  // Map i shows slice layers L (variable) with the node values, and C (window), palette
  // pal, in mode m.
  for (const name of ["bands", "lines", "labels"]) srcs[i][name].data = L[name];
  for (const name of LAYER_NAMES) if (C[name] && srcs[i][name]) srcs[i][name].data = C[name];
  srcs[i].nodes.data = Object.assign({}, C.nodes, {value: values});
  mappers[i].palette = pal.palette;
  mappers[i].low = pal.low;
  mappers[i].high = pal.high;
  figs[i].title.text = title;
  figs[i].y_range.start = R.ranges[m][0];
  figs[i].y_range.end = R.ranges[m][1];
  // BokehJS figures have no yaxis list: the y axis is the renderer on the left.
  for (const ax of figs[i].left) if ("axis_label" in ax) ax.axis_label = R.axis_labels[m];
  const [label, unit, digits] = hover;
  hovers[i].tooltips = [["temperature", "@x{0.0} " + R.spec.symbols.temperature],
    m === "pressure" ? ["pressure", "@y{0.00} " + R.spec.symbols.pressure]
                     : ["steam-to-carbon", "@y{0.00}"],
    [label, "@value{0." + "0".repeat(Math.max(digits, 1)) + "} " + unit],
    ["review limits", "@feasible"], ["carbon", "@carbon"]];
  srcs[i].selected.data = {x: [], y: [], alpha: []};
  showLegend(legends[i], C, false);
}

function updateMaps() {
  const m = mapMode();
  const k = sliceKey(m);
  for (let i = 0; i < 2; i++) {
    const v = selects[i].value;
    drawSlice(i, R.layers[v][m][k], sliceValues(R.layers[v].values, m), R.common[m][k],
              R.palettes[v], R.titles[v], m, R.hover[v]);
  }
}

function pointHeading(d) {
  const U = R.spec.symbols;
  let head = `<p><b>${display(d.temperature_K, "temperature", 1)} ${U.temperature}, ` +
    `${display(d.pressure_Pa, "pressure", R.spec.summary[2][4])} ${U.pressure}, ` +
    `S/C ${pyG(d.steam_to_carbon, 3)}</b>`;
  if (d.oxygen_to_carbon) head += `, O2/C ${pyG(d.oxygen_to_carbon, 3)}`;
  if (d.co2_to_carbon) head += `, CO2/C ${pyG(d.co2_to_carbon, 3)}`;
  return head;
}

function markSelected(n, T, Y, i, j, commonOf) {
  for (let f = 0; f < n; f++) {
    srcs[f].selected.data = {x: [T[i]], y: [Y[j]], alpha: [1.0]};
    showLegend(legends[f], commonOf(f), true);
  }
}

function tapMap() {
  const m = mapMode();
  const [p, T, Y, i, j] = tappedPoint(m, cb_obj.x, cb_obj.y);
  const d = assemble(p);
  const C = R.common[m][sliceKey(m)];
  heading.text = pointHeading(d) +
    ` (approach ${pyG(toDisplay(d.approach_K, "temperature_difference"), 6)} ` +
    `${R.spec.symbols.temperature_difference}; grid point ${p})</p>`;
  balance.text = nodeVerdict(C, i, j, T.length) + balanceHtml(d);
  markSelected(2, T, Y, i, j, () => C);
}

function updateCompare() {
  const m = mapMode();
  const k = sliceKey(m);
  const v = selects[0].value;
  const sets = [[R.layers, R.common, R.cmp.palettes],
                [R.cmp.layers, R.cmp.common, R.cmp.palettes],
                [R.cmp.diff, R.cmp.common, R.cmp.diff_palettes]];
  for (let i = 0; i < 3; i++) {
    const [layers, common, palettes] = sets[i];
    const [label, unit, digits] = R.hover[v];
    const hover = i === 2 ? ["change in " + label, unit, digits + 1] : [label, unit, digits];
    drawSlice(i, layers[v][m][k], sliceValues(layers[v].values, m), common[m][k],
              palettes[v], R.prefixes[i] + R.titles[v], m, hover);
  }
}

function tapCompare() {
  const m = mapMode();
  const [p, T, Y, i, j] = tappedPoint(m, cb_obj.x, cb_obj.y);
  const a = assemble(p);
  // The proposal's arrays equal to the base's are embedded once, in the base's source.
  const b = assemble(p, R.proposal, {data: Object.assign({}, pts.data, pts2.data)});
  heading.text = pointHeading(a) + ` (grid point ${p}): base, proposal and the change</p>`;
  const k = sliceKey(m);
  balance.text = compareHtml(a, b) + "<h3>Base case</h3>" +
    nodeVerdict(R.common[m][k], i, j, T.length) + balanceHtml(a) + "<h3>Proposal</h3>" +
    nodeVerdict(R.cmp.common[m][k], i, j, T.length) + balanceHtml(b);
  markSelected(3, T, Y, i, j, (f) => (f === 0 ? R.common[m][k] : R.cmp.common[m][k]));
}
