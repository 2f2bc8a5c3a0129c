// Shared drawing for the workbench's views: the minutes colour scale and its legend, the
// saw-tooth of one pair's travel time across a window, sortable tables and downloads. Drawn as
// SVG on this device, no network; feed text always goes in as textContent.

import { el, node as svgNode } from './sketch.js';

// A sequential scale of seven classes of minutes, light to dark, after the viridis palette
// (designed to stay ordered for the common colour-vision deficiencies and in grey). The darker
// end carries a light outline on the sketch so it stays visible on the dark lines.
export const MINUTE_CLASSES = [
  { upTo: 10, color: '#fde725' },
  { upTo: 20, color: '#90d743' },
  { upTo: 30, color: '#35b779' },
  { upTo: 45, color: '#21918c' },
  { upTo: 60, color: '#31688e' },
  { upTo: 90, color: '#443983' },
  { upTo: Infinity, color: '#440154' },
];
export const NO_VALUE_COLOR = '#b8b8b8';

export function minuteColor(min) {
  if (min == null || !Number.isFinite(min)) return NO_VALUE_COLOR;
  return MINUTE_CLASSES.find((c) => min <= c.upTo).color;
}

/** A legend of the minute classes into `box` (a list of swatches with their ranges). */
export function minuteLegend(box, what) {
  box.replaceChildren();
  box.append(el('span', { class: 'legend-title', text: what }));
  let from = 0;
  for (const c of MINUTE_CLASSES) {
    const label = Number.isFinite(c.upTo) ? `${from}–${c.upTo} min` : `over ${from} min`;
    const sw = el('span', { class: 'swatch', 'aria-hidden': 'true' });
    sw.style.background = c.color;
    box.append(el('span', { class: 'legend' }, sw, ` ${label}`));
    from = c.upTo;
  }
  const none = el('span', { class: 'swatch', 'aria-hidden': 'true' });
  none.style.background = NO_VALUE_COLOR;
  box.append(el('span', { class: 'legend' }, none, ' not reached'));
}

export function fmtMin(seconds) {
  return seconds == null || !Number.isFinite(seconds) ? '—' : (seconds / 60).toFixed(1);
}

/**
 * Draws travel time (minutes, y) against departure (x) for one pair: the saw-tooth of waiting,
 * with a dashed line per percentile. Returns the text alternative it set.
 */
export function drawSawTooth(svg, profile) {
  const W = 640, H = 260, L = 48, R = 16, T = 26, B = 34;
  svg.replaceChildren();
  svg.setAttribute('viewBox', `0 0 ${W} ${H}`);
  const d = profile.departures;
  const ys = d.map((x) => x.travel_s).filter((v) => v != null);
  const title = svgNode('title', { id: 'saw-title' });
  svg.append(title);
  if (!d.length || !ys.length) {
    title.textContent = 'No journey at any departure of the window.';
    svg.append(svgNode('text', { x: W / 2, y: H / 2, 'text-anchor': 'middle', class: 'chart-note' }, 'No journey in this window'));
    return title.textContent;
  }
  const maxY = Math.max(...ys, ...profile.percentiles_s.filter((v) => v != null)) / 60;
  const top = Math.max(10, Math.ceil(maxY / 10) * 10);
  const x = (i) => L + (i / Math.max(1, d.length - 1)) * (W - L - R);
  const y = (min) => T + (1 - min / top) * (H - T - B);
  for (let m = 0; m <= top; m += top > 60 ? 20 : 10) {
    svg.append(svgNode('line', { x1: L, x2: W - R, y1: y(m), y2: y(m), class: 'grid' }));
    svg.append(svgNode('text', { x: L - 6, y: y(m) + 4, 'text-anchor': 'end', class: 'axis' }, String(m)));
  }
  const ticks = Math.min(6, d.length);
  for (let k = 0; k < ticks; k++) {
    const i = Math.round((k / Math.max(1, ticks - 1)) * (d.length - 1));
    const anchor = k === 0 ? 'start' : k === ticks - 1 ? 'end' : 'middle';
    svg.append(svgNode('text', { x: x(i), y: H - 12, 'text-anchor': anchor, class: 'axis' }, d[i].depart));
  }
  svg.append(svgNode('text', { x: 4, y: 12, class: 'axis' }, 'travel time (min)'));
  svg.append(svgNode('text', { x: W - R, y: H - 1, 'text-anchor': 'end', class: 'axis' }, 'departure'));
  // The line, broken where a departure has no journey.
  let path = '';
  let pen = false;
  d.forEach((p, i) => {
    if (p.travel_s == null) { pen = false; return; }
    path += `${pen ? 'L' : 'M'}${x(i).toFixed(1)},${y(p.travel_s / 60).toFixed(1)}`;
    pen = true;
  });
  svg.append(svgNode('path', { d: path, class: 'saw' }));
  const names = [];
  profile.percentiles.forEach((p, k) => {
    const v = profile.percentiles_s[k];
    if (v == null) return;
    svg.append(svgNode('line', { x1: L, x2: W - R, y1: y(v / 60), y2: y(v / 60), class: `pct pct-${k % 3}` }));
    svg.append(svgNode('text', { x: W - R - 2, y: y(v / 60) - 3, 'text-anchor': 'end', class: 'axis' }, `p${p} ${fmtMin(v)}`));
    names.push(`${p}th percentile ${fmtMin(v)} min`);
  });
  const none = d.length - ys.length;
  title.textContent = `Travel time from ${profile.from.name} to ${profile.to.name} for each of ${d.length} departures, ${d[0].depart} to ${d[d.length - 1].depart}: shortest ${fmtMin(profile.min_s)} min, longest ${fmtMin(Math.max(...ys))} min; ${names.join(', ')}${none ? `; ${none} departures with no journey` : ''}.`;
  svg.setAttribute('aria-labelledby', 'saw-title');
  return title.textContent;
}

