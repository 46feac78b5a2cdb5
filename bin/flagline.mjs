#!/usr/bin/env node
// `npm start`: builds the server when its build is missing or stale, then runs dist/server/start.mjs.
import { ensureServerBuild } from '../server/cli/server-build.mjs';

process.setSourceMapsEnabled(true);
await import(await ensureServerBuild('start'));
