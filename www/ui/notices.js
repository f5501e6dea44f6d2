// Notices above the page: what a link, a case file or an undoable change did, in plain words.
// Nothing shown here is ever read as HTML: every string (link fields, file names, messages of
// the crate) goes into the page with textContent only.

export class Notices {
  /** @param {HTMLElement} root  the container (hidden while it holds no notice) */
  constructor(root) {
    this.root = root;
  }

  /**
   * Shows the notice `id`, replacing an earlier one of the same id.
   * @param {string} id  a fixed name of ours ("link", "file", "undo", ...), never user text
   * @param {{title: string, lines?: string[], kind?: "info"|"warn", actions?: {label: string, run: () => void}[]}} what
   */
  show(id, { title, lines = [], kind = "info", actions = [] }) {
    this.clear(id);
    const box = document.createElement("section");
    box.className = `notice notice-${kind}`;
    box.dataset.notice = id;
    box.setAttribute("role", kind === "warn" ? "alert" : "status");
    const head = document.createElement("p");
    head.className = "notice-title";
    head.textContent = title;
    box.append(head);
    if (lines.length > 0) {
      const list = document.createElement("ul");
      for (const line of lines) {
        const item = document.createElement("li");
        item.textContent = line;
        list.append(item);
      }
      box.append(list);
    }
    const bar = document.createElement("div");
    bar.className = "notice-actions";
    for (const a of actions) {
      const b = button(a.label);
      b.dataset.action = a.label.toLowerCase();
      b.addEventListener("click", () => { this.clear(id); a.run(); });
      bar.append(b);
    }
    const close = button("Dismiss");
    close.dataset.action = "dismiss";
    close.addEventListener("click", () => this.clear(id));
    bar.append(close);
    box.append(bar);
    this.root.append(box);
    this.root.hidden = false;
    return box;
  }

  clear(id) {
    for (const box of this.root.querySelectorAll(`[data-notice="${CSS.escape(id)}"]`)) box.remove();
    this.root.hidden = this.root.children.length === 0;
  }
}

function button(text) {
  const b = document.createElement("button");
  b.type = "button";
  b.textContent = text;
  return b;
}
