import { sql } from 'drizzle-orm';
import { CAPTURE_FORMATS, CLOCK_EDGES, FRAME_KINDS, FRAME_STATUSES, LINE_ENCODINGS, LINE_EVENT_KINDS } from '../../shared/decoder';
import { DEFAULT_TIMEOUT_SECONDS, EXCHANGE_OUTCOMES, FILE_SIZE_SOURCES, RECOVERED_FILE_KINDS } from '../../shared/decoder/calls';
import { DAMAGE_CAUSES, RETRANSMISSION_MATCHES, RETRANSMISSION_SEARCHES } from '../../shared/decoder/faults';
import { BIT_ORDERS, CALL_RUN_STATES, DECODE_JOB_STATES, NOTE_TARGET_KINDS, RIG_ROLES, STATION_ROLES } from '../../shared/schemas';
import { blob, check, index, integer, real, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core';

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
  encoding: text('encoding', { enum: LINE_ENCODINGS }).notNull(),
  clockEdge: text('clock_edge', { enum: CLOCK_EDGES }).notNull(),
  bitOrder: text('bit_order', { enum: BIT_ORDERS }).notNull(),
  /** a request with no answer within this many milliseconds counts as unanswered */
  responseTimeoutMs: integer('response_timeout_ms').notNull().default(DEFAULT_TIMEOUT_SECONDS * 1000),
  /** CPU clock of the rig's machines (Hz), for the fault desk's budget line: CPU cycles per octet */
  cpuHz: integer('cpu_hz').notNull().default(4_000_000),
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
    role: text('role', { enum: STATION_ROLES }).notNull(),
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
    role: text('role', { enum: RIG_ROLES }).notNull(),
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
    role: text('role', { enum: RIG_ROLES }).notNull(),
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

// ---- captures, decode runs and their results ----

/** One uploaded recording; the file itself lives content-addressed under data/captures/<sha256>. */
export const captures = sqliteTable(
  'captures',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    rigId: integer('rig_id')
      .notNull()
      .references(() => rigs.id, { onDelete: 'cascade' }),
    name: text('name').notNull(),
    size: integer('size').notNull(),
    sha256: text('sha256').notNull(),
    /** detected at upload; the settings may override it */
    format: text('format', { enum: CAPTURE_FORMATS }),
    detectReason: text('detect_reason').notNull().default(''),
    /** CaptureSettings as JSON, null until the channel roles are set */
    settings: text('settings'),
    uploadedBy: integer('uploaded_by').references(() => users.id, { onDelete: 'set null' }),
    uploadedAt: createdAt(),
    /** the decode run whose frames the timeline shows (switched in one transaction when a run completes) */
    currentJobId: integer('current_job_id'),
    /**
     * false when the capture was decoded in the uploader's browser and only its frames came up:
     * the samples stayed on their machine, so there is no file to decode again or draw a waveform from
     */
    samplesKept: integer('samples_kept', { mode: 'boolean' }).notNull().default(true),
  },
  (t) => [index('captures_rig_idx').on(t.rigId), index('captures_sha_idx').on(t.sha256)],
);

/** One decode run of a capture; its frames carry its id until a later run replaces them. */
export const decodeJobs = sqliteTable(
  'decode_jobs',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    captureId: integer('capture_id')
      .notNull()
      .references(() => captures.id, { onDelete: 'cascade' }),
    state: text('state', { enum: DECODE_JOB_STATES }).notNull(),
    stage: text('stage').notNull().default('queued'),
    bytesRead: integer('bytes_read').notNull().default(0),
    bytesTotal: integer('bytes_total').notNull().default(0),
    frames: integer('frames').notNull().default(0),
    events: integer('events').notNull().default(0),
    error: text('error'),
    /** the settings the run used (JSON), so a later edit does not change what its rows mean */
    settings: text('settings').notNull(),
    /** everything the run is made from (RunInputs of server/runs/inputs.ts, JSON), fixed when it is queued */
    inputs: text('inputs'),
    samplePeriod: real('sample_period'),
    /** links as the decoder named them (JSON array) */
    links: text('links'),
    /** last sample index the run saw, for the duration */
    lastSample: real('last_sample'),
    /** non-fatal reader issues, JSON, at most a few */
    issues: text('issues'),
    /** the run's frames, events and seek points are gone (a replaced, failed or cancelled run) */
    rowsCleared: integer('rows_cleared', { mode: 'boolean' }).notNull().default(false),
    /** frames of this run with id up to here have their frame_search entries (built after the frames, in chunks) */
    searchIndexedTo: integer('search_indexed_to').notNull().default(0),
    /**
     * the run's largest frame id, set when it becomes visible: frames above search_indexed_to up to
     * here are not in the search index yet (it is built after the switch) and are searched directly
     */
    lastFrameId: integer('last_frame_id').notNull().default(0),
    createdAt: createdAt(),
    startedAt: integer('started_at', { mode: 'timestamp_ms' }),
    finishedAt: integer('finished_at', { mode: 'timestamp_ms' }),
  },
  (t) => [index('decode_jobs_capture_idx').on(t.captureId, t.id), index('decode_jobs_state_idx').on(t.state)],
);

