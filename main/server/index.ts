/**
 * The headless web server of `taperline serve`: the renderer bundle over HTTP, the API over a
 * WebSocket at WS_PATH (same envelopes as the Electron IPC), run downloads, for any number of
 * tabs at once. Loopback by default; any other bind requires the session token.
 */
import { createReadStream, existsSync, statSync } from 'node:fs';
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import { WebSocketServer, type WebSocket } from 'ws';
import { WS_PATH } from '@shared/ipc/channels';
import type { PushEnvelope } from '@shared/ipc/pushes';
import type { RunReader } from '../recorder/types';
import { answerText, errorText } from '../app/dispatch';
import { batchFileStem, runFileStem } from '../app/file-names';
import type { AppService } from '../app/service';
import {
  createAccessPolicy,
  generateToken,
  hostnameOf,
  tokenCookie,
  TOKEN_QUERY,
  type AccessPolicy,
} from './access';
import { contentSecurityPolicy, reportCsp, SECURITY_HEADERS } from './csp';
import { contentTypeOf, resolveStaticPath, staysInside } from './static-files';

/** Largest WebSocket message accepted: requests are small; a profile preview is the biggest. */
export const MAX_MESSAGE_BYTES = 1024 * 1024;
/** A client this far behind gets no more samples/lines until it catches up (a stalled tab). */
export const SLOW_CLIENT_BYTES = 8 * 1024 * 1024;

export interface ServerOptions {
  host?: string;
  /** 0 = any free port. */
  port: number;
  service: AppService;
  /** The session token every request needs (loopback included); else TAPERLINE_TOKEN, else generated. */
  token?: string;
  /** The built renderer (index.html, app.js, styles.css); default dist/renderer. */
  rendererDir?: string;
  /** For `/api/runs/<id>/export.csv` and `/api/runs/<id>/report.html`. */
  recorder?: RunReader | null;
  reportHtml?: (runId: number) => Promise<string>;
  /** For `/api/runs/<id>/report.pdf`: the report printed to PDF. */
  reportPdf?: (runId: number) => Promise<Buffer>;
  /** For `/api/batches/<id>/report.html` and `/batch.csv`: a burn-in batch's Batch report. */
  batchFile?: (batchId: string, what: 'html' | 'csv') => Promise<string>;
}

export interface RunningServer {
  host: string;
  port: number;
  /** The address to open from this machine, with `?token=` (a wildcard bind is shown as loopback). */
  url: string;
  token: string;
  clientCount(): number;
  close(): Promise<void>;
}

export function defaultRendererDir(): string {
  // Bundled: dist/cli.cjs sits next to dist/renderer. From source (tsx): main/server -> dist/renderer.
  const beside = join(__dirname, 'renderer');
  return existsSync(beside) ? beside : join(__dirname, '..', '..', 'dist', 'renderer');
}

export async function startServer(options: ServerOptions): Promise<RunningServer> {
  const host = options.host ?? '127.0.0.1';
  const token = options.token ?? tokenFromEnvironment() ?? generateToken();
  const access = createAccessPolicy(host, token);
  const rendererDir = options.rendererDir ?? defaultRendererDir();
  const { service } = options;

  const wss = new WebSocketServer({
    noServer: true,
    maxPayload: MAX_MESSAGE_BYTES,
    perMessageDeflate: false,
  });
  const clients = new Set<WebSocket>();

  const server = createServer((req, res) => {
    handleHttp(req, res, {
      access,
      rendererDir,
      recorder: options.recorder ?? null,
      reportHtml: options.reportHtml,
      reportPdf: options.reportPdf,
      batchFile: options.batchFile,
    }).catch((err: unknown) => {
      if (!res.headersSent) sendText(res, 500, `internal error: ${errorText(err)}`);
      else res.destroy();
    });
  });

  server.on('upgrade', (req, socket, head) => {
    // A peer that resets mid-handshake must not take the server down.
    socket.on('error', () => socket.destroy());
    const url = requestUrl(req);
    const refuse = (status: number, reason: string) => {
      const headers = Object.entries({
        ...securityHeaders(null),
        'Content-Type': 'text/plain; charset=utf-8',
      })
        .map(([name, value]) => `${name}: ${value}\r\n`)
        .join('');
      socket.end(
        `HTTP/1.1 ${status} ${STATUS_TEXT[status] ?? 'Forbidden'}\r\n${headers}Connection: close\r\n\r\n${reason}\n`,
      );
    };
    if (!url || url.pathname !== WS_PATH) return refuse(404, `no WebSocket here; the API is at ${WS_PATH}`);
    const decision = access.checkUpgrade(req, url);
    if (!decision.ok) return refuse(decision.status, decision.reason);
    wss.handleUpgrade(req, socket, head, (ws) => wss.emit('connection', ws, req));
  });
  server.on('clientError', (_err, socket) => socket.destroy());

  wss.on('connection', (ws: WebSocket) => {
    clients.add(ws);
    ws.on('message', (data, isBinary) => {
      if (isBinary) {
        send(ws, { id: -1, ok: false, error: 'binary messages are not part of the API: send JSON text' });
        return;
      }
      void answerText(service, data.toString()).then((reply) => send(ws, reply));
    });
    ws.on('close', () => clients.delete(ws));
    ws.on('error', () => clients.delete(ws));
  });

  const stopPushes = service.onPush((push: PushEnvelope) => {
    if (clients.size === 0) return;
    const text = JSON.stringify(push);
    const droppable = push.push === 'samples' || push.push === 'lines' || push.push === 'station';
    for (const ws of clients) {
      if (ws.readyState !== ws.OPEN) continue;
      if (droppable && ws.bufferedAmount > SLOW_CLIENT_BYTES) continue;
      ws.send(text);
    }
  });

  await new Promise<void>((resolvePromise, reject) => {
    server.once('error', reject);
    server.listen(options.port, host, () => {
      server.off('error', reject);
      resolvePromise();
    });
  });
  const port = (server.address() as AddressInfo).port;
  const url = `http://${addressHost(host)}:${port}/?${TOKEN_QUERY}=${token}`;

  return {
    host,
    port,
    url,
    token,
    clientCount: () => clients.size,
    close: async () => {
      stopPushes();
      for (const ws of clients) ws.close(1001, 'server stopping');
      await new Promise<void>((r) => wss.close(() => r()));
      server.closeAllConnections();
      await closeServer(server);
    },
  };
}