/**
 * A table whose column headers sort it (click or Enter/Space); `columns`: [{ key, label, num,
 * show(row) }]. Returns the table element.
 */
export function sortableTable(columns, rows, { caption, onRow } = {}) {
  const table = el('table', { class: 'data' });
  if (caption) table.append(el('caption', { text: caption }));
  const head = el('tr');
  const body = el('tbody');
  let sortKey = null;
  let dir = 1;
  const render = () => {
    const list = rows.slice();
    if (sortKey) {
      const c = columns.find((x) => x.key === sortKey);
      list.sort((a, b) => {
        const va = a[sortKey], vb = b[sortKey];
        if (va == null && vb == null) return 0;
        if (va == null) return 1;
        if (vb == null) return -1;
        return (c.num ? va - vb : String(va).localeCompare(String(vb))) * dir;
      });
    }
    body.replaceChildren(...list.map((r) => {
      const tr = el('tr');
      for (const c of columns) tr.append(el('td', { class: c.num ? 'num' : '', text: c.show ? c.show(r) : String(r[c.key] ?? '—') }));
      if (onRow) {
        tr.tabIndex = 0;
        tr.classList.add('pick');
        tr.addEventListener('click', () => onRow(r));
        tr.addEventListener('keydown', (e) => { if (e.key === 'Enter' || e.key === ' ') { e.preventDefault(); onRow(r); } });
      }
      return tr;
    }));
    for (const th of head.children) {
      th.setAttribute('aria-sort', th.dataset.key === sortKey ? (dir > 0 ? 'ascending' : 'descending') : 'none');
    }
  };
  for (const c of columns) {
    const btn = el('button', { type: 'button', class: 'sort', text: c.label });
    btn.addEventListener('click', () => {
      dir = sortKey === c.key ? -dir : 1;
      sortKey = c.key;
      render();
    });
    const th = el('th', { scope: 'col' }, btn);
    th.dataset.key = c.key;
    head.append(th);
  }
  table.append(el('thead', {}, head), body);
  render();
  return table;
}

/** CSV text (RFC 4180: fields with a comma, quote or line break are quoted, quotes doubled). */
export function csvText(header, rows) {
  const cell = (v) => {
    const s = v == null ? '' : String(v);
    return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
  };
  return [header, ...rows].map((r) => r.map(cell).join(',')).join('\r\n') + '\r\n';
}

/** Offers `parts` (strings or bytes) as a file download named `name`. */
export function download(name, parts, type) {
  const url = URL.createObjectURL(new Blob(parts, { type }));
  const a = el('a', { href: url, download: name });
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 60_000);
}

// ---------------------------------------------------------------- window forms

/** "50,90" → [50, 90]; throws a readable message. */
export function parsePercentiles(text, fallback) {
  if (!text.trim()) return fallback;
  return text.split(',').map((p) => {
    const v = Number(p.trim());
    if (p.trim() === '' || !Number.isFinite(v)) throw new Error(`percentile "${p.trim()}" is not a number (give them as 50,90)`);
    return v;
  });
}

export function numberOrNull(input) {
  const t = input.value.trim();
  return t === '' ? null : Number(t);
}

/** The WindowQuery fields shared by the window and matrix forms (ids prefixed `p`). */
export function windowQuery(p, fallbackPct) {
  const q = {
    date: document.getElementById(`${p}-date`).value,
    window: `${document.getElementById(`${p}-start`).value}-${document.getElementById(`${p}-end`).value}`,
    step_free: document.getElementById(`${p}-sf`).value,
    percentiles: parsePercentiles(document.getElementById(`${p}-pct`).value, fallbackPct),
  };
  const step = numberOrNull(document.getElementById(`${p}-step`));
  if (step != null) q.step_min = step;
  const cut = numberOrNull(document.getElementById(`${p}-cut`));
  if (cut != null) q.cutoff_min = cut;
  const max = document.getElementById(`${p}-max`) ? numberOrNull(document.getElementById(`${p}-max`)) : null;
  if (max != null) q.max_duration_min = max;
  return q;
}

// ---------------------------------------------------------------- long work in a view

/**
 * Long engine work in a view, with its progress box (`ui.box`, `ui.progress`, `ui.progressText`),
 * run button (`ui.run`, disabled meanwhile) and cancel button (`ui.cancel`, which restarts the
 * engine worker, as cancelling a load does; then `onCancel`). Returns `run(first, work, done)`:
 * `work(onProgress)` resolves to the result, `done(result, ms)` shows it; a cancelled run says
 * so in `ui.summary`, an error goes to `fail`.
 */
export function longRun(ui, client, { what, say, fail, onCancel }) {
  let cancelled = false;
  ui.cancel.addEventListener('click', async () => {
    cancelled = true;
    ui.progressText.textContent = 'Cancelling…';
    await client.cancel();
    if (onCancel) onCancel();
  });
  return async (first, work, done) => {
    cancelled = false;
    ui.run.disabled = true;
    ui.box.hidden = false;
    ui.progress.value = 0;
    ui.progressText.textContent = first;
    const t0 = performance.now();
    try {
      const r = await work((stage, fraction) => {
        ui.progress.value = fraction;
        ui.progressText.textContent = stage;
      });
      done(r, performance.now() - t0);
    } catch (e) {
      if (cancelled) {
        ui.summary.textContent = `Cancelled: nothing ${what.done}.`;
        say(`The ${what.name} was cancelled.`);
      } else {
        fail(e.message);
      }
    } finally {
      ui.run.disabled = false;
      ui.box.hidden = true;
    }
  };
}
