// The money parts of the cycle-and-year page: the time-of-use tariff and the payback of a change.
// main.js calls these with the page data and its helpers.
export function tariff(page, h) {
  const { $, fmt, esc, clock, table, num, save, DAYS, PLOT } = h;
  const room = page.room_file.room;
  const t = room.schedule.tariff;
  const cur = page.currency;
  if (!t) {
    $("tariff-form").innerHTML = `<p>The room pays a flat ${room.schedule.electricity_price_per_kwh} ${esc(cur)}/kWh.</p><button type="button" id="tariff-new">Add a time-of-use tariff</button>`;
    $("tariff-new").addEventListener("click", () => save((d) => {
      const base = d.room.schedule.electricity_price_per_kwh;
      // A starting point to edit: weekday evenings at twice the flat price, counted for demand.
      d.room.schedule.tariff = { windows: [{ days: [0, 1, 2, 3, 4], start_h: 16, end_h: 21, price_per_kwh: Math.round(base * 200) / 100, peak: true }], demand_charge_per_kw: 0, demand_in_peak_only: true, lights_on_h: 6 };
    }, "a time-of-use tariff"));
    return;
  }
  const windowRow = (w, k) => `<tr data-window="${k}"><td>${DAYS.map((d, i) => `<label><input type="checkbox" name="day" value="${i}" ${w.days.includes(i) ? "checked" : ""}>${d}</label>`).join(" ")}</td>
    <td><input aria-label="From (h)" name="start_h" type="number" min="0" max="24" step="0.25" value="${w.start_h}"></td>
    <td><input aria-label="To (h)" name="end_h" type="number" min="0" max="24" step="0.25" value="${w.end_h}"></td>
    <td><input aria-label="Price per kWh" name="price" type="number" min="0" step="0.001" value="${w.price_per_kwh}"></td>
    <td><input aria-label="Peak (demand counts)" name="peak" type="checkbox" ${w.peak ? "checked" : ""}></td>
    <td><button type="button" data-remove-window aria-label="Remove window ${k + 1}">×</button></td></tr>`;
  $("tariff-form").innerHTML = `<p class="small">Outside every window the flat ${room.schedule.electricity_price_per_kwh} ${esc(cur)}/kWh applies. A window whose end is at or before its start runs past midnight.</p>
    ${table(["Days", "From (h)", "To (h)", `${esc(cur)}/kWh`, "Peak", ""], t.windows.map(windowRow))}
    <div class="field-grid wide"><label for="demand">Demand charge (${esc(cur)} per kW per month)</label><input id="demand" type="number" min="0" step="0.01" value="${t.demand_charge_per_kw}">
    <label for="demand-peak">Demand counts only in peak windows</label><input id="demand-peak" type="checkbox" ${t.demand_in_peak_only ? "checked" : ""}>
    <label for="lights-on">Lights come on now at (h, clock)</label><input id="lights-on" type="number" min="0" max="23.75" step="0.25" value="${t.lights_on_h}"></div>
    <div class="row"><button type="button" id="window-add">Add a window</button><button type="button" id="tariff-save">Save the tariff</button><button type="button" id="tariff-drop">Back to a flat price</button></div>`;
  const form = $("tariff-form");
  $("window-add").addEventListener("click", () => form.querySelector("tbody").insertAdjacentHTML("beforeend", windowRow({ days: [0, 1, 2, 3, 4], start_h: 7, end_h: 19, price_per_kwh: room.schedule.electricity_price_per_kwh, peak: false }, form.querySelectorAll("tr[data-window]").length)));
  form.addEventListener("click", (ev) => { if (ev.target.dataset.removeWindow !== undefined) ev.target.closest("tr").remove(); });
  $("tariff-drop").addEventListener("click", () => save((d) => { d.room.schedule.tariff = null; }, "a flat price"));
  $("tariff-save").addEventListener("click", () => save((d) => {
    const windows = [...form.querySelectorAll("tr[data-window]")].map((tr, k) => {
      const days = [...tr.querySelectorAll("[name=day]:checked")].map((b) => Number(b.value));
      if (!days.length) throw new Error(`window ${k + 1}: tick at least one day`);
      const f = (n) => tr.querySelector(`[name=${n}]`);
      return { days, start_h: num(f("start_h"), `window ${k + 1} from`, { min: 0, max: 24 }), end_h: num(f("end_h"), `window ${k + 1} to`, { min: 0, max: 24 }),
        price_per_kwh: num(f("price"), `window ${k + 1} price`, { min: 0, max: 100 }), peak: f("peak").checked };
    });
    d.room.schedule.tariff = { windows, demand_charge_per_kw: num($("demand"), "demand charge", { min: 0, max: 1000 }), demand_in_peak_only: $("demand-peak").checked, lights_on_h: num($("lights-on"), "lights-on time", { min: 0, max: 23.75 }) };
  }, "the tariff"));

  const r = page.tariff;
  if (!r || r.problem) { $("tariff-table").innerHTML = r ? `<p class="bad">${esc(r.problem)}</p>` : ""; return; }
  const hours = r.price_hours.concat([24]);
  const line = (d) => r.price_by_day[d].concat([r.price_by_day[d][r.price_by_day[d].length - 1]]);
  const shapes = [];
  r.zones.forEach((z, k) => {
    const band = (on, hrs, color, y0, y1) => {
      const end = on + hrs;
      const parts = end <= 24 ? [[on, end]] : [[on, 24], [0, end - 24]];
      parts.forEach(([a, b]) => shapes.push({ type: "rect", xref: "x", yref: "paper", x0: a, x1: b, y0, y1, fillcolor: color, line: { width: 0 }, opacity: 0.25 }));
    };
    const slot = 0.5 / r.zones.length;
    band(z.lights_on_now_h, z.photoperiod_h, "#6b8bb5", k * slot, (k + 1) * slot);
    if (z.best) band(z.best.lights_on_h, z.photoperiod_h, "#2f6d3a", 0.5 + k * slot, 0.5 + (k + 1) * slot);
  });
  window.Plotly.newPlot("tariff-plot", [
    { x: hours, y: line(0), mode: "lines", line: { shape: "hv", color: "#b3261e" }, name: "Monday price" },
    { x: hours, y: line(5), mode: "lines", line: { shape: "hv", color: "#555", dash: "dot" }, name: "Saturday price" },
  ], { shapes, margin: { t: 10, r: 10, b: 40, l: 55 }, xaxis: { title: { text: "hour of the day (lights now: blue band, cheapest: green band)" }, dtick: 2, range: [0, 24] }, yaxis: { title: { text: `${cur}/kWh` }, rangemode: "tozero" }, legend: { orientation: "h", y: -0.3 } }, PLOT);
  $("tariff-table").innerHTML = table(["Zone", "Lights", "Now", `${esc(cur)}/month now`, "Cheapest", "Dark (unbroken)", `${esc(cur)}/month then`, "Saving per month / year"],
    r.zones.map((z) => `<tr><td>${esc(z.zone_name)}</td><td>${fmt(z.power_w)} W × ${fmt(z.photoperiod_h, 2)} h</td><td>${clock(z.lights_on_now_h)}–${clock(z.lights_on_now_h + z.photoperiod_h)}</td><td>${fmt(z.cost_now_per_month, 2)}</td>
      ${z.best ? `<td>${clock(z.best.lights_on_h)}–${clock(z.best.lights_off_h)}</td><td>${fmt(z.best.dark_h, 2)} h${z.why ? ` (${esc(z.why)})` : ""}</td><td>${fmt(z.best.cost_per_month, 2)}${z.best.demand_cost_per_month ? ` incl. demand ${fmt(z.best.demand_cost_per_month, 2)}` : ""}</td><td>${fmt(z.saving_per_month, 2)} / ${fmt(z.saving_per_year, 2)}</td>` : `<td colspan="4" class="bad">${esc(z.problem)}</td>`}</tr>`))
    + `<p>Saving for the room: ${fmt(r.saving_per_month, 2)} ${esc(cur)} a month, ${fmt(r.saving_per_year, 2)} ${esc(cur)} a year.${r.demand_charge_per_kw ? " The demand charge is counted per zone: the room's real peak when the zones' light periods overlap, an upper bound when they do not." : ""}</p>`;
}

