import path from 'node:path';
import { serverDist } from '../../server/cli/server-build.mjs';

/** The compiled decode CLI (tests/decoder/global-setup.ts builds it): `node <decodeCli> <capture> …` */
export const decodeCli = path.join(serverDist, 'decode.mjs');
