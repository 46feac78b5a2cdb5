import fs from 'node:fs';
import path from 'node:path';
import express, { type Express } from 'express';
import { repoRoot } from '../db/client';

export const clientDist = path.join(repoRoot, 'dist', 'client');

/**
 * Production: the built client from dist/client, and index.html for any other GET that is not an
 * API path, so deep links such as /rigs/3 load the single-page app.
 */
export function serveBuiltClient(app: Express): void {
  const indexHtml = path.join(clientDist, 'index.html');
  app.use(
    express.static(clientDist, {
      index: false,
      maxAge: '1h',
      // Vite puts a content hash in every file name under assets/, so those never change
      setHeaders: (res, file) => {
        if (file.includes(`${path.sep}assets${path.sep}`)) res.setHeader('Cache-Control', 'public, max-age=31536000, immutable');
      },
    }),
  );
  app.use((req, res, next) => {
    if ((req.method !== 'GET' && req.method !== 'HEAD') || req.path.startsWith('/api/') || req.path === '/api') {
      return next();
    }
    if (!fs.existsSync(indexHtml)) {
      res.status(503).type('text/plain').send('The client is not built yet: run `npm run build` (npm start does it for you).');
      return;
    }
    res.setHeader('Cache-Control', 'no-cache');
    res.sendFile(indexHtml);
  });
}

/** Development: Vite in middleware mode (transforms, HMR, index.html with its preamble). */
export async function mountViteDev(app: Express): Promise<{ close(): Promise<void> }> {
  const { createServer } = await import('vite');
  const vite = await createServer({ root: repoRoot, server: { middlewareMode: true }, appType: 'spa' });
  app.use(vite.middlewares);
  return vite;
}
