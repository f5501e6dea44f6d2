// Shareable links: the whole case in the page address after `#` (`#v1;U=0.5;foils=2;...`),
// written and read by the crate's link codec (crate/src/link.rs, reached through sim.js), the
// same code as `finwake link`. Opening a link applies every field it can and lists, in a
// notice, each field it ignored or reset and why. Link text only ever reaches the page as
// textContent; nothing from the address is inserted as HTML or run.
import { pageCodec } from "../sim.js";

export class ShareLink {
  /**
   * @param {{state: import("../state.js").PageState, files: import("./files.js").CaseFiles,
   *          notices: import("./notices.js").Notices, root: HTMLElement}} opts
   *   root: the "Share and export" section the controls go into.
   */
  constructor({ state, files, notices, root }) {
    this.state = state;
    this.files = files;
    this.notices = notices;
    this.opened = null; // the fragment the page opened or wrote last
    // Further parts after the case (`&map=...`, owned by ui/map.js); "" for none.
    this.extraFragment = () => "";

    const row = document.createElement("div");
    row.className = "share-row";
    const label = document.createElement("span");
    label.className = "share-label";
    label.textContent = "Link";
    this.copyButton = document.createElement("button");
    this.copyButton.type = "button";
    this.copyButton.id = "share-copy";
    this.copyButton.textContent = "Copy link";
    this.copyButton.title = "A link that opens exactly this case, to send to a colleague";
    this.field = document.createElement("input");
    this.field.type = "text";
    this.field.id = "share-link";
    this.field.readOnly = true;
    this.field.placeholder = "the link of this case appears here";
    this.field.setAttribute("aria-label", "Link of the current case");
    this.field.addEventListener("focus", () => this.field.select());
    this.status = document.createElement("span");
    this.status.className = "share-status";
    this.status.id = "share-status";
    this.status.setAttribute("role", "status");
    row.append(label, this.copyButton, this.field, this.status);
    root.append(row);

    this.copyButton.addEventListener("click", () => this.copy());
    window.addEventListener("hashchange", () => this.openFromAddress());
  }

  /** The case in the page's address, or null if it has none (or none that opens). Call once,
   * before the first case loads; it shows a notice for anything it could not use. */
  async linkedCase() {
    if (casePart(location.hash).length <= 1) return null;
    return this.decode(await pageCodec(), location.hash);
  }

  /** Decodes `text` and shows what was ignored; null if it is not a link at all. */
  decode(codec, text) {
    this.opened = casePart(text).replace(/^#/, "");
    let d;
    try {
      d = codec.linkToCase(casePart(text));
    } catch (e) {
      if (e?.name !== "LinkError") throw e;
      this.notices.show("link", {
        kind: "warn",
        title: `The link in the address could not be opened: ${e.message}`,
        lines: ["The page shows an example case instead."],
      });
      document.body.dataset.linkNotices = "error";
      return null;
    }
    const count = d.notices.length + d.moreNotices;
    document.body.dataset.linkNotices = String(count);
    if (count > 0) {
      const lines = [...d.messages];
      if (d.moreNotices > 0) lines.push(`… and ${d.moreNotices} more.`);
      this.notices.show("link", {
        kind: "warn",
        title: `The link opened, but ${count === 1 ? "one field was" : `${count} fields were`} not used: every other field of the link is applied, and ${count === 1 ? "this one is" : "these are"} ignored or at ${count === 1 ? "its" : "their"} default:`,
        lines,
      });
    } else {
      this.notices.clear("link");
    }
    return JSON.parse(d.caseJson);
  }

  /** A link pasted into the address bar of the open page (the page does not reload). */
  async openFromAddress() {
    const hash = casePart(location.hash);
    if (hash.length <= 1 || hash.slice(1) === this.opened) return;
    const c = this.decode(await pageCodec(), location.hash);
    if (c) this.files.replaceCase(c, "the case from the link");
  }

  /** Writes the current case's link into the field, the address bar and the clipboard. */
  async copy() {
    const codec = await pageCodec();
    let fragment;
    try {
      fragment = codec.caseToLink(JSON.stringify(this.state.candidate()));
      this.opened = fragment;
      const extra = this.extraFragment();
      if (extra) fragment += `&${extra}`;
    } catch (e) {
      if (e?.name !== "CaseError" && e?.name !== "LinkError") throw e;
      this.field.value = "";
      this.status.textContent = `No link: the case has an error to fix first: ${e.message}`;
      return;
    }
    const url = `${location.href.split("#")[0]}#${fragment}`;
    this.field.value = url;
    history.replaceState(null, "", `#${fragment}`);
    try {
      await navigator.clipboard.writeText(url);
      this.status.textContent = "Copied to the clipboard.";
    } catch {
      this.status.textContent = "The browser did not let the page use the clipboard: select the link and copy it.";
      this.field.focus();
    }
  }
}

/** The case part of a fragment: everything before a `&map=` part (ui/map.js reads that one). */
function casePart(text) {
  const m = /(^#?|&)map=/.exec(text);
  return m ? text.slice(0, m.index) : text;
}