interface HttpContext {
  access: AccessPolicy;
  rendererDir: string;
  recorder: RunReader | null;
  reportHtml: ((runId: number) => Promise<string>) | undefined;
  reportPdf: ((runId: number) => Promise<Buffer>) | undefined;
  batchFile: ((batchId: string, what: 'html' | 'csv') => Promise<string>) | undefined;
}

const RUN_DOWNLOAD = /^\/api\/runs\/(\d{1,12})\/(export\.csv|report\.html|report\.pdf)$/;
/** A batch id is 1-64 printable ASCII characters, percent-encoded in the path. */
const BATCH_DOWNLOAD = /^\/api\/batches\/([^/]{1,200})\/(report\.html|batch\.csv)$/;

async function handleHttp(req: IncomingMessage, res: ServerResponse, ctx: HttpContext): Promise<void> {
  const url = requestUrl(req);
  if (!url) return sendText(res, 400, 'bad request');
  const decision = ctx.access.check(req, url);
  // Refusals carry the same security headers as pages (and a policy that names no host).
  if (!decision.ok) {
    setSecurityHeaders(res, null);
    return sendText(res, decision.status, decision.reason);
  }
  if (decision.tokenFromQuery) res.setHeader('Set-Cookie', tokenCookie(ctx.access.token));
  setSecurityHeaders(res, req.headers.host ?? null);
  if (req.method !== 'GET' && req.method !== 'HEAD') {
    res.setHeader('Allow', 'GET, HEAD');
    return sendText(res, 405, 'only GET and HEAD are served; the API is on the WebSocket');
  }

  const rawPath = (req.url ?? '/').split('?')[0];
  const download = RUN_DOWNLOAD.exec(rawPath);
  if (download) return serveRunDownload(res, ctx, Number(download[1]), download[2]);
  const batch = BATCH_DOWNLOAD.exec(rawPath);
  if (batch) return serveBatchDownload(res, ctx, batch[1], batch[2] === 'batch.csv' ? 'csv' : 'html');
  if (rawPath.startsWith('/api/')) return sendText(res, 404, 'no such API path');

  const resolved = resolveStaticPath(ctx.rendererDir, rawPath);
  if (!resolved.ok) return sendText(res, resolved.status, resolved.reason);
  if (
    !existsSync(resolved.path) ||
    !statSync(resolved.path).isFile() ||
    !staysInside(ctx.rendererDir, resolved.path)
  ) {
    if (rawPath === '/') {
      return sendText(
        res,
        503,
        `the renderer is not built (no ${resolved.path}): run \`npm run build\` and reload`,
      );
    }
    return sendText(res, 404, 'not found');
  }
  res.writeHead(200, {
    'Content-Type': contentTypeOf(resolved.path),
    'Content-Length': statSync(resolved.path).size,
    'Cache-Control': 'no-cache',
  });
  if (req.method === 'HEAD') return void res.end();
  await pipeFile(resolved.path, res);
}

async function serveRunDownload(
  res: ServerResponse,
  ctx: HttpContext,
  runId: number,
  file: string,
): Promise<void> {
  const run = ctx.recorder?.getRun(runId) ?? null;
  if (!ctx.recorder || !run) return sendText(res, 404, `no recorded run ${runId}`);
  const stem = runFileStem(run);
  if (file === 'export.csv') {
    res.writeHead(200, csvHeaders(stem));
    // The export ends the response. When the browser aborts the download it rejects (and has
    // already destroyed the response), so the handler settles instead of waiting for a drain.
    return ctx.recorder.exportCsv(runId, res);
  }
  if (file === 'report.pdf') {
    if (!ctx.reportPdf) return sendText(res, 404, 'PDF reports are not offered by this server');
    let pdf: Buffer;
    try {
      pdf = await ctx.reportPdf(runId);
    } catch (err) {
      return sendText(res, 503, `the PDF could not be made: ${errorText(err)}`);
    }
    res.writeHead(200, {
      'Content-Type': 'application/pdf',
      'Content-Disposition': `attachment; filename="${stem}.pdf"`,
      'Content-Length': pdf.length,
      'Cache-Control': 'no-store',
    });
    return void res.end(pdf);
  }
  if (!ctx.reportHtml) return sendText(res, 404, 'run reports are not offered by this server');
  const html = await ctx.reportHtml(runId);
  res.writeHead(200, reportHeaders(stem, html));
  res.end(html);
}