/** Decoded frames; the timeline reads only the rows of the capture's current job. */
export const frames = sqliteTable(
  'frames',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    jobId: integer('job_id').notNull(),
    captureId: integer('capture_id').notNull(),
    link: text('link').notNull(),
    seq: integer('seq').notNull(),
    firstSample: real('first_sample').notNull(),
    lastSample: real('last_sample').notNull(),
    t: real('t').notNull(),
    tEnd: real('t_end').notNull(),
    status: text('status', { enum: FRAME_STATUSES }).notNull(),
    address: integer('address'),
    control: integer('control'),
    kind: text('kind', { enum: FRAME_KINDS }),
    command: text('command'),
    ns: integer('ns'),
    nr: integer('nr'),
    pf: integer('pf', { mode: 'boolean' }),
    infoLength: integer('info_length').notNull(),
    bitLength: integer('bit_length').notNull(),
    /** every octet between the flags, FCS included */
    bytes: blob('bytes', { mode: 'buffer' }).notNull(),
    fcsReceived: integer('fcs_received'),
    fcsComputed: integer('fcs_computed'),
    flippedBit: integer('flipped_bit'),
    /** JSON array of stuffing positions */
    stuffed: text('stuffed').notNull(),
    /** lower-case hex of address..info (search column, indexed by frame_search) */
    hex: text('hex').notNull(),
    /** the information field as ASCII, non-printables as '.' (search column) */
    text: text('text').notNull(),
  },
  (t) => [
    index('frames_job_t_idx').on(t.jobId, t.t, t.id),
    index('frames_job_status_t_idx').on(t.jobId, t.status, t.t),
    index('frames_job_address_t_idx').on(t.jobId, t.address, t.t),
    index('frames_job_link_t_idx').on(t.jobId, t.link, t.t),
  ],
);

export const lineEvents = sqliteTable(
  'line_events',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    jobId: integer('job_id').notNull(),
    captureId: integer('capture_id').notNull(),
    link: text('link'),
    channel: text('channel').notNull(),
    kind: text('kind', { enum: LINE_EVENT_KINDS }).notNull(),
    sample: real('sample').notNull(),
    endSample: real('end_sample'),
    count: integer('count'),
    t: real('t').notNull(),
    tEnd: real('t_end'),
  },
  (t) => [index('line_events_job_t_idx').on(t.jobId, t.t, t.id)],
);

/**
 * Seek index of a decode run over a value change dump: every ~256 KB of input, a byte offset
 * where a reader can resume, the time there and each channel's level (JSON array).
 */
export const seekPoints = sqliteTable(
  'seek_points',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    jobId: integer('job_id').notNull(),
    byteOffset: integer('byte_offset').notNull(),
    sample: real('sample').notNull(),
    levels: text('levels').notNull(),
  },
  (t) => [index('seek_points_job_sample_idx').on(t.jobId, t.sample)],
);

/**
 * The fault desk of a decode run: every damaged frame (and every good frame with a line anomaly
 * inside) with its diagnosis. Tagged with the run's job id, so it becomes visible with the frames.
 */
export const faultRows = sqliteTable(
  'fault_rows',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    jobId: integer('job_id')
      .notNull()
      .references(() => decodeJobs.id, { onDelete: 'cascade' }),
    link: text('link').notNull(),
    seq: integer('seq').notNull(),
    /** the frame's row of the same run (null only if it could not be matched) */
    frameId: integer('frame_id'),
    firstSample: real('first_sample').notNull(),
    // every cause the fault desk gives (the column holds text; the list types it)
    cause: text('cause', { enum: DAMAGE_CAUSES }).notNull(),
    station: integer('station'),
    corrected: integer('corrected', { mode: 'boolean' }).notNull().default(false),
    flippedBit: integer('flipped_bit'),
    suspectLineBit: integer('suspect_line_bit'),
    suspectSample: real('suspect_sample'),
    suspectExact: integer('suspect_exact', { mode: 'boolean' }),
    focusSample: real('focus_sample'),
    /** JSON array of LineAnomaly inside the frame's window */
    anomalies: text('anomalies').notNull(),
    nextSeq: integer('next_seq'),
    nextFrameId: integer('next_frame_id'),
    retransmissionSeq: integer('retransmission_seq'),
    retransmissionFrameId: integer('retransmission_frame_id'),
    retransmissionBy: text('retransmission_by', { enum: RETRANSMISSION_MATCHES }),
    retransmissionSearch: text('retransmission_search', { enum: RETRANSMISSION_SEARCHES }).notNull(),
    /** JSON RaceDetail (shared/decoder/faults/races.ts) when the row shows a race signature */
    race: text('race'),
  },
  (t) => [index('fault_rows_job_sample_idx').on(t.jobId, t.firstSample), index('fault_rows_job_cause_idx').on(t.jobId, t.cause, t.firstSample)],
);

