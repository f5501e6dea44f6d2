// One state object for the page: the parameter spec tables, the user's values, the last case the
// solver accepted, and dirty flags consumed once per frame.
//
// Control names are case key paths (`flow.speed`, `foils.1.phase`). The gap and vertical offset of
// foil i >= 1 are shown in chords of foil i-1 but set the case keys foils.i.x and foils.i.y (m);
// they are stored as the user typed them, so changing the fore foil's chord or mean pitch moves
// the hind foil and keeps the gap the user chose.

/** Flow and motion shared by all foils. `min`/`max` are the slider's span; allowed ranges come
 * from the crate (caseLimits()). */
export const FLOW_SPEC = [
  { key: "flow.speed", label: "Flow speed U", unit: "m/s", min: 0.05, max: 3, step: 0.01 },
  { key: "flow.water", label: "Water", kind: "select", options: [["fresh", "fresh water"], ["sea", "sea water"]] },
  { key: "flow.temperature", label: "Water temperature", unit: "°C", min: 0, max: 40, step: 0.5 },
  { key: "frequency", label: "Frequency f", unit: "Hz", min: 0, max: 5, step: 0.05, note: "0 = impulsive start from rest" },
];

/** Per-foil settings; `field` is the key below foils.i. */
export const FOIL_SPEC = [
  { field: "chord", label: "Chord c", unit: "m", min: 0.02, max: 0.5, step: 0.005 },
  { field: "thickness", label: "Thickness t/c", unit: "of c", min: 0.01, max: 0.3, step: 0.01 },
  { field: "span", label: "Span s", unit: "m", min: 0.05, max: 2, step: 0.01 },
  { field: "heave", label: "Heave amplitude h₀", unit: "m", min: 0, max: 0.3, step: 0.005 },
  { field: "pitch", label: "Pitch amplitude θ₀", unit: "deg", min: 0, max: 60, step: 0.5 },
  { field: "pitch_mean", label: "Pitch mean θ̄", unit: "deg", min: -20, max: 20, step: 0.5 },
  { field: "pitch_lead", label: "Pitch lead ψ", unit: "deg", min: -180, max: 180, step: 1, note: "90 = feathering" },
  { field: "pivot", label: "Pivot x_p/c", unit: "of c", min: 0, max: 1, step: 0.01, note: "from the leading edge" },
  { field: "phase", label: "Phase lag φ", unit: "deg", min: 0, max: 360, step: 1, hindOnly: true, note: "behind foil 0" },
  { field: "x", label: "Gap", unit: "c fore", min: 0.1, max: 8, step: 0.05, hindOnly: true, kind: "gap", note: "fore TE to this LE" },
  { field: "y", label: "Vertical offset", unit: "c fore", min: -3, max: 3, step: 0.05, hindOnly: true, kind: "offset", note: "LE above the fore LE" },
];

/** Numerical settings. */
export const NUMERICS_SPEC = [
  { key: "numerics.panels", label: "Panels per foil", unit: "", min: 20, max: 200, step: 2, integer: true },
  { key: "numerics.steps_per_cycle", label: "Steps per cycle", unit: "", min: 20, max: 400, step: 10, integer: true },
  { key: "numerics.cycles", label: "Cycles", unit: "", min: 2, max: 40, step: 1, integer: true },
  { key: "numerics.core_size", label: "Vortex core", unit: "of c", min: 0.005, max: 0.5, step: 0.005 },
  { key: "numerics.max_particles", label: "Particle cap", unit: "", min: 200, max: 20000, step: 100, integer: true },
  { key: "numerics.ramp_cycles", label: "Smooth start", unit: "cycles", min: 0, max: 10, step: 0.5 },
  { key: "numerics.wake_merge", label: "Far-wake merging", unit: "of distance", min: 0, max: 0.5, step: 0.01 },
  { key: "numerics.far_wake_refresh", label: "Far-wake refresh", unit: "steps", min: 1, max: 8, step: 1, integer: true },
];

/** Default numerics (the crate's Numerics::default), filled in where a case omits them. */
const NUMERICS_DEFAULT = { panels: 80, steps_per_cycle: 100, cycles: 8, core_size: 0.05, max_particles: 4000, ramp_cycles: 1, wake_merge: 0.1, far_wake_refresh: 8 };

export function getPath(obj, key) {
  return key.split(".").reduce((o, k) => (o == null ? undefined : o[k]), obj);
}

export function setPath(obj, key, value) {
  const parts = key.split(".");
  let o = obj;
  for (let i = 0; i < parts.length - 1; i++) o = o[parts[i]];
  o[parts[parts.length - 1]] = value;
}

