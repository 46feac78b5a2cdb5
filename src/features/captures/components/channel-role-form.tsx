import { useEffect, useRef, useState, type FormEvent } from 'react';
import { captureSettingsSchema, type CaptureSummaryRow, type Detection, type RigDetail } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { SelectField, TextField } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { isApiError } from '../../../lib/api';
import { useUnsavedChanges } from '../../../components/unsaved-changes';
import { parseWith, serverFieldErrors, type FieldErrors } from '../../../lib/form';
import { clockEdgeLabels, encodingLabels, formatAddress, formatRate, formatTimeStep, plural } from '../../../lib/format';
import { initialRoleForm, rowErrorKey, settingsFromForm, type ChannelRow, type RoleFormState } from './role-form-state';

const formatOptions = [
  { value: 'vcd', label: 'Value change dump (VCD)' },
  { value: 'csv', label: 'CSV sample table' },
  { value: 'raw', label: 'Raw binary samples' },
  { value: 'octets', label: 'Octet stream of line bits' },
  { value: 'framelog', label: 'Hex frame log' },
];
const useOptions = [
  { value: 'data', label: 'Data (a link)' },
  { value: 'handshake', label: 'Handshake line' },
  { value: 'unused', label: 'Not used' },
];
const directionOptions = [
  { value: 'unknown', label: 'Direction not known' },
  { value: 'to-server', label: 'Station → server' },
  { value: 'from-server', label: 'Server → station' },
];

interface Props {
  rig: RigDetail;
  capture: CaptureSummaryRow;
  detection: Detection;
  busy: boolean;
  /** the save or decode error from the server, shown in place */
  error: unknown;
  disabled?: boolean;
  /** per data channel: what the settings finder said about its direction */
  directionNotes?: Record<string, string>;
  /** stations seen in the capture that the rig does not list yet */
  seenStations?: number[];
  /** samples per bit the settings finder measured (raw samples without a sample rate): the bit rate follows from a sample rate */
  samplesPerBit?: number | null;
  onSubmit: (settings: ReturnType<typeof settingsFromForm>) => void;
}

