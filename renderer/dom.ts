/** Small DOM builders: elements from data with textContent only (no HTML strings, CSP-friendly). */
type Attrs = Record<string, string | number | boolean | null | undefined>;
type Child = Node | string | null | undefined | false;

export function h<K extends keyof HTMLElementTagNameMap>(
  tag: K,
  attrs: Attrs = {},
  ...children: Child[]
): HTMLElementTagNameMap[K] {
  const el = document.createElement(tag);
  for (const [name, value] of Object.entries(attrs)) {
    if (value === null || value === undefined || value === false) continue;
    if (name === 'class') el.className = String(value);
    else if (name === 'text') el.textContent = String(value);
    else el.setAttribute(name, value === true ? '' : String(value));
  }
  for (const child of children)
    if (child !== null && child !== undefined && child !== false) el.append(child);
  return el;
}

export function button(
  label: string,
  onClick: (e: MouseEvent) => void,
  attrs: Attrs = {},
): HTMLButtonElement {
  const b = h('button', { type: 'button', ...attrs }, label);
  b.addEventListener('click', onClick);
  return b;
}

export function byId<T extends HTMLElement = HTMLElement>(id: string): T {
  const el = document.getElementById(id);
  if (!el) throw new Error(`taperline: the page has no #${id}`);
  return el as T;
}

/** Alarm level as icon + word, never colour alone. */
export function levelBadge(level: 'warn' | 'critical'): HTMLElement {
  return h(
    'span',
    { class: `level level-${level}` },
    h('span', { class: 'level-icon', 'aria-hidden': 'true' }, level === 'critical' ? '✖' : '▲'),
    level === 'critical' ? 'Critical' : 'Warning',
  );
}
