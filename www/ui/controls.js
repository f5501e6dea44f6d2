// The case controls, built from the spec tables in state.js. Each has a label, a slider, a
// numeric field (name = the case key path), its unit, its allowed range and an error line.
// Keyboard: Tab reaches every numeric field and select; ArrowUp/ArrowDown change a field by one
// step, PageUp/PageDown by ten. Typing changes the value as you type; text that is not a number
// stays in the field, marked, and changes nothing.
import { FLOW_SPEC, FOIL_SPEC, NUMERICS_SPEC } from "../state.js";

const FOIL_NAMES = (i, n) => (n === 1 ? "Foil 0" : i === 0 ? "Foil 0 (fore)" : i === 1 && n === 2 ? "Foil 1 (hind)" : `Foil ${i}`);

export class Controls {
  /**
   * @param {HTMLElement} root
   * @param {import("../state.js").PageState} state
   * @param {(key: string) => void} onChange  a control's value changed in the state
   */
  constructor(root, state, onChange) {
    this.root = root;
    this.state = state;
    this.onChange = onChange;
    this.limits = {};
    this.fields = new Map(); // key -> { input, slider, err, spec, beside }
  }

  setLimits(limits) { this.limits = limits || {}; }

  /** Rebuilds every control from the state (after a preset, an import, or a foil added). */
  build() {
    const c = this.state.values;
    this.root.replaceChildren();
    this.fields.clear();
    this.root.append(this.group("Flow and motion", FLOW_SPEC.map((s) => ({ ...s })), "flow"));
    c.foils.forEach((foil, i) => {
      const specs = FOIL_SPEC.filter((s) => !(s.hindOnly && i === 0)).map((s) => ({ ...s, key: `foils.${i}.${s.field}`, foil: i }));
      const fs = this.group(FOIL_NAMES(i, c.foils.length), specs, `foil-${i}`, i);
      if (i === 0 && c.foils.length > 1) fs.append(note("Foil 0 is the phase reference (phase 0)."));
      const d = document.createElement("div");
      d.className = "derived";
      d.id = `derived-${i}`;
      fs.append(d);
      this.root.append(fs);
    });
    this.root.append(this.group("Numerics", NUMERICS_SPEC.map((s) => ({ ...s })), "numerics"));
    const err = document.createElement("p");
    err.className = "case-error";
    err.id = "case-error";
    err.setAttribute("role", "status");
    this.root.append(err);
    this.refreshBeside();
  }

  group(title, specs, id, foilIndex) {
    const fs = document.createElement("fieldset");
    fs.id = `group-${id}`;
    const lg = document.createElement("legend");
    if (foilIndex !== undefined) {
      const dot = document.createElement("span");
      dot.className = `dot f${Math.min(foilIndex, 1)}`;
      lg.append(dot);
    }
    lg.append(title);
    fs.append(lg);
    for (const spec of specs) fs.append(spec.kind === "select" ? this.select(spec) : this.numeric(spec));
    return fs;
  }

  select(spec) {
    const row = document.createElement("div");
    row.className = "ctl";
    const id = `ctl-${spec.key}`;
    const label = document.createElement("label");
    label.htmlFor = id;
    label.textContent = spec.label;
    const sel = document.createElement("select");
    sel.id = id;
    sel.name = spec.key;
    for (const [value, text] of spec.options) {
      const o = document.createElement("option");
      o.value = value;
      o.textContent = text;
      sel.append(o);
    }
    sel.value = this.state.get(spec.key);
    sel.addEventListener("change", () => { this.state.set(spec.key, sel.value); this.onChange(spec.key); });
    row.append(label, sel);
    this.fields.set(spec.key, { input: sel, spec });
    return row;
  }