/** A CSV file offered as a download. */
function csvHeaders(stem: string): Record<string, string> {
  return {
    'Content-Type': 'text/csv; charset=utf-8',
    'Content-Disposition': `attachment; filename="${stem}.csv"`,
    'Cache-Control': 'no-store',
  };
}

/** A report page shown in the browser (and saved under its name), under its own nonce policy. */
function reportHeaders(stem: string, html: string): Record<string, string> {
  return {
    'Content-Type': 'text/html; charset=utf-8',
    'Content-Security-Policy': reportCsp(html),
    'Content-Disposition': `inline; filename="${stem}.html"`,
    'Cache-Control': 'no-store',
  };
}

async function serveBatchDownload(
  res: ServerResponse,
  ctx: HttpContext,
  encodedId: string,
  what: 'html' | 'csv',
): Promise<void> {
  let batchId: string;
  try {
    batchId = decodeURIComponent(encodedId);
  } catch {
    return sendText(res, 400, 'the batch id in the path is not valid percent-encoding');
  }
  if (!/^[!-~]{1,64}$/.test(batchId)) return sendText(res, 400, 'a batch id is 1-64 printable characters');
  if (!ctx.batchFile) return sendText(res, 404, 'batch reports are not offered by this server');
  let text: string;
  try {
    text = await ctx.batchFile(batchId, what);
  } catch (err) {
    return sendText(res, 404, errorText(err));
  }
  const stem = batchFileStem(batchId);
  res.writeHead(200, what === 'csv' ? csvHeaders(stem) : reportHeaders(stem, text));
  res.end(text);
}

/**
 * A token fixed by the person (TAPERLINE_TOKEN), so pages stay allowed across a restart of the
 * server; at least 16 URL-safe characters, or it is refused.
 */
function tokenFromEnvironment(): string | null {
  const fixed = process.env.TAPERLINE_TOKEN;
  if (fixed === undefined || fixed === '') return null;
  if (!/^[A-Za-z0-9_-]{16,}$/.test(fixed))
    throw new Error('TAPERLINE_TOKEN must be at least 16 characters from A-Z a-z 0-9 _ -');
  return fixed;
}

/** The CSP and the fixed security headers; the CSP names the page's own host for its WebSocket. */
function securityHeaders(hostHeader: string | null): Record<string, string> {
  // Only a strictly parsed host:port goes into the policy, so no header can smuggle in a directive.
  const wsHost = hostHeader !== null && hostnameOf(hostHeader) !== null ? hostHeader : null;
  return { 'Content-Security-Policy': contentSecurityPolicy(wsHost), ...SECURITY_HEADERS };
}

function setSecurityHeaders(res: ServerResponse, hostHeader: string | null): void {
  for (const [name, value] of Object.entries(securityHeaders(hostHeader))) res.setHeader(name, value);
}

const STATUS_TEXT: Record<number, string> = { 400: 'Bad Request', 403: 'Forbidden', 404: 'Not Found' };

/** The host part of the printed address: one that works from this machine (a wildcard bind is loopback). */
export function addressHost(bindHost: string): string {
  if (bindHost === '0.0.0.0' || bindHost === '') return '127.0.0.1';
  if (bindHost === '::' || bindHost === '[::]') return '[::1]';
  return bindHost.includes(':') && !bindHost.startsWith('[') ? `[${bindHost}]` : bindHost;
}

function requestUrl(req: IncomingMessage): URL | null {
  try {
    return new URL(req.url ?? '/', 'http://taperline.invalid');
  } catch {
    return null;
  }
}

function sendText(res: ServerResponse, status: number, text: string): void {
  res.writeHead(status, { 'Content-Type': 'text/plain; charset=utf-8', 'Cache-Control': 'no-store' });
  res.end(`${text}\n`);
}

function pipeFile(path: string, res: ServerResponse): Promise<void> {
  return new Promise((resolvePromise, reject) => {
    const stream = createReadStream(path);
    stream.on('error', reject);
    res.on('close', () => {
      stream.destroy();
      resolvePromise();
    });
    stream.pipe(res);
  });
}

function send(ws: WebSocket, message: unknown): void {
  if (ws.readyState === ws.OPEN) ws.send(JSON.stringify(message));
}

function closeServer(server: Server): Promise<void> {
  return new Promise((r) => server.close(() => r()));
}
