import { sql } from 'drizzle-orm';
import { check, index, integer, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core';

// Timestamps are integer milliseconds (Drizzle maps them to Date); the API sends ISO strings.
const createdAt = () =>
  integer('created_at', { mode: 'timestamp_ms' })
    .notNull()
    .$defaultFn(() => new Date());

export const users = sqliteTable('users', {
  id: integer('id').primaryKey({ autoIncrement: true }),
  email: text('email').notNull().unique(),
  name: text('name').notNull(),
  passwordHash: text('password_hash').notNull(),
  createdAt: createdAt(),
});

/** express-session rows, written by server/auth/session-store.ts */
export const sessions = sqliteTable(
  'sessions',
  {
    sid: text('sid').primaryKey(),
    data: text('data').notNull(),
    expiresAt: integer('expires_at').notNull(),
  },
  (t) => [index('sessions_expires_at_idx').on(t.expiresAt)],
);

export const rigs = sqliteTable('rigs', {
  id: integer('id').primaryKey({ autoIncrement: true }),
  name: text('name').notNull(),
  description: text('description').notNull().default(''),
  bitRate: integer('bit_rate').notNull(),
  encoding: text('encoding', { enum: ['nrz', 'nrzi'] }).notNull(),
  clockEdge: text('clock_edge', { enum: ['rising', 'falling'] }).notNull(),
  bitOrder: text('bit_order', { enum: ['lsb-first', 'msb-first'] }).notNull(),
  createdAt: createdAt(),
  createdBy: integer('created_by').references(() => users.id, { onDelete: 'set null' }),
});

export const stations = sqliteTable(
  'stations',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    rigId: integer('rig_id')
      .notNull()
      .references(() => rigs.id, { onDelete: 'cascade' }),
    address: integer('address').notNull(),
    name: text('name').notNull(),
    role: text('role', { enum: ['server', 'station'] }).notNull(),
  },
  (t) => [
    uniqueIndex('stations_rig_address_uq').on(t.rigId, t.address),
    check('stations_address_range', sql`${t.address} between 0 and 255`),
  ],
);

export const memberships = sqliteTable(
  'memberships',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    rigId: integer('rig_id')
      .notNull()
      .references(() => rigs.id, { onDelete: 'cascade' }),
    userId: integer('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    role: text('role', { enum: ['owner', 'analyst', 'viewer'] }).notNull(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex('memberships_rig_user_uq').on(t.rigId, t.userId), index('memberships_user_idx').on(t.userId)],
);

export const invitations = sqliteTable(
  'invitations',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    rigId: integer('rig_id')
      .notNull()
      .references(() => rigs.id, { onDelete: 'cascade' }),
    email: text('email').notNull(),
    role: text('role', { enum: ['owner', 'analyst', 'viewer'] }).notNull(),
    tokenHash: text('token_hash').notNull().unique(),
    invitedBy: integer('invited_by')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    createdAt: createdAt(),
    expiresAt: integer('expires_at', { mode: 'timestamp_ms' }).notNull(),
    acceptedAt: integer('accepted_at', { mode: 'timestamp_ms' }),
  },
  (t) => [index('invitations_rig_idx').on(t.rigId)],
);

export const passwordResets = sqliteTable('password_resets', {
  id: integer('id').primaryKey({ autoIncrement: true }),
  userId: integer('user_id')
    .notNull()
    .references(() => users.id, { onDelete: 'cascade' }),
  tokenHash: text('token_hash').notNull().unique(),
  createdAt: createdAt(),
  expiresAt: integer('expires_at', { mode: 'timestamp_ms' }).notNull(),
  usedAt: integer('used_at', { mode: 'timestamp_ms' }),
});

/** the fake mail transport's outbox (development and tests) */
export const mailMessages = sqliteTable('mail_messages', {
  id: integer('id').primaryKey({ autoIncrement: true }),
  to: text('to').notNull(),
  subject: text('subject').notNull(),
  text: text('text').notNull(),
  html: text('html'),
  createdAt: createdAt(),
});

export const settings = sqliteTable('settings', {
  key: text('key').primaryKey(),
  value: text('value').notNull(),
});
