/** Small, safe pieces of HTML: escaping, tables, JSON embedded in a script tag, a report's head. */
import { randomBytes } from 'node:crypto';
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

/**
 * A report file's own script policy: every inline <script> of the page carries this
 * one-time nonce, so nothing injected into the page's text (a board name, a firmware
 * message) can run, and the file makes no request at all.
 */
export interface ReportScripts {
  nonce: string;
  /** An inline script element allowed by the page's policy. */
  script(js: string): string;
}

export function reportScripts(): ReportScripts {
  const nonce = randomBytes(16).toString('base64');
  return { nonce, script: (js) => `<script nonce="${nonce}">${scriptSafe(js)}</script>` };
}

/** The <head> of a report file: policy, generator, title and styles. */
export function reportHead(options: { title: string; css: string; version: string; nonce: string }): string {
  return `<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; script-src 'nonce-${options.nonce}'; style-src 'unsafe-inline'; img-src data:">
<meta name="generator" content="Taperline ${escapeHtml(options.version)}">
<title>${escapeHtml(options.title)}</title>
<style>${options.css}</style>
</head>`;
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