/** The channel-role form: what each channel carries, and how the line is coded. */
export function ChannelRoleForm({ rig, capture, detection, busy, error, disabled, directionNotes = {}, seenStations = [], samplesPerBit = null, onSubmit }: Props) {
  const [form, setForm] = useState<RoleFormState>(() => initialRoleForm(detection, capture, rig.lineSettings));
  // what the form held when it was opened or last saved: leaving with anything else asks first
  const [baseline, setBaseline] = useState(form);
  const wasBusy = useRef(busy);
  useEffect(() => {
    if (wasBusy.current && !busy && !error) setBaseline(form);
    wasBusy.current = busy;
  }, [busy, error, form]);
  useUnsavedChanges(!disabled && JSON.stringify(form) !== JSON.stringify(baseline), `the channel roles of “${capture.name}”`);
  const [clientErrors, setClientErrors] = useState<FieldErrors>({});
  const errors: FieldErrors = { ...serverFieldErrors(error), ...clientErrors };
  const set = <K extends keyof RoleFormState>(key: K, value: RoleFormState[K]) => setForm((f) => ({ ...f, [key]: value }));
  const setRow = (name: string, patch: Partial<ChannelRow>) =>
    setForm((f) => ({ ...f, rows: f.rows.map((r) => (r.name === name ? { ...r, ...patch } : r)) }));
  const framed = form.format === 'framelog' || form.format === 'octets';
  // a VCD's $timescale or a CSV's time column fixes the time base; the form shows it instead of asking
  const fileTimeStep =
    detection.sampleRate !== null && form.format === detection.format && form.format === 'vcd' && form.sampleRate === '' ? 1 / detection.sampleRate : null;
  const csvTimeStep = detection.sampleRate !== null && form.format === 'csv' && detection.format === 'csv' ? 1 / detection.sampleRate : null;
  const dataLinks = form.rows.filter((r) => r.use === 'data' && r.name !== form.clock);
  const stationOptions = [
    { value: '', label: 'Station not known' },
    ...[...rig.stations].sort((a, b) => a.address - b.address).map((s) => ({ value: String(s.address), label: `${formatAddress(s.address)} ${s.name}` })),
    ...seenStations
      .filter((a) => !rig.stations.some((s) => s.address === a))
      .map((a) => ({ value: String(a), label: `${formatAddress(a)} (seen in the capture)` })),
  ];

  // a multidrop line shares its data wires, so each station's request line names the station itself
  const handshakeStationOptions = (current: string) => [
    { value: '', label: 'Station of its link' },
    ...(current !== '' && !rig.stations.some((s) => String(s.address) === current) ? [{ value: current, label: `Station ${formatAddress(Number(current))}` }] : []),
    ...[...rig.stations].sort((a, b) => a.address - b.address).map((s) => ({ value: String(s.address), label: `Station ${formatAddress(s.address)} ${s.name}` })),
  ];

  function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const settings = settingsFromForm(form);
    const parsed = parseWith(captureSettingsSchema, settings);
    if (!parsed.ok) return setClientErrors(parsed.errors);
    setClientErrors({});
    onSubmit(settings);
  }

  const rowError = (row: ChannelRow, field: string) => {
    const key = rowErrorKey(form, row.name, field);
    return key ? errors[key] : undefined;
  };

  return (
    <form aria-label="Channel roles" onSubmit={submit} noValidate className="space-y-6">
      <fieldset disabled={disabled} className="space-y-6">
        <div className="grid gap-4 sm:grid-cols-3">
          <SelectField
            label="Format"
            value={form.format}
            onChange={(e) => set('format', e.target.value as RoleFormState['format'])}
            options={formatOptions}
            error={errors.format}
            hint={detection.format ? 'Detected from the content; change it if the guess is wrong' : 'Not detected — choose it'}
          />
          {!framed && fileTimeStep !== null ? (
            <div className="space-y-1 text-sm" data-testid="time-resolution">
              <p className="font-medium">Time resolution</p>
              <p className="py-1.5 font-mono">{formatTimeStep(fileTimeStep)} per step</p>
              <p className="text-xs text-muted">From the file's $timescale; nothing to enter</p>
            </div>
          ) : !framed ? (
            <TextField
              label="Sample rate (samples/s)"
              inputMode="decimal"
              value={form.sampleRate}
              onChange={(e) => {
                const rate = Number(e.target.value);
                // the finder measured samples per bit: with the sample rate, the bit rate follows
                setForm((f) => ({
                  ...f,
                  sampleRate: e.target.value,
                  ...(samplesPerBit && rate > 0 && f.clock === '' ? { bitRate: String(Math.round(rate / samplesPerBit)) } : {}),
                }));
              }}
              error={errors.sampleRate}
              placeholder={csvTimeStep !== null ? 'from the time column' : undefined}
              hint={
                Number(form.sampleRate) > 0
                  ? `${formatRate(Number(form.sampleRate))}: one sample every ${formatTimeStep(1 / Number(form.sampleRate))}`
                  : csvTimeStep !== null
                    ? `Empty: the time column's step, ${formatTimeStep(csvTimeStep)}`
                    : 'Needed for raw samples and sample-index tables'
              }
              className="font-mono"
            />
          ) : null}
          {form.format === 'raw' ? (
            <SelectField
              label="Bytes per sample"
              value={form.rawWidth}
              onChange={(e) => set('rawWidth', e.target.value as '1' | '2')}
              options={[
                { value: '1', label: '1 byte (8 channels)' },
                { value: '2', label: '2 bytes (16 channels)' },
              ]}
              error={errors.rawWidth}
            />
          ) : null}
        </div>
        <div className="grid gap-4 sm:grid-cols-3">
          <SelectField
            label="Frame check sequence"
            value={form.fcs}
            onChange={(e) => set('fcs', e.target.value as '16' | '32')}
            options={[
              { value: '16', label: 'FCS-16 (CRC-16/IBM-SDLC)' },
              { value: '32', label: 'FCS-32 (CRC-32/ISO-HDLC)' },
            ]}
            error={errors.fcs}
            hint="Most controllers of the period send the 16-bit FCS"
          />
        </div>
        {form.format === 'raw' ? (
          <TextField
            label="Channel names (bit 0, bit 1, …)"
            value={form.channelNames}
            onChange={(e) => set('channelNames', e.target.value)}
            placeholder="clk, txd, rxd, rts"
            error={errors.channelNames ?? Object.entries(errors).find(([k]) => k.startsWith('channelNames.'))?.[1]}
            hint="Comma-separated; leave empty to call them 0, 1, 2…"
          />
        ) : null}

        {!framed ? (
          <div className="grid gap-4 sm:grid-cols-3">
            <SelectField
              label="Clock"
              value={form.clock}
              onChange={(e) => set('clock', e.target.value)}
              options={[{ value: '', label: 'Recover from data (no clock channel)' }, ...form.rows.map((r) => ({ value: r.name, label: r.name }))]}
              error={errors.clock}
              hint="The serial controller's transmit or receive clock, if you probed it"
            />
            <TextField
              label="Bit rate (bit/s)"
              inputMode="numeric"
              value={form.bitRate}
              onChange={(e) => set('bitRate', e.target.value)}
              error={errors.bitRate}
              hint={form.clock ? 'Optional with a clock channel' : 'Needed to recover the clock'}
              className="font-mono"
            />
            <SelectField
              label="Encoding"
              value={form.encoding}
              onChange={(e) => set('encoding', e.target.value as 'nrz' | 'nrzi')}
              options={Object.entries(encodingLabels).map(([value, label]) => ({ value, label }))}
              error={errors.encoding}
            />
            <SelectField
              label="Clock edge"
              value={form.edge}
              onChange={(e) => set('edge', e.target.value as 'rising' | 'falling')}
              options={Object.entries(clockEdgeLabels).map(([value, label]) => ({ value, label }))}
              error={errors.edge}
              hint="The edge on which data is sampled"
            />
            <label className="flex items-center gap-2 self-center text-sm">
              <input type="checkbox" checked={form.invert} onChange={(e) => set('invert', e.target.checked)} className="h-4 w-4 accent-flare-500" />
              Invert the line levels
            </label>
          </div>
        ) : null}

        <div>
          <h3 className="mb-1 text-sm font-semibold">Channels</h3>
          <p className="mb-3 text-xs text-muted">Each data channel is one link: one direction of one serial line. Handshake lines show up as line events; a station's RTS line measures its service delay. On a multidrop line (data wires shared by several stations) leave the data links' station unknown and give each RTS line its station.</p>
          {errors.links ? <p className="mb-2 text-sm text-danger">{errors.links}</p> : null}
          <ul className="divide-y divide-line/60 border-y border-line/60" aria-label="Channels">
            {form.rows.map((row) => {
              const detected = detection.channels.find((c) => c.name === row.name);
              const isClock = row.name === form.clock;
              const details = !isClock && (row.use === 'data' || row.use === 'handshake');
              // the details go on a line of their own, so each select shows its whole choice
              return (
                <li key={row.name} className="space-y-2 py-2.5" aria-label={`Channel ${row.name}`}>
                  <div className="flex flex-wrap items-center gap-x-4 gap-y-1">
                    <div className="min-w-40 flex-1">
                      <span className="font-mono text-sm">{row.name}</span>
                      {detected ? (
                        <span className="ml-2 text-xs text-muted">
                          {detected.source} · {plural(detected.transitions, 'change')}
                        </span>
                      ) : null}
                    </div>
                    <div className="w-52">
                      {isClock ? (
                        <span className="inline-block rounded bg-tide-100 px-1.5 py-0.5 font-mono text-xs text-tide-700 dark:bg-tide-500/15 dark:text-tide-300">clock</span>
                      ) : (
                        <SelectField
                          label={`Use of ${row.name}`}
                          wrapperClassName="[&>label]:sr-only"
                          value={row.use}
                          onChange={(e) => setRow(row.name, { use: e.target.value as ChannelRow['use'] })}
                          options={useOptions}
                          error={rowError(row, 'channel')}
                        />
                      )}
                    </div>
                  </div>
                  {details && row.use === 'data' ? (
                    <div className="grid gap-2 sm:grid-cols-[minmax(11rem,1fr)_minmax(12rem,1fr)_minmax(12rem,1.2fr)]">
                      <SelectField
                        label={`Direction of ${row.name}`}
                        wrapperClassName="[&>label]:sr-only"
                        value={row.direction}
                        onChange={(e) => setRow(row.name, { direction: e.target.value as ChannelRow['direction'] })}
                        options={directionOptions}
                        error={rowError(row, 'direction')}
                      />
                      <SelectField
                        label={`Station on ${row.name}`}
                        wrapperClassName="[&>label]:sr-only"
                        value={row.station}
                        onChange={(e) => setRow(row.name, { station: e.target.value })}
                        options={stationOptions}
                        error={rowError(row, 'stationAddress')}
                      />
                      <TextField
                        label={`Label of ${row.name}`}
                        wrapperClassName="[&>label]:sr-only"
                        placeholder="e.g. port 2, desk → server"
                        value={row.label}
                        onChange={(e) => setRow(row.name, { label: e.target.value })}
                        error={rowError(row, 'label')}
                      />
                      {directionNotes[row.name] ? <p className="text-xs text-muted sm:col-span-3">{directionNotes[row.name]}</p> : null}
                    </div>
                  ) : null}
                  {details && row.use === 'handshake' ? (
                    <div className="grid gap-2 sm:grid-cols-[minmax(9rem,1fr)_minmax(12rem,1.5fr)_minmax(12rem,1.5fr)]">
                      <TextField
                        label={`Line name of ${row.name}`}
                        wrapperClassName="[&>label]:sr-only"
                        placeholder="RTS, CTS, DCD…"
                        value={row.lineName}
                        onChange={(e) => setRow(row.name, { lineName: e.target.value })}
                        error={rowError(row, 'name')}
                      />
                      <SelectField
                        label={`Link of ${row.name}`}
                        wrapperClassName="[&>label]:sr-only"
                        value={row.lineLink}
                        onChange={(e) => setRow(row.name, { lineLink: e.target.value })}
                        options={[{ value: '', label: 'Not tied to a link' }, ...dataLinks.map((l) => ({ value: l.name, label: `Belongs to ${l.name}` }))]}
                      />
                      <SelectField
                        label={`Station of ${row.name}`}
                        wrapperClassName="[&>label]:sr-only"
                        value={row.lineStation}
                        onChange={(e) => setRow(row.name, { lineStation: e.target.value })}
                        options={handshakeStationOptions(row.lineStation)}
                        error={rowError(row, 'stationAddress')}
                      />
                    </div>
                  ) : null}
                </li>
              );
            })}
          </ul>
        </div>
      </fieldset>
      {error && !isApiError(error, 400) ? <ErrorNotice error={error} /> : null}
      {Object.keys(errors).length > 0 ? <ErrorNotice>Check the highlighted settings: the decoder needs them to read the capture.</ErrorNotice> : null}
      {!disabled ? (
        <Button type="submit" busy={busy}>
          Save roles and decode
        </Button>
      ) : null}
    </form>
  );
}