/** Per decode run: group counts, anomaly groups, anomalies outside frames (first few) and counts over time, as JSON. */
export const faultSummaries = sqliteTable('fault_summaries', {
  jobId: integer('job_id')
    .primaryKey()
    .references(() => decodeJobs.id, { onDelete: 'cascade' }),
  groups: text('groups').notNull(),
  anomalyGroups: text('anomaly_groups').notNull(),
  outside: text('outside').notNull(),
  outsideTotal: integer('outside_total').notNull(),
  bins: text('bins').notNull(),
  framesSeen: integer('frames_seen').notNull(),
  anomaliesDropped: integer('anomalies_dropped').notNull(),
  /** JSON RaceSummary: under-run offsets, over-run repeats, clock spread, budget line (null for runs decoded before it) */
  races: text('races'),
});

// ---- the call layer: field maps, call runs, exchanges, recovered files ----

/** A rig's field map; its documents are the versions. The built-in map is one read-only row per rig. */
export const fieldMaps = sqliteTable(
  'field_maps',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    rigId: integer('rig_id')
      .notNull()
      .references(() => rigs.id, { onDelete: 'cascade' }),
    name: text('name').notNull(),
    builtIn: integer('built_in', { mode: 'boolean' }).notNull().default(false),
    latestVersion: integer('latest_version').notNull().default(1),
    createdAt: createdAt(),
    updatedAt: integer('updated_at', { mode: 'timestamp_ms' })
      .notNull()
      .$defaultFn(() => new Date()),
  },
  (t) => [index('field_maps_rig_idx').on(t.rigId)],
);

/** Every saved version of a field map (documents are never changed once saved). */
export const fieldMapVersions = sqliteTable(
  'field_map_versions',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    mapId: integer('map_id')
      .notNull()
      .references(() => fieldMaps.id, { onDelete: 'cascade' }),
    version: integer('version').notNull(),
    /** the FieldMapInput document as JSON */
    document: text('document').notNull(),
    createdBy: integer('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex('field_map_versions_map_version_uq').on(t.mapId, t.version)],
);

/** A capture's chosen map and the call run whose results are visible. */
export const captureCallLayers = sqliteTable('capture_call_layers', {
  captureId: integer('capture_id')
    .primaryKey()
    .references(() => captures.id, { onDelete: 'cascade' }),
  mapId: integer('map_id').references(() => fieldMaps.id, { onDelete: 'set null' }),
  /** null: the latest version at each run */
  mapVersion: integer('map_version'),
  currentRunId: integer('current_run_id'),
});

/** One run of the call layer over a decode run's frames, with one map version. */
export const callRuns = sqliteTable(
  'call_runs',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    captureId: integer('capture_id')
      .notNull()
      .references(() => captures.id, { onDelete: 'cascade' }),
    decodeJobId: integer('decode_job_id').notNull(),
    mapId: integer('map_id').notNull(),
    mapVersion: integer('map_version').notNull(),
    /** the call run's own inputs snapshot (RunInputs, JSON): map version, answer timeout, roles */
    inputs: text('inputs'),
    state: text('state', { enum: CALL_RUN_STATES }).notNull(),
    error: text('error'),
    exchanges: integer('exchanges').notNull().default(0),
    files: integer('files').notNull().default(0),
    rowsCleared: integer('rows_cleared', { mode: 'boolean' }).notNull().default(false),
    createdAt: createdAt(),
    finishedAt: integer('finished_at', { mode: 'timestamp_ms' }),
  },
  (t) => [index('call_runs_capture_idx').on(t.captureId, t.id)],
);

