// planet.js: the planet panel (a planet placed in the disk, the observed
// planet's chi-square map, the snowline anchor) and the paper downloads
// (figures as SVG/PNG, methods text, BibTeX); the page's last module. `cargo
// xtask dist` inlines it after app.js in the same module script, so it runs
// once app.js has started. It receives app.js's interface `App` (the running
// `explorer`, the state, $, download, slug, drawView, loadDisk, themeName,
// writeFragment, pageHooks, ...) as its one argument and uses no other name
// of the page's other modules.
//
// It holds no physics: every number and every file comes from the Rust core
// through `Explorer` (crates/web/src/planet_js.rs), which calls the same
// functions with the same arguments as the CLI's `planet`, `fit`, `anchor`,
// `figure` and `methods` commands, so the downloads equal the CLI's byte for byte.

((app) => {
  const {
    $, download, slug, getPath, drawView, VIEWS, loadDisk, themeName, writeFragment, pageHooks, formula, SPECIES,
    base64urlEncode, base64urlDecode, roundSlider, pushUndo, checkJsonBounds,
  } = app;

  // ---------------------------------------------------------------------------
  // The panel's inputs. `key` is what the Rust side reads, `path` names the
  // problem slot (the same names the Rust side gives its problems).
  // ---------------------------------------------------------------------------

  const PLANET_FIELDS = [
    { key: "radius_au", path: "planet.radius_au", label: "Formation radius", unit: "au",
      hint: "inside the disk; click the C/O profile (a) to set it" },
    { key: "to_radius_au", path: "planet.to_radius_au", label: "Migrated to radius (optional)", unit: "au",
      hint: "blank = formed at one radius; else the gas and solids are averaged over the range, weighted by the mass accreted in each annulus" },
    { key: "solid_to_gas", path: "planet.solid_to_gas", label: "Accreted solid-to-gas mass ratio M_solid/M_gas", unit: "",
      hint: "≥ 0; slider 0.001 to 1 (log); 0 = gas only", slider: { min: 1e-3, max: 1, log: true }, zeroBox: true },
    { key: "mix", path: "planet.mix", label: "Fraction of the solids' atoms mixed into the envelope f_mix", unit: "",
      hint: "0 to 1; 1 = full mixing", slider: { min: 0, max: 1, log: false } },
  ];

  const FIT_FIELDS = [
    { key: "c_to_o", path: "fit.c_to_o", label: "Observed envelope C/O", unit: "", hint: "≥ 0 (linear number ratio)" },
    { key: "c_to_o_sigma", path: "fit.c_to_o_sigma", label: "its 1σ error", unit: "", hint: "> 0" },
    { key: "c_to_h_dex", path: "fit.c_to_h_dex", label: "Observed [C/H] (optional)", unit: "dex", hint: "relative to the reference below" },
    { key: "c_to_h_sigma", path: "fit.c_to_h_sigma", label: "its 1σ error", unit: "dex", hint: "> 0" },
    { key: "o_to_h_dex", path: "fit.o_to_h_dex", label: "Observed [O/H] (optional)", unit: "dex", hint: "e.g. 0.5 for 3.2 × the reference" },
    { key: "o_to_h_sigma", path: "fit.o_to_h_sigma", label: "its 1σ error", unit: "dex", hint: "> 0" },
    { key: "m_to_h_dex", path: "fit.m_to_h_dex", label: "Observed [M/H] (optional)", unit: "dex", hint: "(C+O+N+S)/H over the reference's" },
    { key: "m_to_h_sigma", path: "fit.m_to_h_sigma", label: "its 1σ error", unit: "dex", hint: "> 0" },
    { key: "relative_to", path: "fit.relative_to", label: "Metallicities relative to", kind: "select",
      options: [["star", "the star (its offsets applied)"], ["sun", "the Sun"]] },
    { key: "covariance", path: "fit.covariance", label: "Covariance matrix (optional; replaces the errors)", unit: "",
      hint: "order C/O, [C/H], [O/H], [M/H] of those given; rows separated by ';', e.g. 0.0025,0.001;0.001,0.04" },
    { key: "mix", path: "fit.mix", label: "f_mix over the whole map", unit: "", hint: "0 to 1; 1 = full mixing" },
    { key: "ratio_min", path: "fit.ratio_min", label: "Smallest solid-to-gas ratio", unit: "", hint: "> 0; default 0.001" },
    { key: "ratio_max", path: "fit.ratio_max", label: "Largest solid-to-gas ratio", unit: "", hint: "≤ 1000; default 1" },
    { key: "ratio_count", path: "fit.ratio_count", label: "Number of ratios", unit: "", hint: "40 to 1000; default 48" },
    { key: "radius_prior_au", path: "fit.radius_prior_au", label: "Prior on the formation radius (optional)", unit: "au", hint: "MIN,MAX" },
    { key: "solid_to_gas_prior", path: "fit.solid_to_gas_prior", label: "Prior on the solid-to-gas ratio (optional)", unit: "", hint: "MIN,MAX" },
    { key: "oxygen_correction", path: "fit.oxygen_correction", label: "Oxygen hidden in the planet's condensates", kind: "select",
      options: [["off", "none"], ["on", "20 % of O (Burrows & Sharp 1999)"]] },
    { key: "planet_mass_mjup", path: "fit.planet_mass_mjup", label: "Planet mass (optional)", unit: "M_Jup",
      hint: "> 0; places whose feeding zone holds less gas than the envelope are infeasible" },
    { key: "feeding_zone_hill_radii", path: "fit.feeding_zone_hill_radii", label: "Feeding-zone half-width", unit: "Hill radii",
      hint: "> 0; default 2√3 = 3.46 (Lissauer 1993)" },
    { key: "convention", path: "fit.convention", label: "1σ and 2σ regions (Δχ²)", kind: "select",
      options: [["mapped_parameters", "2.30 and 6.18: two mapped parameters"], ["fitted_quantities", "by the number of fitted quantities (1.00 and 4.00 for C/O alone)"]] },
  ];

  // The observed quantities: the map runs when any of them is typed.
  const FIT_QUANTITIES = ["c_to_o", "c_to_h_dex", "o_to_h_dex", "m_to_h_dex"];

  const ANCHOR_FIELDS = [
    { key: "species", path: "anchor.species", label: "Species whose snowline was observed", kind: "select", options: [] /* filled below */ },
    { key: "radius_au", path: "anchor.radius_au", label: "Observed snowline radius", unit: "au", hint: "inside the disk" },
    { key: "sigma_au", path: "anchor.sigma_au", label: "its 1σ error (optional)", unit: "au", hint: "≥ 0" },
    { key: "adjust", path: "anchor.adjust", label: "Adjust", kind: "select",
      options: [["flaring_angle", "the flaring angle φ"], ["temperature_scale", "a midplane-temperature multiplier"]] },
  ];

  // The figure downloads, one per view, with the CLI's --view text.
  const FIGURE_VIEWS = [
    { figure: "view-c-to-o", view: () => "c_to_o" },
    { figure: "view-temperature", view: () => "temperature" },
    { figure: "view-ice-map", view: () => `ice_map:${app.mapSpecies}` },
    { figure: "view-c-to-o-map", view: () => "c_to_o_map" },
    { figure: "view-abundances", view: () => "abundances" },
  ];

  const planetId = (path) => "pp-" + path.replace(/[^A-Za-z0-9_]/g, "-");

  // Numbers for people: a few significant digits; `null` (undefined in the
  // core, e.g. no oxygen left) is said in words, never shown as NaN.
  function show(x, digits = 3) {
    if (x == null || !Number.isFinite(x)) return "undefined";
    if (x === 0) return "0";
    const a = Math.abs(x);
    if (a >= 1e-3 && a < 1e5) return Number(x.toPrecision(digits)).toString();
    return x.toExponential(digits - 1);
  }
  const dex = (x) => (x == null || !Number.isFinite(x) ? "undefined" : `${x >= 0 ? "+" : "−"}${Math.abs(x).toFixed(2)}`);
  const percent = (x) => (x == null || !Number.isFinite(x) ? "–" : `${(100 * x).toFixed(x > 0.995 || x < 0.005 ? 0 : 1)} %`);

  function element(tag, attrs = {}, ...children) {
    const el = document.createElement(tag);
    for (const [k, v] of Object.entries(attrs)) {
      if (k === "text") el.textContent = v;
      else if (k === "class") el.className = v;
      else el.setAttribute(k, v);
    }
    for (const c of children) if (c != null) el.append(c);
    return el;
  }

  // One labelled input (text, select, or text with a slider), with its hint and problem slot.
  function buildInput(field, group) {
    const id = planetId(field.path);
    const row = element("div", { class: "field" });
    const label = element("label", { for: id, text: field.unit ? `${field.label} [${field.unit}]` : field.label });
    row.append(label);
    let input;
    if (field.kind === "select") {
      input = element("select", { id });
      for (const [value, text] of field.options) input.add(new Option(text, value));
    } else {
      input = element("input", { id, type: "text", class: "number", inputmode: "decimal", autocomplete: "off", spellcheck: "false" });
    }
    const problem = element("p", { class: "problem", id: id + "-problem", hidden: "" });
    const describedBy = [problem.id];
    const line = element("div", { class: "inputs" });
    let slider = null;
    let zero = null;
    if (field.slider) {
      const s = field.slider;
      slider = element("input", { type: "range", id: id + "-slider", min: String(s.log ? Math.log10(s.min) : s.min),
        max: String(s.log ? Math.log10(s.max) : s.max), step: String(s.log ? 0.01 : 0.01) });
      const sliderLabel = element("label", { for: slider.id, class: "visually-hidden",
        text: `${label.textContent}, ${s.log ? "logarithmic " : ""}slider from ${s.min} to ${s.max}` });
      line.append(sliderLabel, slider);
      slider.addEventListener("input", () => {
        const x = Number(slider.value);
        input.value = String(roundSlider(s.log ? 10 ** x : x));
        if (zero) zero.checked = false;
        group.changed(field);
      });
    }
    line.append(input);
    row.append(line);
    if (field.zeroBox) {
      zero = element("input", { type: "checkbox", id: id + "-zero" });
      const zeroRow = element("div", { class: "field check" }, zero, element("label", { for: zero.id, text: "Gas only (no solids accreted: ratio 0)" }));
      row.append(zeroRow);
      zero.addEventListener("change", () => {
        if (zero.checked) input.value = "0";
        else if (Number(input.value) === 0) input.value = String(roundSlider(10 ** Number(slider.value)));
        syncSlider(field, input, slider, zero);
        group.changed(field);
      });
    }
    if (field.hint) {
      const hint = element("span", { class: "range", id: id + "-hint", text: field.hint });
      row.append(hint);
      describedBy.push(hint.id);
    }
    input.setAttribute("aria-describedby", describedBy.join(" "));
    row.append(problem);
    input.addEventListener(field.kind === "select" ? "change" : "input", () => {
      syncSlider(field, input, slider, zero);
      group.changed(field);
    });
    group.inputs.set(field.key, { field, input, slider, zero });
    return row;
  }

  // The slider (and the zero box) follow a typed number.
  function syncSlider(field, input, slider, zero) {
    const x = Number(input.value.trim());
    if (zero) {
      zero.checked = input.value.trim() !== "" && x === 0;
      if (slider) slider.disabled = zero.checked;
    }
    if (!slider || input.value.trim() === "" || !Number.isFinite(x)) return;
    const s = field.slider;
    if (s.log) {
      if (x > 0) slider.value = String(Math.log10(x));
    } else slider.value = String(x);
  }

  function makeGroup(fields, onChange) {
    const group = { inputs: new Map(), changed: onChange };
    const rows = fields.map((f) => buildInput(f, group));
    group.rows = rows;
    // The typed values, as the Rust side reads them (text; blank = absent).
    group.values = () => Object.fromEntries([...group.inputs].map(([k, c]) => [k, c.input.value]));
    group.set = (values) => {
      for (const [k, c] of group.inputs) {
        if (values[k] === undefined) continue;
        c.input.value = values[k];
        syncSlider(c.field, c.input, c.slider, c.zero);
      }
    };
    return group;
  }

  // Shows problems beside their fields; those naming no field go to `fallback`.
  function showPlanetProblems(prefix, problems, fallback) {
    for (const el of document.querySelectorAll(`[id^="${planetId(prefix)}"][id$="-problem"]`)) {
      el.hidden = true;
      el.textContent = "";
    }
    for (const el of document.querySelectorAll(`[id^="${planetId(prefix)}"][aria-invalid]`)) el.removeAttribute("aria-invalid");
    fallback.hidden = true;
    fallback.textContent = "";
    for (const p of problems) {
      const slot = document.getElementById(planetId(p.path) + "-problem");
      if (slot) {
        slot.hidden = false;
        slot.textContent = (slot.textContent ? slot.textContent + " " : "") + p.message;
        const input = document.getElementById(planetId(p.path));
        if (input) input.setAttribute("aria-invalid", "true");
      } else {
        fallback.hidden = false;
        fallback.textContent = (fallback.textContent ? fallback.textContent + " " : "") + `${p.path}: ${p.message}`;
      }
    }
  }

  // ---------------------------------------------------------------------------
  // The panel.
  // ---------------------------------------------------------------------------

  const panel = element("section", { class: "view planet", id: "planet-panel", "aria-labelledby": "planet-title" });
  // Undo covers these inputs: before an edit lands, app.js's pushUndo records
  // the values as they were (`committed`, updated after every edit).
  let committed = null;
  function planetEdited(tool, field) {
    pushUndo(`${tool}.${field.key}`);
    committed = { planet: planetGroup.values(), fit: fitGroup.values() };
    schedulePlanet(tool);
  }
  const planetGroup = makeGroup(PLANET_FIELDS, (field) => planetEdited("planet", field));
  const fitGroup = makeGroup(FIT_FIELDS, (field) => planetEdited("fit", field));
  // The observed planet as typed (the fields `nivalis fit` reads), for the uncertainty panel's
  // marginalised posterior, which forwards it to the same request builder.
  app.fitRequest = () => fitGroup.values();
  const anchorGroup = makeGroup(ANCHOR_FIELDS, () => {});
  const anchorSpecies = anchorGroup.inputs.get("species").input;
  for (const sp of SPECIES) anchorSpecies.add(new Option(formula(sp), sp));
  anchorSpecies.value = "CO";

  const planetMessage = element("p", { class: "problem", id: "planet-message", hidden: "" });
  const fitMessage = element("p", { class: "problem", id: "fit-message", hidden: "" });
  const anchorMessage = element("p", { class: "problem", id: "anchor-message", hidden: "" });
  const planetResult = element("div", { class: "planet-result", id: "planet-result", "aria-live": "polite" });
  const fitResult = element("div", { class: "fit-result", id: "fit-result", "aria-live": "polite" });
  const anchorResult = element("div", { class: "anchor-result", id: "anchor-result", "aria-live": "polite" });
  const chi2Canvas = element("canvas", { id: "canvas-chi2", class: "chart", role: "img",
    "aria-label": "Chi-square map of formation radius against solid-to-gas ratio with 1 and 2 sigma contours" });
  const chi2Readout = element("output", { id: "readout-chi2", class: "readout", for: "canvas-chi2", text: "Point at the map for values." });
  const chi2Figure = element("div", { class: "chi2-wrap", hidden: "" }, chi2Canvas, chi2Readout);

  function exportButton(what, text) {
    return element("button", { type: "button", "data-planet-export": what, text, disabled: "" });
  }

  function buildPanel() {
    const planetBox = element("fieldset", { class: "planet-inputs" }, element("legend", { text: "Where it formed and what it accreted" }), ...planetGroup.rows, planetMessage);
    const fitBox = element("fieldset", { class: "planet-inputs" }, element("legend", { text: "Observed envelope" }), ...fitGroup.rows, fitMessage);
    const anchorBox = element("fieldset", { class: "planet-inputs" }, element("legend", { text: "Observed snowline" }), ...anchorGroup.rows,
      element("button", { type: "button", id: "anchor-button", text: "Anchor the disk (an edit: Undo restores it)" }), anchorMessage);
    panel.append(
      element("h2", { id: "planet-title", text: "(g) Planet formation: envelope composition and where an observed planet could have formed" }),
      element("p", { class: "intro", text: "A giant planet's envelope takes in the disk's gas and solids where it accretes. Place a planet (type a radius, or click the C/O profile (a)) and choose how much solid it took in; its envelope composition appears beside the local gas, the local solids and the star. Assumptions: local accretion of midplane gas and solids, the solids' atoms fully mixed into the envelope unless f_mix < 1, hydrogen from the gas only, and the disk at one moment, its ices evolved over the disk's age from the chosen initial state." }),
      element("div", { class: "planet-grid" }, planetBox, planetResult),
      element("div", { class: "export-row" },
        exportButton("planet_json", "Planet (JSON)"), exportButton("planet_csv", "Planet (CSV)")),
      element("h3", { text: "Which formation places fit an observed planet?" }),
      element("p", { class: "intro", text: "Give what a retrieval measured (any of C/O, [C/H], [O/H] and [M/H], with errors or a covariance) to map chi-square over formation radius and accreted solid-to-gas ratio. The fit reports its goodness (χ², degrees of freedom, p-value); when no place is acceptable (p < 0.01) nothing is allowed. The shaded band on the C/O profile (a) marks every radius allowed at 1σ for some ratio; with a planet mass, places whose feeding zone lacks the envelope's gas are hatched grey as infeasible." }),
      element("div", { class: "planet-grid" }, fitBox, fitResult),
      chi2Figure,
      element("div", { class: "export-row" },
        exportButton("fit_csv", "Map (CSV)"), exportButton("fit_ecsv", "Map (ECSV)"), exportButton("fit_json", "Map (JSON, with best fit and allowed radii)"),
        exportButton("chi2_svg", "Map figure (SVG)"), exportButton("chi2_png", "Map figure (PNG)"),
        exportButton("planet_methods", "Planet methods text"), exportButton("planet_bibtex", "Planet BibTeX")),
      element("p", { class: "note", id: "fit-cli", text: "" }),
      element("h3", { text: "Anchor the disk to an observed snowline" }),
      element("p", { class: "intro", text: "An observed snowline (for instance a ring of a tracer molecule in a resolved image) fixes the disk's temperature: the flaring angle, or a multiplier of the midplane temperature, is solved so the model's first freeze-out snowline of that species lies at the observed radius. The anchored disk replaces the current one in every view and in the planet tools." }),
      element("div", { class: "planet-grid" }, anchorBox, anchorResult),
    );
    // After the snowline table (f), so the panels run (a) to (g) in page order.
    $("view-snowlines").after(panel);
  }

  // The figure and methods downloads: a button pair in every view's caption,
  // and the shared options with the methods buttons beside the other exports.
  function buildFigureDownloads() {
    for (const f of FIGURE_VIEWS) {
      const caption = $(f.figure).querySelector("figcaption");
      const row = element("div", { class: "figure-downloads" }, element("span", { text: "Figure for a paper: " }),
        element("button", { type: "button", "data-figure": f.figure, "data-format": "svg", text: "SVG" }),
        element("button", { type: "button", "data-figure": f.figure, "data-format": "png", text: "PNG" }));
      caption.append(row);
    }
    const options = element("div", { class: "figure-options" },
      element("label", { for: "figure-width", text: "Figure width" }),
      element("select", { id: "figure-width" }),
      element("label", { for: "figure-dpi", text: "PNG resolution [dpi]" }),
      element("input", { id: "figure-dpi", type: "text", class: "number", inputmode: "decimal", value: "300", "aria-describedby": "figure-dpi-problem figure-dpi-hint" }),
      element("span", { class: "range", id: "figure-dpi-hint", text: "36 to 1200" }),
      element("label", { for: "figure-theme", text: "Colours" }),
      element("select", { id: "figure-theme" }));
    options.querySelector("#figure-width").append(new Option("one column (252 pt, 3.5 in)", "single"), new Option("two columns (511 pt, 7.1 in)", "double"));
    options.querySelector("#figure-theme").append(new Option("light (paper)", "light"), new Option("dark", "dark"));
    const section = element("section", { class: "exports paper", "aria-labelledby": "paper-title" },
      element("h2", { id: "paper-title", text: "Figures, methods and references for a paper" }),
      element("p", {}, "The SVG and PNG buttons under each view write the same file as ", element("code", { text: "nivalis figure DISK --view VIEW" }),
        " with these options (SVG: vectors with text as text; PNG at the chosen resolution, text in DejaVu Sans); each file carries the program version, the disk file and its hash. The methods text and BibTeX are those of ",
        element("code", { text: "nivalis methods DISK" }), " for the current disk."),
      options,
      element("p", { class: "problem", id: "figure-problem", hidden: "" }),
      element("div", { class: "export-buttons" },
        element("button", { type: "button", "data-export": "methods_text", text: "Methods text" }), element("code", { text: "nivalis methods DISK" }), element("br"),
        element("button", { type: "button", "data-export": "bibtex", text: "BibTeX of the cited references" }), element("code", { text: "nivalis methods DISK --bibtex FILE" })));
    document.querySelector("section.exports").after(section);
    for (const b of section.querySelectorAll("[data-export]")) {
      b.addEventListener("click", () => {
        const what = b.dataset.export;
        const text = app.explorer.exportText(what);
        if (text) download(slug(getPath(app.state, "name")) + (what === "bibtex" ? "-references.bib" : "-methods.txt"), text, "text/plain");
      });
    }
    document.addEventListener("click", (ev) => {
      const b = ev.target.closest && ev.target.closest("[data-figure]");
      if (!b) return;
      const f = FIGURE_VIEWS.find((x) => x.figure === b.dataset.figure);
      saveFigure(f.view(), b.dataset.format);
    });
  }

  function figureOptions(format) {
    return { format, width: $("figure-width").value, dpi: $("figure-dpi").value, theme: $("figure-theme").value };
  }

  function saveFigure(view, format) {
    const problem = $("figure-problem");
    problem.hidden = true;
    $("figure-dpi").removeAttribute("aria-invalid");
    try {
      const bytes = app.explorer.figureFile(view, figureOptions(format));
      const name = `${slug(getPath(app.state, "name"))}-${view.replace(":", "-")}.${format}`;
      download(name, bytes, format === "svg" ? "image/svg+xml" : "image/png");
    } catch (e) {
      const message = String(e.message || e);
      problem.hidden = false;
      problem.textContent = `The figure could not be made: ${message}`;
      if (message.startsWith("dpi:")) $("figure-dpi").setAttribute("aria-invalid", "true");
    }
  }


  // ---------------------------------------------------------------------------
  // Computing: after an edit of the panel (once per animation frame) and after
  // every new disk result.
  // ---------------------------------------------------------------------------

  let planetPending = false;
  let lastMarks = "";
  const planetTimings = { planetMs: NaN, fitMs: NaN };

  const pendingTools = new Set();

  // `tool`: "planet" or "fit", whichever the edit concerns (the other keeps its result).
  function schedulePlanet(tool) {
    pendingTools.add(tool);
    if (planetPending) return;
    planetPending = true;
    requestAnimationFrame(() => {
      planetPending = false;
      const tools = new Set(pendingTools);
      pendingTools.clear();
      runPlanet(tools.has("planet"), tools.has("fit"), false);
    });
  }

  const hasText = (values, keys) => keys.some((k) => String(values[k] ?? "").trim() !== "");

  // Whether the placed planet and the map exist (their exports are enabled).
  let planetOk = false;
  let fitOk = false;

  // Recomputes the placed planet and/or the map. After a new disk both run in
  // the same frame (the profile's marks depend on them), but the map's canvas
  // is drawn when the browser is idle or when it scrolls into view (`deferMap`).
  function runPlanet(doPlanet = true, doFit = true, deferMap = false) {
    if (!app.valid) return;
    const pv = planetGroup.values();
    const fv = fitGroup.values();
    if (!doPlanet) {
      // Only the map changed.
    } else if (hasText(pv, ["radius_au", "to_radius_au"])) {
      planetOk = false;
      const t0 = performance.now();
      const r = app.explorer.placePlanet(pv);
      planetTimings.planetMs = performance.now() - t0;
      planetOk = r.ok;
      showPlanetProblems("planet", r.problems, planetMessage);
      showPlanet(r.ok ? r.planet : null, pv);
    } else {
      planetOk = false;
      app.explorer.clearPlanet();
      showPlanetProblems("planet", [], planetMessage);
      showPlanet(null, pv);
    }
    if (!doFit) {
      // Only the planet changed.
    } else if (hasText(fv, FIT_QUANTITIES)) {
      fitOk = false;
      const t0 = performance.now();
      const r = app.explorer.fitPlanet(fv);
      planetTimings.fitMs = performance.now() - t0;
      fitOk = r.ok;
      showPlanetProblems("fit", r.problems, fitMessage);
      showFit(r.ok ? r.fit : null, fv, deferMap);
    } else {
      fitOk = false;
      app.explorer.clearFit();
      showPlanetProblems("fit", [], fitMessage);
      showFit(null, fv);
    }
    // Redraw the C/O profile when its marks changed.
    const marks = JSON.stringify([planetOk ? pv.radius_au : null, currentUnion, currentInfeasible]);
    if (marks !== lastMarks) {
      lastMarks = marks;
      drawView(VIEWS.find((v) => v.view === "c_to_o"));
    }
    for (const b of panel.querySelectorAll("[data-planet-export]")) {
      const what = b.dataset.planetExport;
      b.disabled = what.startsWith("planet_json") || what.startsWith("planet_csv") ? !planetOk
        : what === "planet_methods" || what === "planet_bibtex" ? !(planetOk || fitOk) : !fitOk;
    }
    writeFragment();
  }

  function row(cells, header = false) {
    const tr = element("tr");
    cells.forEach((c, i) => tr.append(element(i === 0 || header ? "th" : "td", i === 0 && !header ? { scope: "row", text: c } : { text: c })));
    return tr;
  }

  function cliNumber(text) {
    return String(text).trim();
  }

  function showPlanet(p, typed) {
    planetResult.replaceChildren();
    if (!p) {
      planetResult.append(element("p", { class: "note", text: app.explorer.hasModel() || !app.valid ? "Type a formation radius and a solid-to-gas ratio, or click the C/O profile (a)." : "The planet tools need the model on this page; this grid was computed in the background." }));
      return;
    }
    const e = p.envelope;
    const el = e.elements;
    const where = p.to_radius_au == null ? `at ${show(p.radius_au)} au` : `averaged over ${show(p.radius_au)}–${show(p.to_radius_au)} au`;
    const table = element("table", { class: "planet-table", id: "planet-table" },
      element("caption", { text: `Planet formed ${where}, solid-to-gas ${show(p.solid_to_gas)}, f_mix ${show(p.mix)}` }),
      element("thead", {}, row(["", "planet envelope", "local gas", "local solids", "star (= disk gas + solids)"], true)),
      element("tbody", {},
        row(["C/O", show(e.c_to_o), show(p.local.gas_c_to_o), show(p.local.solid_c_to_o), show(p.star_c_to_o)]),
        row(["[C/H] relative to the star [dex]", dex(e.c_to_h_dex_rel_star), "", "", "0"]),
        row(["[O/H] relative to the star [dex]", dex(e.o_to_h_dex_rel_star), "", "", "0"]),
        row(["[C/H] relative to the Sun [dex]", dex(e.c_to_h_dex_rel_sun), "", "", ""]),
        row(["[O/H] relative to the Sun [dex]", dex(e.o_to_h_dex_rel_sun), "", "", ""]),
        row(["N/H / (N/H)_star (linear)", show(el.N.relative_to_star), "", "", "1"]),
        row(["S/H / (S/H)_star (linear)", show(el.S.relative_to_star), "", "", "1"]),
        row(["share of C / O / N / S from solids", [el.C, el.O, el.N, el.S].map((x) => percent(x.solid_share)).join(" / "), "", "", ""])));
    table.querySelector("tbody td").id = "planet-c-to-o";
    const command = `nivalis planet DISK --radius-au ${cliNumber(typed.radius_au)}${typed.to_radius_au.trim() ? ` --to-radius-au ${cliNumber(typed.to_radius_au)}` : ""} --solid-to-gas ${cliNumber(typed.solid_to_gas)} --mix ${typed.mix.trim() ? cliNumber(typed.mix) : "1"}`;
    planetResult.append(table,
      element("p", { class: "note", text: `The disk holds ${show(p.local.solid_to_gas_available)} g of solids per g of gas there. Same numbers: ` }, element("code", { text: command })));
  }

  let currentUnion = [];
  let currentInfeasible = [];

  // The `nivalis fit` options the typed fields stand for (blank fields are left out).
  function fitCommand(typed) {
    const flag = (key, name) => (typed[key] && String(typed[key]).trim() ? ` --${name} ${cliNumber(typed[key])}` : "");
    let text = "nivalis fit DISK";
    for (const [key, name] of [["c_to_o", "c-to-o"], ["c_to_o_sigma", "c-to-o-sigma"], ["c_to_h_dex", "c-to-h-dex"], ["c_to_h_sigma", "c-to-h-sigma"],
      ["o_to_h_dex", "o-to-h-dex"], ["o_to_h_sigma", "o-to-h-sigma"], ["m_to_h_dex", "m-to-h-dex"], ["m_to_h_sigma", "m-to-h-sigma"]]) text += flag(key, name);
    if (typed.covariance && typed.covariance.trim()) text += ` --covariance "${typed.covariance.trim()}"`;
    if (typed.relative_to === "sun") text += " --relative-to sun";
    text += ` --mix ${typed.mix && typed.mix.trim() ? cliNumber(typed.mix) : "1"}`;
    for (const [key, name] of [["ratio_min", "ratio-min"], ["ratio_max", "ratio-max"], ["ratio_count", "ratio-count"], ["radius_prior_au", "radius-prior-au"],
      ["solid_to_gas_prior", "solid-to-gas-prior"], ["planet_mass_mjup", "planet-mass-mjup"], ["feeding_zone_hill_radii", "feeding-zone-hill-radii"]]) text += flag(key, name);
    if (typed.oxygen_correction === "on") text += " --oxygen-correction";
    return `${text} --convention ${typed.convention} --format csv|ecsv|json [--figure FILE.svg|FILE.png]`;
  }

  function showFit(f, typed, deferMap = false) {
    fitResult.replaceChildren();
    currentUnion = f ? f.allowed_union_au : [];
    currentInfeasible = f ? f.feasibility.infeasible_radii.map((i) => [i.inner_edge_au, i.outer_edge_au]) : [];
    chi2Figure.hidden = !f;
    $("fit-cli").textContent = "";
    if (!f) {
      fitResult.append(element("p", { class: "note", text: "Type an observed C/O, [C/H], [O/H] or [M/H] and its error to draw the map." }));
      return;
    }
    const b = f.best_fit;
    const g = f.goodness;
    const pText = g.p_value == null ? "undefined" : g.p_value < 1e-3 ? g.p_value.toExponential(1) : show(g.p_value, 2);
    const fit = `χ²_min ${show(g.chi2_min, 3)} for ${g.degrees_of_freedom} degree${g.degrees_of_freedom > 1 ? "s" : ""} of freedom, p = ${pText}`;
    const best = !b ? "No place of the map gives defined values of the fitted quantities."
      : g.acceptable ? `Best fit: ${show(b.radius_au)} au with solid-to-gas ${show(b.solid_to_gas, 2)} (${fit}; envelope C/O ${show(b.c_to_o)}; there the gas has C/O ${show(f.best_local.gas_c_to_o)} and the solids ${show(f.best_local.solid_c_to_o)}).`
        : `No place in the disk is acceptable (${fit} < ${g.acceptable_p_value}). The closest place is ${show(b.radius_au)} au with solid-to-gas ${show(b.solid_to_gas, 2)} (envelope C/O ${show(b.c_to_o)}).`;
    const union = !g.acceptable ? "No radius is allowed: the observation lies outside what this disk can give."
      : f.allowed_union_au.length
        ? `Allowed at 1σ for some solid-to-gas ratio: ${f.allowed_union_au.map(([a, c]) => `${show(a, 2)}–${show(c, 2)} au`).join(", ")} (shaded on the C/O profile).`
        : "No radius is allowed at 1σ.";
    const t = f.thresholds;
    const list = element("ul", { class: "explanation", id: "fit-explanation" }, ...f.explanation.map((s) => element("li", { text: s.charAt(0).toUpperCase() + s.slice(1) + (/[.!?]$/.test(s) ? "" : ".") })));
    const perRatio = element("table", { class: "allowed-table" },
      element("thead", {}, row(["solid-to-gas", "1σ radii [au]", "2σ radii [au]"], true)),
      element("tbody", {}, ...f.allowed_radii.map((a) => row([show(a.solid_to_gas, 2),
        a.one_sigma.map((i) => `${show(i.inner_edge_au, 2)}–${show(i.outer_edge_au, 2)}`).join(", ") || "none",
        a.two_sigma.map((i) => `${show(i.inner_edge_au, 2)}–${show(i.outer_edge_au, 2)}`).join(", ") || "none"]))));
    const infeasible = currentInfeasible.length
      ? [element("p", { class: "note", id: "fit-infeasible", text: `Infeasible (the feeding zone holds less gas than the envelope at every ratio): ${currentInfeasible.map(([a, c]) => `${show(a, 2)}–${show(c, 2)} au`).join(", ")} (hatched grey on the C/O profile).` })]
      : [];
    fitResult.append(
      element("p", { id: "fit-best", text: best }),
      element("p", { id: "fit-union", text: union }),
      ...infeasible,
      ...f.warnings.map((w) => element("p", { class: "problem fit-warning", text: w.charAt(0).toUpperCase() + w.slice(1) + "." })),
      element("p", { class: "note", text: `Fitted: ${f.fitted}; 1σ and 2σ regions at Δχ² ≤ ${t.one_sigma} and ${t.two_sigma} (${t.degrees_of_freedom} degree${t.degrees_of_freedom > 1 ? "s" : ""} of freedom).` }),
      element("h4", { text: "What the map shows, in words" }), list,
      element("details", {}, element("summary", { text: "Allowed radii at each solid-to-gas ratio" }), element("div", { class: "table-wrap" }, perRatio)));
    $("fit-cli").replaceChildren("Same files: ", element("code", { text: fitCommand(typed) }), " (the map figure's CLI form is one column, light, 300 dpi).");
    chi2Dirty = true;
    if (!deferMap) drawChi2();
    else if (chi2OnScreen && !chi2Idle) chi2Idle = requestIdleCallback(() => { chi2Idle = 0; if (chi2Dirty) drawChi2(); }, { timeout: 300 });
  }

  // ---------------------------------------------------------------------------
  // The chi-square canvas: sized from its CSS box, redrawn on theme and size changes.
  // ---------------------------------------------------------------------------

  // The map needs drawing (a new map, or drawing was deferred), whether it is on screen, a pending idle callback.
  let chi2Dirty = false;
  let chi2OnScreen = false;
  let chi2Idle = 0;

  function drawChi2() {
    if (chi2Figure.hidden || !fitOk) return;
    chi2Dirty = false;
    const ratio = window.devicePixelRatio || 1;
    const rect = chi2Canvas.getBoundingClientRect();
    const w = Math.max(200, Math.round(rect.width * ratio));
    const h = Math.max(150, Math.round(rect.height * ratio));
    if (chi2Canvas.width !== w || chi2Canvas.height !== h) {
      chi2Canvas.width = w;
      chi2Canvas.height = h;
    }
    try {
      app.explorer.drawChi2("canvas-chi2", { theme: themeName(), pixelRatio: ratio });
    } catch (e) {
      chi2Readout.textContent = `The map could not be drawn: ${e.message || e}`;
    }
  }

  new ResizeObserver(() => drawChi2()).observe(chi2Canvas);
  new IntersectionObserver((entries) => {
    for (const e of entries) {
      chi2OnScreen = e.isIntersecting;
      if (chi2OnScreen && chi2Dirty) drawChi2();
    }
  }, { rootMargin: "200px 0px" }).observe(chi2Canvas);
  new MutationObserver(() => drawChi2()).observe(document.documentElement, { attributes: true, attributeFilter: ["data-theme"] });
  matchMedia("(prefers-color-scheme: dark)").addEventListener("change", () => drawChi2());

  chi2Canvas.addEventListener("mousemove", (ev) => {
    const rect = chi2Canvas.getBoundingClientRect();
    const text = app.explorer.chi2Readout("canvas-chi2", (ev.clientX - rect.left) * (chi2Canvas.width / rect.width),
      (ev.clientY - rect.top) * (chi2Canvas.height / rect.height));
    chi2Readout.textContent = text || "Point inside the map for values.";
  });
  chi2Canvas.addEventListener("mouseleave", () => { chi2Readout.textContent = "Point at the map for values."; });

  // A click on the C/O profile places the planet at that radius (four significant digits).
  $("canvas-c-to-o").addEventListener("click", (ev) => {
    const canvas = $("canvas-c-to-o");
    const rect = canvas.getBoundingClientRect();
    const r = app.explorer.radiusAt("canvas-c-to-o", (ev.clientX - rect.left) * (canvas.width / rect.width), (ev.clientY - rect.top) * (canvas.height / rect.height));
    if (r == null) return;
    const radius = planetGroup.inputs.get("radius_au").input;
    radius.value = String(roundSlider(r));
    const ratio = planetGroup.inputs.get("solid_to_gas").input;
    if (ratio.value.trim() === "") ratio.value = "0.01";
    syncSlider(planetGroup.inputs.get("solid_to_gas").field, ratio, planetGroup.inputs.get("solid_to_gas").slider, planetGroup.inputs.get("solid_to_gas").zero);
    schedulePlanet("planet");
  });
  $("canvas-c-to-o").title = "Click to place a planet at this radius";

  // ---------------------------------------------------------------------------
  // Exports of the panel.
  // ---------------------------------------------------------------------------

  const PLANET_FILES = {
    planet_json: ["-planet.json", "application/json"],
    planet_csv: ["-planet.csv", "text/csv"],
    fit_csv: ["-fit.csv", "text/csv"],
    fit_ecsv: ["-fit.ecsv", "text/plain"],
    fit_json: ["-fit.json", "application/json"],
    planet_methods: ["-planet-methods.txt", "text/plain"],
    planet_bibtex: ["-planet-references.bib", "text/plain"],
  };

  panel.addEventListener("click", (ev) => {
    const b = ev.target.closest && ev.target.closest("[data-planet-export]");
    if (!b) return;
    const what = b.dataset.planetExport;
    if (what === "chi2_svg" || what === "chi2_png") {
      // The map figure as `nivalis fit --figure` draws it: one column, light, 300 dpi.
      const format = what.slice(5);
      try {
        const bytes = app.explorer.figureFile("chi2_map", { format, width: "single", dpi: "300", theme: "light" });
        download(`${slug(getPath(app.state, "name"))}-chi2-map.${format}`, bytes, format === "svg" ? "image/svg+xml" : "image/png");
      } catch (e) {
        fitMessage.hidden = false;
        fitMessage.textContent = `The figure could not be made: ${e.message || e}`;
      }
      return;
    }
    const text = app.explorer.planetExport(what);
    if (text) download(slug(getPath(app.state, "name")) + PLANET_FILES[what][0], text, PLANET_FILES[what][1]);
  });

  // ---------------------------------------------------------------------------
  // Anchoring: the anchored disk is loaded like a demo or a file (one undo step).
  // ---------------------------------------------------------------------------

  function anchorNow() {
    anchorResult.replaceChildren(element("p", { class: "note", text: "Solving…" }));
    // Give the browser a frame to show the notice: the solve runs the model several times.
    requestAnimationFrame(() => setTimeout(() => {
      const r = app.explorer.anchorDisk(anchorGroup.values());
      showPlanetProblems("anchor", r.problems, anchorMessage);
      anchorResult.replaceChildren();
      if (!r.ok) return;
      loadDisk(app.explorer.update(r.disk), "The anchored disk");
      anchorResult.append(element("ul", { id: "anchor-summary" }, ...r.summary.map((s) => element("li", { text: s }))),
        element("p", { class: "note", text: "The disk now has the solved value (see the Disk inputs and its notes); Undo goes back to the disk before anchoring. The same file: nivalis anchor DISK --species " + anchorGroup.values().species + " --radius-au " + anchorGroup.values().radius_au.trim() + (anchorGroup.values().sigma_au.trim() ? " --sigma-au " + anchorGroup.values().sigma_au.trim() : "") + " --adjust " + anchorGroup.values().adjust }));
    }, 0));
  }

  // ---------------------------------------------------------------------------
  // The address: #...&planet=<base64url of the panel's typed values>.
  // ---------------------------------------------------------------------------

  function planetFragment() {
    const pv = planetGroup.values();
    const fv = fitGroup.values();
    const out = {};
    if (hasText(pv, ["radius_au", "to_radius_au", "solid_to_gas"])) out.planet = pv;
    if (hasText(fv, FIT_QUANTITIES)) out.fit = fv;
    return Object.keys(out).length ? [`planet=${base64urlEncode(JSON.stringify(out))}`] : [];
  }

  function readPlanetFragment(hash) {
    const params = new URLSearchParams(hash.slice(1));
    if (!params.has("planet")) return;
    try {
      const text = base64urlDecode(params.get("planet"));
      const problem = checkJsonBounds(text, "The planet in the address");
      if (problem) throw new Error(problem);
      const saved = JSON.parse(text);
      if (saved.planet) planetGroup.set(saved.planet);
      if (saved.fit) fitGroup.set(saved.fit);
    } catch (e) {
      planetMessage.hidden = false;
      planetMessage.textContent = `The address holds a planet that cannot be read (${e.message}).`;
    }
  }

  // ---------------------------------------------------------------------------
  // Start: defaults, the address, the first computation.
  // ---------------------------------------------------------------------------

  buildPanel();
  buildFigureDownloads();
  planetGroup.set({ radius_au: "", to_radius_au: "", solid_to_gas: "0.01", mix: "1" });
  fitGroup.set({ c_to_o: "", c_to_o_sigma: "", c_to_h_dex: "", c_to_h_sigma: "", o_to_h_dex: "", o_to_h_sigma: "", m_to_h_dex: "", m_to_h_sigma: "",
    relative_to: "star", covariance: "", mix: "1", ratio_min: "0.001", ratio_max: "1", ratio_count: "48", radius_prior_au: "", solid_to_gas_prior: "",
    oxygen_correction: "off", planet_mass_mjup: "", feeding_zone_hill_radii: "", convention: "mapped_parameters" });
  anchorGroup.set({ radius_au: "", sigma_au: "", adjust: "flaring_angle" });
  $("anchor-button").addEventListener("click", anchorNow);
  readPlanetFragment(pageHooks.initialHash);
  pageHooks.fragmentParts = planetFragment;
  committed = { planet: planetGroup.values(), fit: fitGroup.values() };
  pageHooks.snapshot = () => committed;
  pageHooks.restore = (saved) => {
    if (!saved) return;
    planetGroup.set(saved.planet);
    fitGroup.set(saved.fit);
    committed = { planet: planetGroup.values(), fit: fitGroup.values() };
    // The disk's recompute (scheduled by undo) reruns the panel with these values.
  };
  pageHooks.afterResult = () => runPlanet(true, true, true);
  runPlanet();

  // For the browser tests: the panel's timings and a way to wait for its frame.
  window.nivalis.planet = {
    timings: planetTimings,
    whenDone: () => new Promise((resolve) => requestAnimationFrame(() => requestAnimationFrame(resolve))),
  };
})(App);
