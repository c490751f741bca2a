// Room list: open a room file from disk (picker or drag-and-drop) and create an empty room.
"use strict";
(function () {
  const message = document.getElementById("import-message");

  function show(text, isError) {
    message.textContent = text;
    message.className = isError ? "error" : "ok";
  }

  async function importText(text, fileName) {
    let res;
    try {
      res = await fetch("/api/rooms/import", { method: "POST", headers: { "Content-Type": "application/json" }, body: text });
    } catch (err) {
      show(`Could not reach Leafcast: ${err}`, true);
      return;
    }
    const body = await res.json().catch(() => ({ message: res.statusText }));
    if (!res.ok) {
      const list = (body.problems || []).slice(0, 5).map((p) => `${p.field}: ${p.message}`).join("; ");
      show(`${fileName} was not opened: ${list || body.message}. Nothing was changed.`, true);
      return;
    }
    show(`Opened ${fileName} as “${body.name}”.`, false);
    window.location.href = `/rooms/${body.id}`;
  }

  function readFile(file) {
    const reader = new FileReader();
    reader.onload = () => importText(reader.result, file.name);
    reader.onerror = () => show(`Could not read ${file.name}.`, true);
    reader.readAsText(file);
  }

  document.getElementById("import-file").addEventListener("change", (ev) => {
    if (ev.target.files.length) readFile(ev.target.files[0]);
    ev.target.value = "";
  });
  const target = document.getElementById("drop-target");
  target.addEventListener("dragover", (ev) => { ev.preventDefault(); target.classList.add("dropping"); });
  target.addEventListener("dragleave", () => target.classList.remove("dropping"));
  target.addEventListener("drop", (ev) => {
    ev.preventDefault();
    target.classList.remove("dropping");
    if (ev.dataTransfer.files.length) readFile(ev.dataTransfer.files[0]);
  });

  document.getElementById("new-room").addEventListener("click", async () => {
    const lib = await (await fetch("/api/library/fixtures")).json();
    const t = lib.find((f) => f.id === "panel-0.6") || lib[0];
    const doc = {
      format: "leafcast-room", version: 1, revision: 0, custom_crops: [],
      room: {
        name: "New room", width_m: 2.4384, length_m: 2.4384, height_m: 2.4384,
        wall_finish: { kind: "diffuse", reflectance: 0.8, label: "Flat white paint" }, open_sides: [],
        zones: [{ id: "bench-1", name: "Bench 1", x_m: 0.3, y_m: 0.3, width_m: 1.8, length_m: 1.8, canopy_height_m: 0.9,
                  crop_id: "lettuce", stage: "vegetative", photoperiod_h: null }],
        fixture_types: [t],
        fixtures: [{ id: "F1", type_id: t.id, x_m: 1.2192, y_m: 1.2192, hanging_height_m: 1.5, rotation_deg: 0,
                     dimming_pct: 100, on: true, circuit: "A" }],
        obstacles: [], circuits: [{ name: "A", breaker_a: 15 }],
        schedule: { photoperiod_h: 16, electricity_price_per_kwh: 0.15, currency: "USD", supply_voltage_v: 120 },
        grid_spacing_m: 0.0254, display_units: "imperial",
      },
    };
    await importText(JSON.stringify(doc), "a new room");
  });
})();