  numeric(spec) {
    const row = document.createElement("div");
    row.className = "ctl";
    const id = `ctl-${spec.key}`;
    const label = document.createElement("label");
    label.htmlFor = id;
    label.textContent = spec.label;
    const slider = document.createElement("input");
    slider.type = "range";
    slider.min = String(spec.min);
    slider.max = String(spec.max);
    slider.step = String(spec.step);
    slider.tabIndex = -1; // the numeric field is the keyboard control
    slider.setAttribute("aria-label", `${spec.label} slider`);
    const input = document.createElement("input");
    input.type = "text";
    input.inputMode = "decimal";
    input.className = "num";
    input.id = id;
    input.name = spec.key;
    input.autocomplete = "off";
    input.spellcheck = false;
    input.setAttribute("role", "spinbutton");
    const unit = document.createElement("span");
    unit.className = "unit";
    unit.textContent = spec.unit;
    const allowed = document.createElement("span");
    allowed.className = "allowed";
    const beside = document.createElement("span");
    beside.className = "beside";
    const err = document.createElement("span");
    err.className = "err";
    err.id = `err-${spec.key}`;
    input.setAttribute("aria-describedby", err.id);
    row.append(label, slider, input, unit, allowed);
    if (spec.note || spec.kind) row.append(beside);
    row.append(err);
    const field = { input, slider, err, spec, beside, allowed };
    this.fields.set(spec.key, field);
    this.show(field, this.state.get(spec.key));
    this.describeAllowed(field);

    slider.addEventListener("input", () => {
      const v = Number(slider.value);
      input.value = formatValue(v, spec);
      this.accept(field, v);
    });
    input.addEventListener("input", () => this.typed(field));
    input.addEventListener("keydown", (e) => {
      const steps = { ArrowUp: 1, ArrowDown: -1, PageUp: 10, PageDown: -10 }[e.key];
      if (!steps) return;
      e.preventDefault();
      const current = parseNumber(input.value);
      const base = Number.isFinite(current) ? current : Number(this.state.get(spec.key));
      let v = snap(base + steps * spec.step, spec.step);
      if (spec.integer) v = Math.round(v);
      const [lo, hi] = this.allowedRange(spec);
      v = Math.min(hi, Math.max(lo, v));
      input.value = formatValue(v, spec);
      this.accept(field, v);
    });
    return row;
  }

  typed(field) {
    const text = field.input.value;
    const v = parseNumber(text);
    const [lo, hi] = this.allowedRange(field.spec);
    if (!Number.isFinite(v)) {
      this.mark(field, `${field.spec.key} = "${text}": enter a number from ${fmtRange(lo, hi, field.spec.unit)}.`);
      return;
    }
    if (field.spec.integer && !Number.isInteger(v)) {
      this.mark(field, `${field.spec.key} = ${text}: enter a whole number from ${fmtRange(lo, hi, field.spec.unit)}.`);
      return;
    }
    this.accept(field, v, true);
  }

  /** A parsed value: into the state, then the run restarts (the solver checks ranges). */
  accept(field, v, fromTyping = false) {
    this.mark(field, "");
    field.slider.value = String(v);
    field.input.setAttribute("aria-valuenow", String(v));
    this.state.set(field.spec.key, v);
    if (!fromTyping) field.input.value = formatValue(v, field.spec);
    this.refreshBeside();
    this.onChange(field.spec.key);
  }

  mark(field, message) {
    field.err.textContent = message;
    field.input.setAttribute("aria-invalid", message ? "true" : "false");
  }

  /** Shows an error from the solver on the control it names (or below all controls). */
  showCaseError(error) {
    for (const f of this.fields.values()) if (f.err && f.err.dataset.fromSolver) { f.err.textContent = ""; delete f.err.dataset.fromSolver; f.input.setAttribute("aria-invalid", "false"); }
    const box = this.root.querySelector("#case-error");
    if (!error) { if (box) box.textContent = ""; return; }
    const text = `${error.path} = ${error.value}: allowed ${error.allowed}; ${error.fix}`;
    const field = this.fields.get(error.path);
    if (field && field.err) {
      field.err.textContent = text;
      field.err.dataset.fromSolver = "1";
      field.input.setAttribute("aria-invalid", "true");
      if (box) box.textContent = "";
    } else if (box) {
      box.textContent = `The solver did not accept this case: ${text}`;
    }
  }

  show(field, v) {
    if (v === undefined || v === null) return;
    field.input.value = formatValue(v, field.spec);
    field.slider.value = String(v);
    const [lo, hi] = this.allowedRange(field.spec);
    field.input.setAttribute("aria-valuemin", String(lo));
    field.input.setAttribute("aria-valuemax", String(hi));
    field.input.setAttribute("aria-valuenow", String(v));
  }

  /** The crate's allowed range for a control, in the control's unit. */
  allowedRange(spec) {
    const L = this.limits;
    const c = this.state.values;
    if (spec.kind === "gap" || spec.kind === "offset") {
      const fore = c.foils[spec.foil - 1];
      const mine = c.foils[spec.foil];
      const r = L["foils.*.x_chords"] || [-1000, 1000];
      // |x| and |y| of a leading edge are limited to 1000 of its own chords.
      return [r[0] * mine.chord / fore.chord, r[1] * mine.chord / fore.chord];
    }
    if (spec.field === "heave") {
      const r = L["foils.*.heave_chords"] || [0, 10];
      return [r[0] * c.foils[spec.foil].chord, r[1] * c.foils[spec.foil].chord];
    }
    const key = spec.foil !== undefined ? `foils.*.${spec.field}` : spec.key;
    return L[key] || [spec.min, spec.max];
  }

