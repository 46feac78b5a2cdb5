import { buildServer, serverBuildReason } from '../../server/cli/server-build.mjs';

/** The CLI tests run the compiled CLI, as users do: build it once (the same freshness rule as `npm start`). */
export default async function setup() {
  if (serverBuildReason()) await buildServer();
}