/** m. Trailing-edge x of a foil at its mean pose (leading edge at x, chord turned by the mean pitch,
 * nose-up positive, as in crate/src/kinematics.rs). */
function trailingEdgeX(foil) {
  return foil.x + foil.chord * Math.cos((foil.pitch_mean * Math.PI) / 180);
}

export class PageState {
  constructor() {
    this.accepted = null; // the last case the solver accepted
    this.values = null; // the user's case, possibly not accepted yet
    this.gaps = []; // per foil i >= 1: gap in chords of foil i-1 (user value)
    this.offsets = []; // per foil i >= 1: vertical offset in chords of foil i-1 (user value)
    this.dirty = { controls: true, redraw: true, readouts: true };
    this.running = true;
    this.speed = 1;
  }

  /** Loads a complete case (a preset or an imported file). Foil positions stay exactly as
   * written until the user moves a foil or changes what its gap is measured from. */
  load(caseObj) {
    const c = structuredClone(caseObj);
    c.numerics = { ...NUMERICS_DEFAULT, ...(c.numerics || {}) };
    this.values = c;
    this.gaps = [];
    this.offsets = [];
    this.dirty.controls = true;
  }

  /** Gap of foil i in chords of foil i-1: the user's value, or the one its x gives. */
  gap(i) {
    if (this.gaps[i] !== undefined) return this.gaps[i];
    const fore = this.values.foils[i - 1];
    return round((this.values.foils[i].x - trailingEdgeX(fore)) / fore.chord);
  }

  /** Vertical offset of foil i in chords of foil i-1: the user's value, or the one its y gives. */
  offset(i) {
    if (this.offsets[i] !== undefined) return this.offsets[i];
    const fore = this.values.foils[i - 1];
    return round((this.values.foils[i].y - fore.y) / fore.chord);
  }

  /** The user's value of a control, in the control's unit. */
  get(key) {
    const m = /^foils\.(\d+)\.(x|y)$/.exec(key);
    if (m && Number(m[1]) >= 1) return m[2] === "x" ? this.gap(Number(m[1])) : this.offset(Number(m[1]));
    return getPath(this.values, key);
  }

  /** Sets a control's value (in its own unit). */
  set(key, value) {
    const m = /^foils\.(\d+)\.(x|y)$/.exec(key);
    if (m && Number(m[1]) >= 1) {
      (m[2] === "x" ? this.gaps : this.offsets)[Number(m[1])] = value;
      return;
    }
    // The gap and offset of the next foil are measured from this one: keep them as they are.
    const f = /^foils\.(\d+)\.(chord|pitch_mean)$/.exec(key);
    const next = f ? Number(f[1]) + 1 : -1;
    if (next >= 1 && next < this.values.foils.length) {
      this.gaps[next] = this.gap(next);
      this.offsets[next] = this.offset(next);
    }
    setPath(this.values, key, value);
  }

  /** The case to run: the user's values, with the foils the user moved placed by their gap and
   * offset (in order, so a moved foil carries the ones behind it). */
  candidate() {
    const c = structuredClone(this.values);
    let moved = false;
    for (let i = 1; i < c.foils.length; i++) {
      const fore = c.foils[i - 1];
      if (moved || this.gaps[i] !== undefined) c.foils[i].x = trailingEdgeX(fore) + this.gap(i) * fore.chord;
      if (moved || this.offsets[i] !== undefined) c.foils[i].y = fore.y + this.offset(i) * fore.chord;
      moved = moved || this.gaps[i] !== undefined || this.offsets[i] !== undefined;
    }
    return c;
  }

  /** Adds a hind foil with the last foil's section and motion, 2 chords behind, 90 deg later. */
  addFoil() {
    const last = this.values.foils[this.values.foils.length - 1];
    const foil = { ...last, phase: (last.phase + 90) % 360 };
    this.values.foils.push(foil);
    const i = this.values.foils.length - 1;
    this.gaps[i] = 2;
    this.offsets[i] = 0;
    this.dirty.controls = true;
  }

  removeFoil() {
    if (this.values.foils.length <= 1) return;
    const i = this.values.foils.length - 1;
    this.values.foils.pop();
    this.gaps.length = i;
    this.offsets.length = i;
    this.dirty.controls = true;
  }

  /** The hind foil (foil 1) alone with the same motion: the single-foil reference case. Its
   * phase is set to 0 (foil 0 is the phase reference; alone, a phase is only a time shift). */
  static singleFoilCase(caseObj, index = 1) {
    const c = structuredClone(caseObj);
    const foil = { ...c.foils[index], x: 0, y: 0, phase: 0 };
    c.foils = [foil];
    return c;
  }
}

function round(v) {
  return Number(v.toFixed(6));
}
