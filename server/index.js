// The production entry: adapter-node's request handler behind a plain Node HTTP server, with the
// application's front door first (cached released versions, sources and records for API tokens,
// answered without SvelteKit building a Request; see src/lib/server/api/front-door.ts). Reads the
// same variables as adapter-node's own entry: HOST, PORT, SHUTDOWN_TIMEOUT, KEEP_ALIVE_TIMEOUT,
// HEADERS_TIMEOUT; shuts down gracefully on SIGTERM and SIGINT and then emits 'sveltekit:shutdown'.
import http from 'node:http';
import process from 'node:process';
import { handler } from '../build/handler.js';

const host = process.env.HOST ?? '0.0.0.0';
const port = Number(process.env.PORT ?? '3000');
const shutdownTimeout = Number(process.env.SHUTDOWN_TIMEOUT ?? '30');

/** @param {string} name */
function seconds(name) {
  const raw = process.env[name];
  if (raw === undefined || raw === '') return undefined;
  const v = Number(raw);
  if (!Number.isFinite(v) || v < 0) throw new Error(`${name} must be a number of seconds, got '${raw}'`);
  return v;
}

/** @type {((req: http.IncomingMessage, res: http.ServerResponse) => Promise<boolean>) | undefined} */
const frontDoor = /** @type {any} */ (globalThis)[Symbol.for('isoledger.front-door')];

const server = http.createServer((req, res) => {
  if (!frontDoor) return handler(req, res, () => {});
  frontDoor(req, res).then(
    (answered) => {
      if (!answered) handler(req, res, () => {});
    },
    () => {
      if (!res.headersSent) handler(req, res, () => {});
    }
  );
});
const keepAlive = seconds('KEEP_ALIVE_TIMEOUT');
if (keepAlive !== undefined) server.keepAliveTimeout = keepAlive * 1000;
const headersTimeout = seconds('HEADERS_TIMEOUT');
if (headersTimeout !== undefined) server.headersTimeout = headersTimeout * 1000;

let stopping = false;
/** @param {string} reason */
function shutdown(reason) {
  if (stopping) return;
  stopping = true;
  server.closeIdleConnections();
  server.close(() => process.emit(/** @type {any} */ ('sveltekit:shutdown'), reason));
  setTimeout(() => server.closeAllConnections(), shutdownTimeout * 1000).unref();
}
server.on('request', (req) => {
  req.on('close', () => {
    if (stopping) server.closeIdleConnections();
  });
});
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);

server.listen(port, host, () => console.log(`Listening on http://${host}:${port}`));
