// Cycle-mean readouts per foil and for the group, and the hind foil against a single foil with
// the same motion. Each value cell has data-quantity = its summary key path and data-value = the
// full-precision number; the text shows 3 significant figures.

const ROWS = [
  { key: "thrust", label: "Thrust T", unit: "N", total: true },
  { key: "thrust_coefficient", label: "Thrust coefficient C_T", unit: "", total: true },
  { key: "power", label: "Input power P", unit: "W", total: true },
  { key: "efficiency", label: "Propulsive efficiency η", unit: "", total: true },
  { key: "max_angle_of_attack", label: "Max angle of attack α_max", unit: "deg", total: false },
];

/** 3 significant figures, as the readouts show them (the browser tests use the same rule). */
export function sig3(v) {
  if (v === null || v === undefined) return "—";
  if (!Number.isFinite(v)) return String(v);
  // toPrecision keeps trailing zeros (0.730); from 1000 up it would switch to exponent form.
  return Math.abs(v) >= 1000 ? String(Number(v.toPrecision(3))) : v.toPrecision(3);
}

export class Readouts {
  constructor(table, averagedEl, relativeNote) {
    this.table = table;
    this.averagedEl = averagedEl;
    this.relativeNote = relativeNote;
    this.cells = new Map();
  }

  /** Builds the table for `n` foils. */
  build(n) {
    this.cells.clear();
    const thead = document.createElement("thead");
    const hr = document.createElement("tr");
    hr.append(th("Cycle mean"));
    for (let i = 0; i < n; i++) hr.append(th(n === 1 ? "Foil 0" : i === 0 ? "Foil 0 (fore)" : i === 1 && n === 2 ? "Foil 1 (hind)" : `Foil ${i}`, `f${Math.min(i, 1)}`));
    if (n > 1) hr.append(th(n === 2 ? "Pair" : "All foils", "tot"));
    thead.append(hr);
    const tbody = document.createElement("tbody");
    for (const row of ROWS) {
      const tr = document.createElement("tr");
      tr.append(labelCell(row.label, row.unit));
      for (let i = 0; i < n; i++) tr.append(this.cell(`foils.${i}.${row.key}`));
      if (n > 1) tr.append(row.total ? this.cell(`total.${row.key}`) : document.createElement("td"));
      tbody.append(tr);
    }
    if (n >= 2) {
      const rel = [
        ["Hind foil thrust ÷ single foil", "relative.thrust_ratio", ""],
        ["Hind foil efficiency ÷ single foil", "relative.efficiency_ratio", ""],
        ["Single foil thrust T", "single.thrust", "N"],
        ["Single foil efficiency η", "single.efficiency", ""],
      ];
      for (const [label, key, unit] of rel) {
        const tr = document.createElement("tr");
        tr.className = "relative";
        tr.append(labelCell(label, unit));
        const td = this.cell(key);
        td.colSpan = n + 1;
        tr.append(td);
        tbody.append(tr);
      }
    }
    this.table.replaceChildren(thead, tbody);
    this.clear();
  }

  cell(key) {
    const td = document.createElement("td");
    td.dataset.quantity = key;
    td.textContent = "—";
    this.cells.set(key, td);
    return td;
  }

  clear() {
    for (const td of this.cells.values()) { td.textContent = "—"; delete td.dataset.value; td.title = ""; }
    this.averagedEl.textContent = "no whole cycle yet";
    this.relativeNote.textContent = "";
  }

  set(key, v) {
    const td = this.cells.get(key);
    if (!td) return;
    td.textContent = sig3(v);
    if (v === null || v === undefined) { delete td.dataset.value; td.title = "undefined: needs positive thrust and power"; } else { td.dataset.value = String(v); td.title = String(v); }
  }

  /** Shows a summary (the keys of `finwake simulate --json`). */
  show(summary, totalCycles) {
    if (!summary) return;
    summary.foils.forEach((f, i) => { for (const r of ROWS) this.set(`foils.${i}.${r.key}`, f[r.key]); });
    for (const r of ROWS) if (r.total) this.set(`total.${r.key}`, summary.total[r.key]);
    const a = summary.cycles_averaged;
    if (a > 0) {
      const first = summary.first_cycle_averaged + 1;
      this.averagedEl.textContent = `Averaged over cycle${a > 1 ? "s" : ""} ${first}${a > 1 ? `–${first + a - 1}` : ""} of ${totalCycles} (earlier cycles are the start-up transient)${summary.converged ? "; the last two cycles agree within 1 %" : ""}.`;
    } else {
      this.averagedEl.textContent = totalCycles > 0 ? "No whole cycle after the start-up transient yet." : "Start from rest: values at the latest instant.";
    }
  }

  /** Hind foil against the single-foil reference summary of the same cycle count. */
  showRelative(hind, single, cycles) {
    if (!single || !hind) {
      for (const k of ["relative.thrust_ratio", "relative.efficiency_ratio", "single.thrust", "single.efficiency"]) this.set(k, null);
      this.relativeNote.textContent = hind ? "Single-foil reference: computing in the background…" : "";
      return;
    }
    this.set("single.thrust", single.thrust);
    this.set("single.efficiency", single.efficiency);
    this.set("relative.thrust_ratio", single.thrust > 0 ? hind.thrust / single.thrust : null);
    this.set("relative.efficiency_ratio", hind.efficiency !== null && single.efficiency !== null ? hind.efficiency / single.efficiency : null);
    this.relativeNote.textContent = `Single foil: the hind foil's section and motion alone in the same stream, run in the background to the same ${cycles} cycle${cycles === 1 ? "" : "s"}. A ratio is shown only where the single foil's value is positive.`;
  }
}

function th(text, dot) {
  const e = document.createElement("th");
  if (dot) { const d = document.createElement("span"); d.className = `dot ${dot}`; e.append(d); }
  e.append(text);
  return e;
}

function labelCell(label, unit) {
  const td = document.createElement("td");
  td.append(label);
  if (unit) { const u = document.createElement("span"); u.className = "unit"; u.textContent = ` (${unit})`; td.append(u); }
  return td;
}
