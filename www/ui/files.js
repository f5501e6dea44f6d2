// Case files: save the current case as JSON, open one with the file picker or by dropping it on
// the page, with the crate's own validation messages (the same text `finwake simulate` prints),
// and never lose unsaved edits silently: whatever replaces the case (a file, a link, a preset,
// removing a foil) offers Undo, and leaving the page with unsaved edits asks first.
import { pageCodec } from "../sim.js";

/** Largest case file read (bytes); the longest case file is a few kilobytes. */
const MAX_FILE_BYTES = 1 << 20;

export class CaseFiles {
  /**
   * @param {{state: import("../state.js").PageState, notices: import("./notices.js").Notices,
   *          afterLoad: () => void, saveButton: HTMLElement, fileInput: HTMLInputElement}} opts
   *   afterLoad rebuilds the controls and restarts the run after the state changed wholesale.
   */
  constructor({ state, notices, afterLoad, saveButton, fileInput }) {
    this.state = state;
    this.notices = notices;
    this.afterLoad = afterLoad;
    const tools = fileInput.closest(".case-file-tools") ?? fileInput.parentElement;
    const hint = document.createElement("span");
    hint.className = "drop-hint";
    hint.textContent = "or drop a case file anywhere on the page";
    this.status = document.createElement("span");
    this.status.className = "share-status";
    this.status.id = "case-file-status";
    this.status.setAttribute("role", "status");
    tools.append(hint, this.status);
    this.baseline = null; // the case as last loaded or saved (JSON text)
    saveButton.addEventListener("click", () => this.save());
    fileInput.addEventListener("change", () => {
      const file = fileInput.files?.[0];
      if (file) this.open(file).finally(() => { fileInput.value = ""; });
    });
    const hasFiles = (e) => Array.from(e.dataTransfer?.types ?? []).includes("Files");
    let depth = 0;
    document.addEventListener("dragenter", (e) => {
      if (!hasFiles(e)) return;
      depth += 1;
      document.body.classList.add("drop-case");
    });
    document.addEventListener("dragleave", (e) => {
      if (!hasFiles(e)) return;
      depth = Math.max(0, depth - 1);
      if (depth === 0) document.body.classList.remove("drop-case");
    });
    document.addEventListener("dragover", (e) => {
      if (!hasFiles(e)) return;
      e.preventDefault();
      e.dataTransfer.dropEffect = "copy";
    });
    document.addEventListener("drop", (e) => {
      if (!hasFiles(e)) return;
      e.preventDefault();
      depth = 0;
      document.body.classList.remove("drop-case");
      const file = e.dataTransfer.files?.[0];
      if (file) this.open(file);
    });
    window.addEventListener("beforeunload", (e) => {
      if (!this.dirty) return;
      e.preventDefault();
      e.returnValue = ""; // older browsers need a value to ask
    });
  }

  /** The case now counts as saved (just loaded, opened or saved). */
  markClean() {
    this.baseline = this.state.values ? JSON.stringify(this.state.candidate()) : null;
  }

  /** True if the case differs from the one last loaded, opened or saved. */
  get dirty() {
    return this.baseline !== null && this.state.values !== null && JSON.stringify(this.state.candidate()) !== this.baseline;
  }

  snapshot() {
    const s = this.state;
    return { values: structuredClone(s.values), gaps: [...s.gaps], offsets: [...s.offsets], baseline: this.baseline };
  }

  restore(snap) {
    const s = this.state;
    s.values = structuredClone(snap.values);
    s.gaps = [...snap.gaps];
    s.offsets = [...snap.offsets];
    s.dirty.controls = true;
    this.baseline = snap.baseline;
    this.afterLoad();
    this.notices.show("undo", { title: "Undone: your case is back as it was." });
  }

  /** Replaces the whole case (a file, a link, a preset); unsaved edits can be brought back. */
  replaceCase(caseObj, label) {
    const before = this.dirty ? this.snapshot() : null;
    this.state.load(caseObj);
    this.markClean();
    this.afterLoad();
    if (before) {
      this.notices.show("undo", {
        title: `Opened ${label}; it replaced your case with unsaved edits.`,
        actions: [{ label: "Undo", run: () => this.restore(before) }],
      });
    }
  }

  /** Runs `change` (which alters the case, e.g. removes a foil) with Undo offered afterwards. */
  change(label, change) {
    const before = this.snapshot();
    change();
    this.notices.show("undo", { title: label, actions: [{ label: "Undo", run: () => this.restore(before) }] });
  }

  /** Downloads the current case as a case file. */
  save() {
    const text = `${JSON.stringify(this.state.candidate(), null, 2)}\n`;
    download(new Blob([text], { type: "application/json" }), "finwake-case.json");
    this.markClean();
    this.say("Saved as finwake-case.json (your browser's download folder).");
  }

  /** Reads, checks and opens a case file; a bad file leaves the current case as it is. */
  async open(file) {
    const name = file.name || "the dropped file";
    const fail = (message) => {
      this.notices.show("file", { kind: "warn", title: `The case file was not opened: ${message}`, lines: ["Your current case is unchanged."] });
      document.body.dataset.fileError = message;
    };
    if (file.size > MAX_FILE_BYTES) {
      fail(`case file ${name}: cannot read it: it is ${file.size} bytes, more than the ${MAX_FILE_BYTES} bytes a case file can have; check that this is a finwake case file`);
      return;
    }
    let text;
    try {
      text = new TextDecoder("utf-8", { fatal: true }).decode(await file.arrayBuffer());
    } catch {
      // The words of the command line (std's io error for a file that is not UTF-8).
      fail(`case file ${name}: cannot read it: stream did not contain valid UTF-8; check the path and permissions`);
      return;
    }
    const codec = await pageCodec();
    let normalised;
    try {
      normalised = codec.normaliseCase(text);
    } catch (e) {
      if (e?.name !== "CaseError") throw e;
      // `finwake simulate FILE` prints `finwake: FILE: <this message>`.
      fail(`${name}: ${e.message}`);
      return;
    }
    delete document.body.dataset.fileError;
    this.notices.clear("file");
    this.replaceCase(JSON.parse(normalised), `the case file ${name}`);
    this.say(`Opened ${name}.`);
  }

  say(text) {
    this.status.textContent = text;
  }
}

/** Offers `blob` as a download named `name`. */
export function download(blob, name) {
  const a = document.createElement("a");
  a.href = URL.createObjectURL(blob);
  a.download = name;
  a.hidden = true;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(a.href), 10000);
}
