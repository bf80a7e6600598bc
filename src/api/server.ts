/**
 * Listening: the hono app on @hono/node-server. `startServer` resolves once the socket is bound
 * (port 0 picks a free port, which tests use) and returns the URL and a graceful `close`.
 */
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { Duplex } from 'node:stream';
import { InputError } from '../errors.ts';
import { HttpProblem, PROBLEM_CONTENT_TYPE, problemFromError } from './problem.ts';
import { serve } from '@hono/node-server';
import type { Hono } from 'hono';
import { createApp, type AppOptions } from './app.ts';
import type { ApiEnv } from './auth.ts';
import { ComputePool, type ComputePoolOptions } from '../service/compute-pool.ts';

export interface ServerOptions extends Omit<AppOptions, 'loopback' | 'compute'> {
  /** Size of the compute pool (worker threads for fits and KK checks) and of its queue, or the pool itself (closed with the server). */
  compute?: ComputePoolOptions | ComputePool;
  /** Address to bind; default 127.0.0.1. */
  host?: string;
  /** TCP port; 0 picks a free one. Default 8787. */
  port?: number;
  /**
   * Add routes to the app before it listens (the benchmark's constant route, the web pages), given what
   * the server shares with them: its compute pool and whether it listens on loopback only.
   */
  extend?: (app: Hono<ApiEnv>, shared: { compute: ComputePool; loopback: boolean }) => void;
}

export interface RunningServer {
  /** Base URL, e.g. http://127.0.0.1:8787 */
  url: string;
  port: number;
  /**
   * Stop accepting connections, let in-flight requests finish for at most `graceMs` (default: no
   * bound), then close the connections still open and resolve. Does not close the registry.
   */
  close(graceMs?: number): Promise<void>;
}

export const DEFAULT_HOST = '127.0.0.1';
export const DEFAULT_PORT = 8787;

/** Loopback addresses: 127.0.0.0/8, ::1 and the name localhost. */
export function isLoopbackHost(host: string): boolean {
  return host === 'localhost' || host === '::1' || host === '[::1]' || /^127(\.\d{1,3}){3}$/.test(host);
}

/**
 * Requests Node refuses before any route sees them (the request line and headers over Node's 16 KiB
 * limit, a malformed request line) get a problem document too, instead of Node's bare status line.
 * The usual cause is a long wavelength list in the URL, so the 431 says how to send it instead.
 */
function answerClientError(err: NodeJS.ErrnoException, socket: Duplex): void {
  if (err.code === 'ECONNRESET' || !socket.writable) {
    socket.destroy();
    return;
  }
  const problem =
    err.code === 'HPE_HEADER_OVERFLOW'
      ? new HttpProblem(
          431,
          'request-too-long',
          "the request line and headers exceed the server's 16 KiB limit; send long wavelength lists as POST /api/v1/materials/{slug}/versions/{n}/nk with a JSON body",
        )
      : new InputError('http-malformed', `the request is not valid HTTP/1.1 (${err.code ?? 'parse error'})`);
  const { problem: doc } = problemFromError(problem);
  const body = JSON.stringify(doc);
  socket.end(
    `HTTP/1.1 ${doc.status} ${doc.title}\r\ncontent-type: ${PROBLEM_CONTENT_TYPE}\r\ncache-control: no-store\r\n` +
      `content-length: ${Buffer.byteLength(body)}\r\nconnection: close\r\n\r\n${body}`,
  );
}

export function startServer(options: ServerOptions): Promise<RunningServer> {
  const host = options.host ?? DEFAULT_HOST;
  const port = options.port ?? DEFAULT_PORT;
  const compute = options.compute instanceof ComputePool ? options.compute : new ComputePool(options.compute);
  const loopback = isLoopbackHost(host);
  const app = createApp({ ...options, compute, loopback });
  options.extend?.(app, { compute, loopback });
  return new Promise((resolve, reject) => {
    const server = serve({ fetch: app.fetch, hostname: host, port }) as Server;
    server.on('clientError', answerClientError);
    server.once('error', (err) => {
      void compute.close();
      reject(err);
    });
    server.once('listening', () => {
      const bound = (server.address() as AddressInfo).port;
      const shown = host.includes(':') && !host.startsWith('[') ? `[${host}]` : host;
      resolve({
        url: `http://${shown}:${bound}`,
        port: bound,
        close: (graceMs?: number) =>
          new Promise<void>((done) => {
            // close() stops accepting and waits for open requests; idle keep-alive sockets are closed now.
            let timer: NodeJS.Timeout | undefined;
            server.close(() => {
              clearTimeout(timer);
              compute.close().then(done, done);
            });
            server.closeIdleConnections();
            // A client that never finishes its request (a half-sent upload) must not hold the
            // shutdown: after the grace its connection is cut, which ends server.close().
            if (graceMs !== undefined) timer = setTimeout(() => server.closeAllConnections(), graceMs);
          }),
      });
    });
  });
}
