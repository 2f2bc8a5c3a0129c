// Stop picker: a text input with a list of suggestions, following the WAI-ARIA Authoring
// Practices "combobox with listbox popup" pattern (list autocomplete, manual selection):
// typing asks the engine for matches, Down/Up move through them (aria-activedescendant, focus
// stays in the input), Enter takes the highlighted one, Escape closes the list or, when it is
// closed, clears the input. A pointer click on a suggestion takes it too.

const DEBOUNCE_MS = 90;

export class StopCombobox {
  /**
   * @param {HTMLInputElement} input  the element with role=combobox
   * @param {HTMLElement} listbox     the element with role=listbox
   * @param {HTMLElement} hint        a polite live region announcing how many suggestions there are
   * @param {(text: string) => Promise<object[]>} search  resolves to StopMatch values
   */
  constructor(input, listbox, hint, search) {
    this.input = input;
    this.listbox = listbox;
    this.hint = hint;
    this.search = search;
    this.matches = [];
    this.active = -1;
    this.chosen = null; // { id, label }
    this.seq = 0;
    this.timer = 0;

    input.addEventListener('input', () => this.#onInput());
    input.addEventListener('keydown', (e) => this.#onKey(e));
    input.addEventListener('blur', () => setTimeout(() => this.close(), 120));
    input.addEventListener('focus', () => {
      if (!this.chosen && input.value.trim()) this.#onInput();
    });
    // Keep focus in the input while a suggestion is pressed.
    listbox.addEventListener('pointerdown', (e) => e.preventDefault());
    listbox.addEventListener('click', (e) => {
      const li = e.target.closest('[role="option"]');
      if (li) this.choose(Number(li.dataset.index));
    });
  }

  /** The chosen stop id, or null when the text has not been matched to a stop yet. */
  get stopId() {
    return this.chosen ? this.chosen.id : null;
  }

  get text() {
    return this.input.value.trim();
  }

  /** Sets a stop programmatically (from the address or a swap). */
  set(id, label) {
    this.chosen = id ? { id, label } : null;
    this.input.value = label || '';
    this.close();
  }

  close() {
    this.listbox.hidden = true;
    this.input.setAttribute('aria-expanded', 'false');
    this.input.removeAttribute('aria-activedescendant');
    this.active = -1;
  }

  #open() {
    if (!this.matches.length) return this.close();
    this.listbox.hidden = false;
    this.input.setAttribute('aria-expanded', 'true');
  }

  #onInput() {
    this.chosen = null;
    clearTimeout(this.timer);
    const text = this.text;
    if (!text) {
      this.matches = [];
      this.#render();
      this.close();
      this.hint.textContent = '';
      return;
    }
    this.timer = setTimeout(() => this.#lookup(text), DEBOUNCE_MS);
  }

  async #lookup(text) {
    const seq = ++this.seq;
    let matches = [];
    try {
      matches = (await this.search(text)) || [];
    } catch {
      matches = [];
    }
    if (seq !== this.seq || text !== this.text) return; // a newer keystroke won
    // A highlight made on the previous suggestions stays on the same stop if it is still
    // offered; otherwise nothing is highlighted (aria-activedescendant must never name an
    // option that is not the selected one).
    const was = this.active >= 0 ? this.matches[this.active]?.id : undefined;
    this.matches = matches;
    this.#render();
    this.listbox.dataset.query = text; // which text these suggestions answer
    if (document.activeElement === this.input) this.#open();
    this.#highlight(was === undefined ? -1 : matches.findIndex((m) => m.id === was));
    this.hint.textContent = matches.length
      ? `${matches.length} ${matches.length === 1 ? 'stop matches' : 'stops match'}; use the down arrow to choose.`
      : 'No stop matches.';
  }

