import { z } from 'zod';
import { CLOCK_EDGES, LINE_ENCODINGS } from '../decoder';
import { DEFAULT_TIMEOUT_SECONDS } from '../decoder/calls';
import { roleSchema } from './common';

export const encodingSchema = z.enum(LINE_ENCODINGS);
export const clockEdgeSchema = z.enum(CLOCK_EDGES);
/** the order of a byte's bits on the line (stored with the rig: server/db/schema.ts) */
export const BIT_ORDERS = ['lsb-first', 'msb-first'] as const;
export const bitOrderSchema = z.enum(BIT_ORDERS);

export const lineSettingsSchema = z.object({
  bitRate: z.coerce
    .number({ error: 'Enter a bit rate' })
    .int('Use a whole number of bit/s')
    .min(50, 'At least 50 bit/s')
    .max(100_000_000, 'At most 100 Mbit/s'),
  encoding: encodingSchema,
  clockEdge: clockEdgeSchema,
  bitOrder: bitOrderSchema,
});
export type LineSettings = z.infer<typeof lineSettingsSchema>;

const rigFields = {
  name: z.string().trim().min(1, 'Give the rig a name').max(100, 'Use at most 100 characters'),
  description: z.string().trim().max(2000, 'Use at most 2000 characters'),
  lineSettings: lineSettingsSchema,
  responseTimeoutMs: z.coerce
    .number({ error: 'Enter a time in milliseconds' })
    .int('Use a whole number of milliseconds')
    .min(1, 'At least 1 ms')
    .max(60_000, 'At most 60 000 ms'),
  /** the CPU clock of the rig's machines, for the budget line (CPU cycles per octet) */
  cpuClockMHz: z.coerce
    .number({ error: 'Enter a clock rate in MHz' })
    .min(0.1, 'At least 0.1 MHz')
    .max(1000, 'At most 1000 MHz')
    .refine((v) => Math.abs(v * 1000 - Math.round(v * 1000)) < 1e-6, 'Use at most three decimals (kHz)'),
};

export const rigInputSchema = z.object({
  ...rigFields,
  description: rigFields.description.default(''),
  responseTimeoutMs: rigFields.responseTimeoutMs.default(DEFAULT_TIMEOUT_SECONDS * 1000),
  // 4 MHz: the clock an 800 kbit/s controller divides by 5 (common practice for machines of the period)
  cpuClockMHz: rigFields.cpuClockMHz.default(4),
});
export type RigInput = z.input<typeof rigInputSchema>;

// No defaults here: a patch that leaves a field out must leave it unchanged.
export const rigPatchSchema = z.object(rigFields).partial();
export type RigPatch = z.input<typeof rigPatchSchema>;

export const STATION_ROLES = ['server', 'station'] as const;
export const stationRoleSchema = z.enum(STATION_ROLES);

/** HDLC address octet, entered as decimal or 0x-prefixed hex */
export const addressSchema = z.preprocess(
  (v) => (typeof v === 'string' && /^\s*0x[0-9a-f]+\s*$/i.test(v) ? Number.parseInt(v.trim().slice(2), 16) : v),
  z.coerce.number({ error: 'Enter an address 0–255' }).int('Enter an address 0–255').min(0, 'Enter an address 0–255').max(255, 'Enter an address 0–255'),
);

export const stationInputSchema = z.object({
  address: addressSchema,
  name: z.string().trim().min(1, 'Give the station a name').max(80, 'Use at most 80 characters'),
  role: stationRoleSchema,
});
export type StationInput = z.input<typeof stationInputSchema>;
export const stationPatchSchema = stationInputSchema.partial();

export interface Station {
  id: number;
  rigId: number;
  address: number;
  name: string;
  role: z.infer<typeof stationRoleSchema>;
}

export interface RigSummary {
  id: number;
  name: string;
  description: string;
  lineSettings: LineSettings;
  /** a request unanswered this long counts as unanswered in exchanges */
  responseTimeoutMs: number;
  /** CPU clock of the rig's machines, MHz (budget line: CPU cycles per octet) */
  cpuClockMHz: number;
  myRole: z.infer<typeof roleSchema>;
  stationCount: number;
  memberCount: number;
  createdAt: string;
}

export interface RigDetail extends RigSummary {
  stations: Station[];
}

export const memberPatchSchema = z.object({ role: roleSchema });

export interface Member {
  userId: number;
  email: string;
  name: string;
  role: z.infer<typeof roleSchema>;
}

export const invitationInputSchema = z.object({
  email: z.string().trim().toLowerCase().email('Enter a valid e-mail address'),
  role: roleSchema,
});
export type InvitationInput = z.input<typeof invitationInputSchema>;

export interface Invitation {
  id: number;
  rigId: number;
  email: string;
  role: z.infer<typeof roleSchema>;
  invitedBy: string;
  createdAt: string;
  expiresAt: string;
}

/** What an invitation link shows before it is accepted */
export interface InvitationPreview {
  rigName: string;
  email: string;
  role: z.infer<typeof roleSchema>;
  invitedBy: string;
  accountExists: boolean;
}

export interface MailMessage {
  id: number;
  to: string;
  subject: string;
  text: string;
  html: string | null;
  createdAt: string;
}
