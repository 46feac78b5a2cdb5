import { sql } from 'drizzle-orm';
import type { Role } from '../../shared/schemas';
import type { PasswordHasher } from '../auth/passwords';
import type { Db } from '../db/client';
import { memberships, rigs, stations, users } from '../db/schema';

/** Demo mode only: the sign-in page shows these accounts. */
export const DEMO_PASSWORD = 'flagline-demo';
export const DEMO_ACCOUNTS: { email: string; name: string; role: Role }[] = [
  { email: 'owner@demo.test', name: 'Agnes Pellow', role: 'owner' },
  { email: 'analyst@demo.test', name: 'Tobias Quill', role: 'analyst' },
  { email: 'viewer@demo.test', name: 'Mina Hartree', role: 'viewer' },
];

/** Our own invented scenario: a small parish office network of the early 1980s. */
export const DEMO_RIG = {
  name: 'Wrenfield Parish Office, 1983',
  description:
    'A small parish office network: a file server in the vestry and three desk stations sharing the ' +
    'parish registers and one printer over synchronous serial links.',
  lineSettings: { bitRate: 800_000, encoding: 'nrzi', clockEdge: 'rising', bitOrder: 'lsb-first' } as const,
  stations: [
    { address: 0x10, name: 'Vestry file server', role: 'server' },
    { address: 0x21, name: 'Registry desk', role: 'station' },
    { address: 0x22, name: 'Treasurer desk', role: 'station' },
    { address: 0x23, name: 'Choir office', role: 'station' },
  ] as const,
};

/**
 * The second demo scenario, the Saltmarsh Ferry Company: its file service is not the built-in
 * envelope, so a newcomer learns it with field hints. Its captures and reference field map come
 * from samples/manifest.json (otherRigs, key "saltmarsh").
 */
export const SALTMARSH_RIG = {
  key: 'saltmarsh',
  name: 'Saltmarsh Ferry Company, 1984',
  description:
    'The ferry company’s office network: a depot file server and two office stations on their own synchronous ports. ' +
    'Its file service uses its own envelope; learn it with field hints.',
  lineSettings: { bitRate: 500_000, encoding: 'nrz', clockEdge: 'rising', bitOrder: 'lsb-first' } as const,
  stations: [
    { address: 0x50, name: 'Depot file server', role: 'server' },
    { address: 0x61, name: 'Ticket office', role: 'station' },
    { address: 0x62, name: 'Harbour office', role: 'station' },
  ] as const,
};

export interface SeededDemo {
  /** the main demo rig (first in the newest-first rig list) */
  rigId: number;
  ownerId: number;
  /** the other demo scenarios' rigs, by manifest key */
  otherRigs: { key: string; rigId: number }[];
}

/** Seeds the demo on an empty database (no users yet); returns the demo rig, or null when it did not seed. */
export async function seedDemo(db: Db, hasher: PasswordHasher): Promise<SeededDemo | null> {
  const hasUsers = () => db.select({ n: sql<number>`count(*)` }).from(users).get()!.n > 0;
  if (hasUsers()) return null;
  const hashes = await Promise.all(DEMO_ACCOUNTS.map(() => hasher.hash(DEMO_PASSWORD)));
  return db.transaction((tx) => {
    if (tx.select({ n: sql<number>`count(*)` }).from(users).get()!.n > 0) return null;
    const ids = DEMO_ACCOUNTS.map(
      (a, i) => tx.insert(users).values({ email: a.email, name: a.name, passwordHash: hashes[i] }).returning().get().id,
    );
    // seeded before the main rig, so the main rig stays first in the newest-first list
    const other = tx
      .insert(rigs)
      .values({ name: SALTMARSH_RIG.name, description: SALTMARSH_RIG.description, ...SALTMARSH_RIG.lineSettings, createdBy: ids[0] })
      .returning()
      .get();
    for (const s of SALTMARSH_RIG.stations) tx.insert(stations).values({ rigId: other.id, ...s }).run();
    DEMO_ACCOUNTS.forEach((a, i) => tx.insert(memberships).values({ rigId: other.id, userId: ids[i], role: a.role }).run());
    const rig = tx
      .insert(rigs)
      .values({
        name: DEMO_RIG.name,
        description: DEMO_RIG.description,
        ...DEMO_RIG.lineSettings,
        createdBy: ids[0],
      })
      .returning()
      .get();
    for (const s of DEMO_RIG.stations) tx.insert(stations).values({ rigId: rig.id, ...s }).run();
    DEMO_ACCOUNTS.forEach((a, i) => tx.insert(memberships).values({ rigId: rig.id, userId: ids[i], role: a.role }).run());
    return { rigId: rig.id, ownerId: ids[0], otherRigs: [{ key: SALTMARSH_RIG.key, rigId: other.id }] };
  });
}
