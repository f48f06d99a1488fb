// controls.js: the disk inputs (the page's fourth module), built from the disk
// file's field table that the core hands over (`Core.fieldTable`, from
// crates/disk_files/src/fields.rs). This file holds no schema, no defaults and
// no species list: paths, labels, units, allowed ranges, choices, sliders and
// which page group shows a field all come from that table; only the groups'
// titles, notes and order (the page's layout) are written here.

const Controls = ((util, core) => {
  const { $, pathId, getPath, roundSlider, parseTyped, showNumber } = util;

  // The page's groups, in order. Which fields each shows is the table's `page`;
  // `slots` are extra problem slots at the top of the group (for problems
  // naming the group's object as a whole).
  const GROUPS = [
    { id: "scenario", title: "Scenario", slots: ["name", "notes"] },
    { id: "star", title: "Star", slots: ["star"] },
    { id: "disk", title: "Disk", slots: [], note: "Ṁ is constant in radius; with the surface density it implies a radius-dependent α." },
    { id: "radiation", title: "Dust and radiation", slots: [] },
    { id: "ices", title: "Ices", slots: ["ices"], note: "Every species is an independent pure ice: no mixing with or trapping in water ice." },
    { id: "composition", title: "Composition", slots: ["composition"] },
    { id: "grid", title: "Grid", slots: ["grid"] },
  ];

  const FIELDS = core.fieldTable;
  const byPath = new Map(FIELDS.map((f) => [f.path, f]));
  const isContainer = (f) => f.kind === "object" || f.kind === "fractions";
  /** The species keys, in the core's order. */
  const SPECIES = core.speciesInfo.species.map((s) => s.species);

  const controls = new Map(); // path -> { input, slider, field }

  function problemSlot(path) {
    const p = document.createElement("p");
    p.className = "problem";
    p.id = pathId(path) + "-problem";
    p.dataset.path = path;
    p.hidden = true;
    return p;
  }

  // What the range line under a control says: the table's allowed range, its
  // checks across fields, and what a blank field means.
  function rangeText(field) {
    let text = `allowed: ${field.allowed}`;
    if (field.constraint) text += `; ${field.constraint}`;
    if (field.optional) text += "; blank = built-in";
    else if (byPath.get(field.parent)?.kind === "fractions") text += "; blank = 0";
    if (field.slider) text += `; slider ${field.slider.min} to ${field.slider.max}${field.slider.log ? " (log)" : ""}`;
    return text;
  }

  function setSlider(field, slider, value) {
    const s = field.slider;
    if (s.log) slider.value = value > 0 ? Math.log10(value) : slider.min;
    else slider.value = value;
  }

  // One labelled control for a leaf field of the table; `onEdit(path, value)` is called on every edit.
  function buildField(field, container, onEdit) {
    const id = pathId(field.path);
    const row = document.createElement("div");
    row.className = "field";
    const label = document.createElement("label");
    label.htmlFor = id;
    label.textContent = field.unit ? `${field.label} [${field.unit}]` : field.label;
    let input;
    let slider = null;
    const numeric = field.kind === "number" || field.kind === "integer";
    if (field.kind === "choice") {
      input = document.createElement("select");
      for (const [value, text] of field.options) input.add(new Option(text, value));
    } else if (field.kind === "bool") {
      input = document.createElement("input");
      input.type = "checkbox";
      row.classList.add("check");
    } else if (field.kind === "long_text") {
      input = document.createElement("textarea");
      input.rows = 2;
    } else {
      input = document.createElement("input");
      input.type = "text";
      if (numeric) {
        input.inputMode = "decimal";
        input.spellcheck = false;
        input.autocomplete = "off";
        input.className = "number";
      }
    }
    input.id = id;
    input.name = field.path;
    const problem = problemSlot(field.path);
    input.setAttribute("aria-describedby", problem.id + (numeric ? " " + id + "-range" : ""));
    if (field.kind === "bool") {
      row.append(input, label);
    } else {
      row.append(label);
      const line = document.createElement("div");
      line.className = "inputs";
      if (field.slider) {
        slider = document.createElement("input");
        slider.type = "range";
        slider.id = id + "-slider";
        const s = field.slider;
        slider.min = s.log ? Math.log10(s.min) : s.min;
        slider.max = s.log ? Math.log10(s.max) : s.max;
        slider.step = s.log ? 0.01 : (s.max - s.min) / 200;
        const sliderLabel = document.createElement("label");
        sliderLabel.htmlFor = slider.id;
        sliderLabel.className = "visually-hidden";
        sliderLabel.textContent = `${label.textContent}, ${s.log ? "logarithmic " : ""}slider from ${s.min} to ${s.max}`;
        line.append(sliderLabel, slider);
        slider.addEventListener("input", () => {
          const x = Number(slider.value);
          const value = roundSlider(s.log ? 10 ** x : x);
          input.value = showNumber(value);
          onEdit(field.path, value);
        });
      }
      line.append(input);
      row.append(line);
      if (numeric) {
        const range = document.createElement("span");
        range.className = "range";
        range.id = id + "-range";
        range.textContent = rangeText(field);
        row.append(range);
      }
    }
    row.append(problem);
    container.append(row);

    const inFractions = byPath.get(field.parent)?.kind === "fractions";
    const changed = () => {
      let value;
      if (field.kind === "bool") value = input.checked;
      else if (!numeric) value = input.value;
      else if (field.optional && input.value.trim() === "") value = undefined; // blank override = built-in value
      else if (inFractions && input.value.trim() === "") value = 0;
      else value = parseTyped(input.value);
      if (slider && typeof value === "number") setSlider(field, slider, value);
      onEdit(field.path, value);
    };
    input.addEventListener(field.kind === "bool" || field.kind === "choice" ? "change" : "input", changed);
    controls.set(field.path, { input, slider, field });
  }

  // An object of the table shown on the page: a fieldset with its own problem
  // slot; an object whose fields are all objects (the per-species overrides)
  // holds one collapsible section per inner object.
  function buildObject(field, container, onEdit) {
    const inner = FIELDS.filter((f) => f.parent === field.path && f.page);
    const parent = byPath.get(field.parent);
    if (parent && parent.page && inner.every((f) => !isContainer(f)) && FIELDS.filter((f) => f.parent === parent.path).every(isContainer)) {
      const details = document.createElement("details");
      const summary = document.createElement("summary");
      summary.textContent = field.label;
      details.append(summary, problemSlot(field.path));
      for (const f of inner) buildField(f, details, onEdit);
      container.append(details);
      return;
    }
    const box = document.createElement("fieldset");
    box.className = inner.length && inner.every(isContainer) ? "subgroup overrides" : "subgroup compact";
    const legend = document.createElement("legend");
    legend.textContent = field.label;
    box.append(legend, problemSlot(field.path));
    for (const f of inner) build1(f, box, onEdit);
    container.append(box);
  }

  function build1(field, container, onEdit) {
    if (isContainer(field)) buildObject(field, container, onEdit);
    else buildField(field, container, onEdit);
  }

  /** Builds every group's controls into `form`; each edit calls `onEdit(path, value)`. */
  function build(form, onEdit) {
    for (const group of GROUPS) {
      const fs = document.createElement("fieldset");
      fs.className = "group";
      fs.id = "group-" + group.id;
      const legend = document.createElement("legend");
      legend.textContent = group.title;
      fs.append(legend);
      if (group.note) {
        const note = document.createElement("p");
        note.className = "note";
        note.textContent = group.note;
        fs.append(note);
      }
      for (const p of group.slots) fs.append(problemSlot(p));
      // The group's fields whose parent object is not itself shown (those are built inside it).
      for (const field of FIELDS) {
        if (field.page !== group.id) continue;
        const parent = byPath.get(field.parent);
        if (parent && parent.page) continue;
        build1(field, fs, onEdit);
      }
      form.append(fs);
    }
    // Problem slots for objects whose fields are all shown under other paths.
    for (const path of ["disk.opacity", "disk.vertical_temperature", "disk", "star.abundances", "(file)", "(model)"]) {
      if (!document.getElementById(pathId(path) + "-problem")) {
        const anchor = path === "disk.opacity" ? controls.get("disk.opacity.kind").input.closest(".field")
          : path === "disk.vertical_temperature" ? controls.get("disk.vertical_temperature.kind").input.closest(".field")
          : path.startsWith("disk") ? $("group-disk").querySelector("legend")
          : path.startsWith("star") ? $("group-star").querySelector("legend") : null;
        if (anchor) anchor.after(problemSlot(path));
      }
    }
  }

  // Blank override fields show the built-in value (for the energy, that of the chosen binding-energy set).
  function refreshPlaceholders(disk) {
    const set = getPath(disk, "ices.binding_energies");
    for (const info of core.speciesInfo.species) {
      for (const c of controls.values()) {
        if (!c.field.optional || c.field.parent !== `ices.species_overrides.${info.species}`) continue;
        const v = info[c.field.key];
        if (v == null) continue;
        c.input.placeholder = String(typeof v === "object" ? v[set] ?? Object.values(v)[0] : v);
      }
    }
  }

  /** Shows `disk` in the controls (after undo, a demo, a file, the address). */
  function fill(disk) {
    for (const [path, { input, slider, field }] of controls) {
      const v = getPath(disk, path);
      if (field.kind === "bool") input.checked = Boolean(v);
      else if (field.kind === "choice") input.value = v == null ? input.options[0].value : v;
      else input.value = showNumber(v);
      if (slider && typeof v === "number") setSlider(field, slider, v);
    }
    refreshPlaceholders(disk);
  }

  // The slot of a problem: the field's own, else that of the nearest enclosing object.
  function findSlot(path) {
    let p = path;
    while (p) {
      const el = document.getElementById(pathId(p) + "-problem");
      if (el) return el;
      const i = p.lastIndexOf(".");
      if (i < 0) break;
      p = p.slice(0, i);
    }
    return null;
  }

  return {
    SPECIES,
    build,
    fill,
    refreshPlaceholders,
    findSlot,
    /** The control of a field: `{input, slider, field}`, or undefined. */
    get: (path) => controls.get(path),
    /** The table's entry for a path, or undefined. */
    field: (path) => byPath.get(path),
  };
})(Util, Core);
