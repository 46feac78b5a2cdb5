import type { RequestHandler } from 'express';
import helmet from 'helmet';

/**
 * The content security policy the client runs under. style-src needs 'unsafe-inline' because React
 * sets inline styles (virtualised rows are positioned that way). In development, Vite's middleware
 * injects an inline React-refresh preamble script and talks to its HMR server over a WebSocket, so
 * only there are inline scripts and ws: allowed.
 */
export function securityHeaders(dev: boolean): RequestHandler {
  return helmet({
    contentSecurityPolicy: {
      useDefaults: false,
      directives: {
        defaultSrc: ["'self'"],
        scriptSrc: dev ? ["'self'", "'unsafe-inline'"] : ["'self'"],
        styleSrc: ["'self'", "'unsafe-inline'"],
        imgSrc: ["'self'", 'data:', 'blob:'],
        fontSrc: ["'self'", 'data:'],
        connectSrc: dev ? ["'self'", 'ws:', 'wss:'] : ["'self'"],
        workerSrc: ["'self'", 'blob:'],
        objectSrc: ["'none'"],
        baseUri: ["'self'"],
        formAction: ["'self'"],
        frameAncestors: ["'none'"],
      },
    },
  });
}