  #render() {
    const list = this.listbox;
    list.replaceChildren();
    this.matches.forEach((m, i) => {
      const li = document.createElement('li');
      li.id = `${list.id}-opt-${i}`;
      li.setAttribute('role', 'option');
      li.setAttribute('aria-selected', 'false');
      li.dataset.index = String(i);
      li.className = 'option';
      const name = document.createElement('span');
      name.className = 'option-name';
      name.textContent = m.name;
      li.append(name);
      const extra = describeMatch(m);
      if (extra) {
        const small = document.createElement('span');
        small.className = 'option-extra';
        small.textContent = extra;
        li.append(' ', small);
      }
      list.append(li);
    });
  }

  #highlight(i) {
    const opts = this.listbox.querySelectorAll('[role="option"]');
    opts.forEach((o, j) => o.setAttribute('aria-selected', j === i ? 'true' : 'false'));
    this.active = i;
    if (i >= 0 && opts[i]) {
      this.input.setAttribute('aria-activedescendant', opts[i].id);
      opts[i].scrollIntoView({ block: 'nearest' });
    } else {
      this.input.removeAttribute('aria-activedescendant');
    }
  }

  choose(i) {
    const m = this.matches[i];
    if (!m) return;
    const label = labelFor(m);
    // The feed-scoped id: two loaded feeds may share a stop_id, and a pick names one stop.
    this.chosen = { id: `${m.feed}:${m.id}`, label };
    this.input.value = label;
    this.close();
    this.hint.textContent = `${label} chosen.`;
  }

  #onKey(e) {
    const n = this.matches.length;
    const open = !this.listbox.hidden;
    switch (e.key) {
      case 'ArrowDown':
        if (!n) return;
        e.preventDefault();
        if (!open) this.#open();
        this.#highlight(this.active + 1 >= n ? 0 : this.active + 1);
        break;
      case 'ArrowUp':
        if (!n) return;
        e.preventDefault();
        if (!open) this.#open();
        this.#highlight(this.active <= 0 ? n - 1 : this.active - 1);
        break;
      case 'Enter':
        if (open && this.active >= 0) {
          e.preventDefault();
          this.choose(this.active);
        }
        break;
      case 'Escape':
        if (open) {
          e.preventDefault();
          this.close();
        } else if (this.input.value) {
          e.preventDefault();
          this.set(null, '');
          this.hint.textContent = 'Cleared.';
        }
        break;
      case 'Tab':
        this.close();
        break;
      default:
    }
  }
}

/** Secondary text for a suggestion: what tells two stops of the same name apart. */
export function describeMatch(m) {
  const bits = [];
  if (m.station && m.station !== m.name) bits.push(m.station);
  if (m.platform) bits.push(`platform ${m.platform}`);
  // GTFS location_type: a station (1) groups platforms; a plain stop or platform (0) says nothing.
  if (m.kind === 'station') bits.push('station, all platforms');
  else if (m.kind && !['platform', 'stop'].includes(m.kind)) bits.push(String(m.kind).replace(/_/g, ' '));
  if (m.code) bits.push(`code ${m.code}`);
  // Two loaded feeds may share a stop's name and id: the feed tells them apart.
  if (m.feed) bits.push(`feed ${m.feed}`);
  return bits.join(' · ');
}

/** Text put in the input once a stop is chosen. */
export function labelFor(m) {
  return m.platform ? `${m.name} (platform ${m.platform})` : m.name;
}

/**
 * The `feed:id` a box names: its pick, else the engine's one stop for the typed text (then shown
 * as picked). Throws an Error whose message says what is wrong; for text that fits several stops
 * it lists them and asks for a pick.
 */
export async function pickedStop(box, client) {
  if (box.stopId) return box.stopId;
  const text = box.input.value.trim();
  try {
    const m = await client.resolveStop(text);
    const id = `${m.feed}:${m.id}`;
    box.set(id, labelFor(m));
    return id;
  } catch (e) {
    const issue = (e && e.issue) || {};
    if (issue.AmbiguousStop) throw new Error(`"${text}" fits several stops: ${(issue.AmbiguousStop.candidates || []).join('; ')}. Pick one from the list.`);
    throw e;
  }
}
