#!/usr/bin/env node
// `npm run --silent decode -- <capture> [options]`: builds the CLI when its build is missing or
// stale (saying so on stderr, so stdout stays NDJSON), then runs dist/server/decode.mjs.
import { ensureServerBuild } from '../server/cli/server-build.mjs';

await import(await ensureServerBuild('decode'));