  describeAllowed(field) {
    if (field.spec.kind === "gap" || field.spec.kind === "offset") {
      field.allowed.textContent = "allowed: any, as long as the foils never touch (the solver checks)";
      return;
    }
    const [lo, hi] = this.allowedRange(field.spec);
    field.allowed.textContent = `allowed ${fmtRange(lo, hi, field.spec.unit)}`;
  }

  /** Texts beside controls that depend on other values (LE-to-LE distance, metres). */
  refreshBeside() {
    const cand = this.state.candidate();
    for (const f of this.fields.values()) {
      if (!f.beside) continue;
      if (f.allowed) this.describeAllowed(f);
      const s = f.spec;
      if (s.kind === "gap") {
        const i = s.foil;
        const fore = cand.foils[i - 1];
        const le = cand.foils[i].x - fore.x;
        f.beside.textContent = `${s.note}; LE to LE ${fmt(le / fore.chord)} c = ${fmt(le)} m`;
      } else if (s.kind === "offset") {
        const i = s.foil;
        f.beside.textContent = `${s.note}: ${fmt(cand.foils[i].y - cand.foils[i - 1].y)} m`;
      } else if (s.note) {
        f.beside.textContent = s.note;
      }
    }
  }

  /** Derived numbers per foil (from the crate): St, k, Re, max angle of attack, wake wavelength. */
  showDerived(list) {
    const n = this.state.values.foils.length;
    for (let i = 0; i < n; i++) {
      const box = this.root.querySelector(`#derived-${i}`);
      if (!box) continue;
      const d = list?.[i];
      const items = [
        ["St", d?.strouhal, "strouhal", "Strouhal number f A / U, A = peak-to-peak trailing-edge excursion"],
        ["St_h", d?.strouhal_heave, "strouhal_heave", "Heave-based Strouhal number 2 f h₀ / U"],
        ["k", d?.reduced_frequency, "reduced_frequency", "Reduced frequency π f c / U (semichord based)"],
        ["Re", d?.reynolds, "reynolds", "Reynolds number U c / ν"],
        ["α_max", d?.max_angle_of_attack, "max_angle_of_attack", "Largest effective angle of attack at the pivot, deg"],
        ["λ/c", d?.wake_wavelength_chords, "wake_wavelength_chords", "Wake wavelength U / f in chords"],
      ];
      box.replaceChildren(...items.map(([label, v, key, title]) => {
        const s = document.createElement("span");
        s.title = title;
        s.dataset.derived = `foils.${i}.${key}`;
        const b = document.createElement("b");
        b.textContent = `${label} `;
        const unit = key === "max_angle_of_attack" ? "°" : "";
        s.append(b, v === null || v === undefined ? "—" : key === "reynolds" ? formatRe(v) : `${fmt(v)}${unit}`);
        return s;
      }));
    }
  }
}

function note(text) {
  const p = document.createElement("p");
  p.className = "note";
  p.textContent = text;
  return p;
}

/** Parses a number the way a person types it: spaces allowed around, "." as decimal mark. */
export function parseNumber(text) {
  const t = String(text).trim();
  if (t === "" || !/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(t)) return NaN;
  return Number(t);
}

function snap(v, step) {
  const decimals = Math.max(0, -Math.floor(Math.log10(step) + 1e-9) + 1);
  return Number(v.toFixed(decimals));
}

function formatValue(v, spec) {
  if (spec.integer) return String(Math.round(v));
  return String(Number(Number(v).toPrecision(10)));
}

function fmt(v) {
  if (!Number.isFinite(v)) return "—";
  return String(Number(v.toPrecision(3)));
}

function formatRe(v) {
  if (!Number.isFinite(v)) return "—";
  const p = Math.floor(Math.log10(Math.abs(v)));
  return `${(v / 10 ** p).toFixed(2)}×10${superscript(p)}`;
}

function superscript(n) {
  const map = { "-": "⁻", 0: "⁰", 1: "¹", 2: "²", 3: "³", 4: "⁴", 5: "⁵", 6: "⁶", 7: "⁷", 8: "⁸", 9: "⁹" };
  return String(n).split("").map((c) => map[c]).join("");
}

function fmtRange(lo, hi, unit) {
  return `${fmt(lo)} to ${fmt(hi)}${unit ? ` ${unit}` : ""}`;
}