export const exchanges = sqliteTable(
  'exchanges',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    runId: integer('run_id').notNull(),
    captureId: integer('capture_id').notNull(),
    station: integer('station').notNull(),
    callCode: integer('call_code'),
    callName: text('call_name'),
    tag: integer('tag'),
    fileName: text('file_name'),
    recordNumber: integer('record_number'),
    status: integer('status'),
    statusMeaning: text('status_meaning'),
    requestFrameId: integer('request_frame_id'),
    /** JSON arrays of frame ids */
    retryFrameIds: text('retry_frame_ids').notNull(),
    responseFrameIds: text('response_frame_ids').notNull(),
    tRequest: real('t_request').notNull(),
    tRequestEnd: real('t_request_end').notNull(),
    tResponse: real('t_response'),
    rtt: real('rtt'),
    outcome: text('outcome', { enum: EXCHANGE_OUTCOMES }).notNull(),
    retries: integer('retries').notNull(),
    serviceDelay: real('service_delay'),
    /** the request's user number, for compare and recovered files */
    user: integer('user'),
    /** the response's fields without the tag ("id=display | …"), for compare */
    answer: text('answer'),
    /** JSON array of frame ids: bad-FCS answers the station answered with a retry (why it was retried) */
    damagedResponseFrameIds: text('damaged_response_frame_ids').notNull().default('[]'),
    /** JSON StoredLockConflict[] (services/calls/lock-conflicts.ts): lock conflicts this exchange is part of */
    lockConflicts: text('lock_conflicts').notNull().default('[]'),
  },
  (t) => [
    index('exchanges_run_t_idx').on(t.runId, t.tRequest, t.id),
    index('exchanges_run_station_t_idx').on(t.runId, t.station, t.tRequest),
    index('exchanges_run_rtt_idx').on(t.runId, t.rtt),
  ],
);

/** Which visible exchange a frame belongs to (request, retry or response), for the inspector. */
export const exchangeFrames = sqliteTable(
  'exchange_frames',
  {
    runId: integer('run_id').notNull(),
    frameId: integer('frame_id').notNull(),
    exchangeId: integer('exchange_id').notNull(),
  },
  (t) => [index('exchange_frames_run_frame_idx').on(t.runId, t.frameId)],
);

export const recoveredFiles = sqliteTable(
  'recovered_files',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    runId: integer('run_id').notNull(),
    captureId: integer('capture_id').notNull(),
    key: text('key').notNull(),
    name: text('name').notNull(),
    kind: text('kind', { enum: RECOVERED_FILE_KINDS }).notNull(),
    user: integer('user'),
    /** JSON array of station addresses */
    stations: text('stations').notNull(),
    recordCount: integer('record_count').notNull(),
    endKnown: integer('end_known', { mode: 'boolean' }).notNull(),
    bytes: blob('bytes', { mode: 'buffer' }).notNull(),
    sha256: text('sha256').notNull(),
    /** one character per record: s seen, m missing, c conflict */
    coverage: text('coverage').notNull(),
    /** JSON [{ record, exchangeIds }] */
    conflicts: text('conflicts').notNull(),
    /** JSON array of exchange ids, in time order */
    exchangeIds: text('exchange_ids').notNull(),
    /** where record_count came from (FileSizeSource); null on rows written before it was stored */
    sizeSource: text('size_source', { enum: FILE_SIZE_SOURCES }),
    /** the exchange whose answer gave the size */
    sizeExchangeId: integer('size_exchange_id'),
    /** JSON StoredFileLockConflict[] (services/calls/lock-conflicts.ts); null on rows written before it was stored */
    lockConflicts: text('lock_conflicts'),
  },
  (t) => [index('recovered_files_run_idx').on(t.runId, t.name)],
);

// ---- notes ----

/**
 * A member's note pinned to a capture, a frame or a byte range of a frame (or, later, a field of a
 * field map). Frames are pinned by link + seq, not by frame id: a re-decode replaces the frame rows,
 * and the same settings give the same link + seq, so the note finds its frame again.
 */
export const notes = sqliteTable(
  'notes',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    rigId: integer('rig_id')
      .notNull()
      .references(() => rigs.id, { onDelete: 'cascade' }),
    /** null for a note on a field-map field: those belong to the rig, not to one capture */
    captureId: integer('capture_id').references(() => captures.id, { onDelete: 'cascade' }),
    target: text('target', { enum: NOTE_TARGET_KINDS }).notNull(),
    link: text('link'),
    seq: integer('seq'),
    /** offsets into the frame's octets between the flags (address first, FCS included); end inclusive */
    byteStart: integer('byte_start'),
    byteEnd: integer('byte_end'),
    fieldMapId: integer('field_map_id').references(() => fieldMaps.id, { onDelete: 'cascade' }),
    fieldPath: text('field_path'),
    body: text('body').notNull(),
    authorId: integer('author_id').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
    updatedAt: integer('updated_at', { mode: 'timestamp_ms' })
      .notNull()
      .$defaultFn(() => new Date()),
  },
  (t) => [index('notes_capture_frame_idx').on(t.captureId, t.link, t.seq), index('notes_rig_idx').on(t.rigId), index('notes_field_map_idx').on(t.fieldMapId, t.fieldPath)],
);
