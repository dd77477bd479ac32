/** Small, safe pieces of HTML: escaping, tables, JSON embedded in a script tag. */
import { formatRunTimeSeconds } from '@shared/display/run-time';
import { formatSpan } from '@shared/engine/time-format';

export function escapeHtml(text: string): string {
  return text.replace(
    /[&<>"']/g,
    (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] as string,
  );
}

/** JSON that can sit inside <script type="application/json">: no `<` can close the tag. */
export function jsonForScript(value: unknown): string {
  return JSON.stringify(value)
    .replace(/</g, '\\u003c')
    .replace(/\u2028/g, '\\u2028')
    .replace(/\u2029/g, '\\u2029');
}

/** A script body that cannot end its own <script> element early. */
export function scriptSafe(js: string): string {
  return js.replace(/<\/script/gi, '<\\/script').replace(/<!--/g, '<\\!--');
}

/** A table from rows of already-escaped cells; the header row is escaped here. */
export function table(headers: string[], rows: string[][], caption?: string): string {
  const head = `<thead><tr>${headers.map((h) => `<th scope="col">${escapeHtml(h)}</th>`).join('')}</tr></thead>`;
  const body = `<tbody>${rows.map((r) => `<tr>${r.map((c) => `<td>${c}</td>`).join('')}</tr>`).join('')}</tbody>`;
  return `<table>${caption ? `<caption>${escapeHtml(caption)}</caption>` : ''}${head}${body}</table>`;
}

/** h:mm:ss since the first sample (d h:mm:ss past a day), as in the app. */
export const clock = formatRunTimeSeconds;

export const duration = formatSpan;