export function payback(page, h) {
  const { $, fmt, esc, table, num, save, PLOT } = h;
  const room = page.room_file.room;
  const plan = room.payback;
  const cur = page.currency;
  const roomTypes = room.fixture_types;
  if (!plan) {
    $("payback-form").innerHTML = `<button type="button" id="payback-new">Compare a replacement fixture</button>`;
    $("payback-new").addEventListener("click", () => save((d) => {
      // Default: a type the room does not have whose footprint is no larger than the largest present one, so it
      // hangs where the present fixtures are (a longer one could stick out past a wall).
      const size = (t) => (t.geometry.kind === "point" ? [0, 0] : [t.geometry.length_m || 0, t.geometry.width_m || 0].sort((a, b) => b - a));
      const big = roomTypes.map(size).reduce((m, s) => [Math.max(m[0], s[0]), Math.max(m[1], s[1])], [0, 0]);
      const fresh = page.fixture_types.filter((t) => !roomTypes.some((r) => r.id === t.id));
      const other = fresh.find((t) => size(t)[0] <= big[0] + 1e-9 && size(t)[1] <= big[1] + 1e-9) || fresh[0] || page.fixture_types[0];
      d.room.payback = { variant_type_id: other.id, replace_type_id: null, price_per_fixture: 300, install_cost: 0, horizon_years: 5, discount_rate: 0, match_light: true, rated_hours_now: null, rated_hours_variant: null, hours_run_now: null };
    }, "a replacement to compare"));
    return;
  }
  const opt = (v, label, sel) => `<option value="${esc(v)}" ${sel ? "selected" : ""}>${esc(label)}</option>`;
  $("payback-form").innerHTML = `<div class="field-grid wide">
    <label for="pb-variant">New fixture type</label><select id="pb-variant">${page.fixture_types.map((t) => opt(t.id, `${t.name} · ${t.ppf_umol_s} µmol/s · ${t.power_w} W (${fmt(t.ppf_umol_s / t.power_w, 2)} µmol/J)`, t.id === plan.variant_type_id)).join("")}</select>
    <label for="pb-replace">Replace</label><select id="pb-replace">${opt("", "every fixture", !plan.replace_type_id)}${roomTypes.map((t) => opt(t.id, `the ${t.name} fixtures`, t.id === plan.replace_type_id)).join("")}</select>
    <label for="pb-price">Price per new fixture (${esc(cur)})</label><input id="pb-price" type="number" min="0" value="${plan.price_per_fixture}">
    <label for="pb-install">Installation (${esc(cur)})</label><input id="pb-install" type="number" min="0" value="${plan.install_cost}">
    <label for="pb-years">Horizon (years)</label><input id="pb-years" type="number" min="1" max="30" value="${plan.horizon_years}">
    <label for="pb-rate">Discount rate (% a year)</label><input id="pb-rate" type="number" min="0" max="50" step="0.5" value="${plan.discount_rate * 100}">
    <label for="pb-match">Dim the new fixtures to today's light</label><input id="pb-match" type="checkbox" ${plan.match_light ? "checked" : ""}>
    <label for="pb-lnow">Hours to 90 % output, present fixtures (blank: the type's record)</label><input id="pb-lnow" type="number" min="1" value="${plan.rated_hours_now ?? ""}">
    <label for="pb-lvar">Hours to 90 % output, new fixtures (blank: the type's record)</label><input id="pb-lvar" type="number" min="1" value="${plan.rated_hours_variant ?? ""}">
    <label for="pb-run">Hours the present fixtures have run (blank: the room's recorded age)</label><input id="pb-run" type="number" min="0" value="${plan.hours_run_now ?? ""}"></div>
    <div class="row"><button type="button" id="pb-save">Save and compare</button><button type="button" id="pb-drop">Remove the comparison</button></div>`;
  $("pb-drop").addEventListener("click", () => save((d) => { d.room.payback = null; }, "removing the comparison"));
  $("pb-save").addEventListener("click", () => save((d) => {
    d.room.payback = { variant_type_id: $("pb-variant").value, replace_type_id: $("pb-replace").value || null,
      price_per_fixture: num($("pb-price"), "price per fixture", { min: 0 }), install_cost: num($("pb-install"), "installation", { min: 0 }),
      horizon_years: num($("pb-years"), "horizon", { min: 1, max: 30 }), discount_rate: num($("pb-rate"), "discount rate", { min: 0, max: 50 }) / 100,
      match_light: $("pb-match").checked, rated_hours_now: num($("pb-lnow"), "hours to 90 % (present)", { min: 1, blank: true }),
      rated_hours_variant: num($("pb-lvar"), "hours to 90 % (new)", { min: 1, blank: true }), hours_run_now: num($("pb-run"), "hours run", { min: 0, blank: true }) };
  }, "the comparison"));
  const r = page.payback;
  if (!r || r.problem) { $("payback-table").innerHTML = r ? `<p class="bad">${esc(r.problem)}</p>` : ""; return; }
  const years = r.cumulative.map((_, k) => k + 1);
  window.Plotly.newPlot("payback-plot", [{ x: [0].concat(years), y: [-r.purchase_cost].concat(r.cumulative), type: "bar", marker: { color: [-r.purchase_cost].concat(r.cumulative).map((v) => (v >= 0 ? "#2f6d3a" : "#b3261e")) }, name: "balance" }],
    { margin: { t: 10, r: 10, b: 40, l: 60 }, xaxis: { title: { text: "end of year" }, dtick: 1 }, yaxis: { title: { text: `balance (${cur})` } } }, PLOT);
  const n = r.now, v = r.variant;
  const sum = (a) => a.reduce((s, x) => s + x, 0);
  // null: no photons reach the canopy (every fixture off), so there is no cost per mole
  const perMol = (c, cur) => (c === null ? "no light delivered" : `${fmt(c * 100, 3)} ${esc(cur)}`);
  $("payback-table").innerHTML = `<p><strong>${r.years === null ? `Does not pay back within ${r.horizon_years} years` : `Pays back in ${fmt(r.years, 1)} years`}</strong> (${r.replaced.length} fixtures to ${esc(r.variant_type_name)}, ${fmt(r.purchase_cost, 2)} ${esc(cur)}; saving ${fmt(r.yearly_saving, 2)} ${esc(cur)} a year${r.discount_rate ? `, discounted at ${fmt(r.discount_rate * 100, 1)} %` : ""}).</p>`
    + table(["", "Today", "With the change"], [
      ["Input power", `${fmt(n.power_w)} W`, `${fmt(v.power_w)} W${r.match_light ? ` (dimmed to ${v.dimming_pct.map((x) => fmt(x, 1) + " %").join(", ")})` : ""}`],
      ["Photons to the canopy", `${fmt(n.canopy_flux_umol_s)} µmol/s`, `${fmt(v.canopy_flux_umol_s)} µmol/s`],
      ["Energy a year", `${fmt(n.kwh_year)} kWh`, `${fmt(v.kwh_year)} kWh`],
      ["Running cost a year", `${fmt(n.cost_year, 2)} ${esc(cur)}`, `${fmt(v.cost_year, 2)} ${esc(cur)}`],
      [`Photons over ${r.horizon_years} years (with ageing)`, `${fmt(sum(n.mol_by_year))} mol`, `${fmt(sum(v.mol_by_year))} mol`],
      ["Cost per 100 mol (purchase included)", perMol(n.cost_per_mol, cur), perMol(v.cost_per_mol, cur)],
      ["Output over the years", esc(r.maintenance_now) + ` (from ${fmt(r.hours_run_now)} h run)`, esc(r.maintenance_variant)],
    ].map((row) => `<tr>${row.map((c) => `<td>${c}</td>`).join("")}</tr>`));
}
