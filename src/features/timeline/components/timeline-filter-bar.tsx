import { useState, type FormEvent, type RefObject } from 'react';
import type { Station } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { frameStatusLabels } from '../../../components/status-chip';
import { formatAddress } from '../../../lib/format';
import { damagedStatuses, type TimelineFilters } from '../api/timeline-filters';

const statuses = ['ok', 'bad-fcs', 'abort', 'short', 'residue'] as const;
const kinds = ['I', 'S', 'U'] as const;

interface Props {
  filters: TimelineFilters;
  problems: Record<string, string>;
  stations: Station[];
  links: { channel: string; label: string }[];
  searchRef: RefObject<HTMLInputElement | null>;
  onChange: (f: TimelineFilters) => void;
  onJump: (t: number) => void;
}

function toggle<T>(list: T[] | undefined, item: T): T[] | undefined {
  const set = new Set(list ?? []);
  if (set.has(item)) set.delete(item);
  else set.add(item);
  return set.size === 0 ? undefined : [...set];
}

const pill = (on: boolean) =>
  `rounded-full border px-2.5 py-0.5 text-xs font-medium transition-colors ${
    on ? 'border-flare-500 bg-flare-500/15 text-text' : 'border-line text-muted hover:text-text'
  }`;

/** Search and filters; every change goes to the URL so the view can be shared. */
export function TimelineFilterBar({ filters, problems, stations, links, searchRef, onChange, onJump }: Props) {
  const [mode, setMode] = useState<'text' | 'hex'>(filters.hex ? 'hex' : 'text');
  const [searchError, setSearchError] = useState<string | null>(null);
  const damagedOnly = damagedStatuses.every((s) => filters.status?.includes(s)) && !filters.status?.includes('ok');

  function search(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const value = String(new FormData(event.currentTarget).get('q') ?? '').trim();
    if (mode === 'hex' && value && !/^(\s*([0-9a-fA-F]{2}|\?\?)\s*)*$/.test(value)) {
      return setSearchError('Use pairs of hex digits like "14 00", and ?? for any byte.');
    }
    setSearchError(null);
    onChange({ ...filters, text: mode === 'text' && value ? value : undefined, hex: mode === 'hex' && value ? value : undefined });
  }

  function applyRange(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const form = new FormData(event.currentTarget);
    const num = (k: string) => {
      const v = String(form.get(k) ?? '').trim();
      return v === '' ? undefined : Number(v);
    };
    const from = num('from');
    const to = num('to');
    const command = String(form.get('command') ?? '').trim();
    onChange({
      ...filters,
      from: from !== undefined && Number.isFinite(from) && from >= 0 ? from : undefined,
      to: to !== undefined && Number.isFinite(to) && to >= 0 ? to : undefined,
      command: command ? command.split(/[\s,]+/).filter(Boolean).map((c) => c.toUpperCase()) : undefined,
    });
  }

  const control = 'rounded-md border border-line bg-surface px-2 py-1 text-sm focus:outline-none focus:ring-2 focus:ring-focus/60';
  const searchProblem = searchError ?? problems.hex ?? problems.text;

  return (
    <div className="space-y-2.5 rounded-lg border border-line bg-surface p-3 shadow-sm">
      <div className="flex flex-wrap items-start gap-3">
        <form role="search" onSubmit={search} className="flex min-w-80 flex-1 items-start gap-2">
          <select aria-label="Search in" value={mode} onChange={(e) => setMode(e.target.value as 'text' | 'hex')} className={control}>
            <option value="text">Text in information field</option>
            <option value="hex">Hex bytes</option>
          </select>
          <div className="flex-1">
            <input
              ref={searchRef}
              name="q"
              key={`${filters.text ?? ''}|${filters.hex ?? ''}`}
              defaultValue={filters.hex ?? filters.text ?? ''}
              aria-label="Search frames"
              aria-invalid={searchProblem ? true : undefined}
              placeholder={mode === 'hex' ? '14 00 ?? 41   (press / to focus)' : 'PARISH.DAT   (press / to focus)'}
              className={`${control} w-full font-mono ${searchProblem ? 'border-danger' : ''}`}
            />
            {searchProblem ? <p className="mt-1 text-xs text-danger">{searchProblem}</p> : null}
          </div>
          <Button type="submit" variant="secondary">
            Search
          </Button>
        </form>
        <form
          aria-label="Go to time"
          onSubmit={(e) => {
            e.preventDefault();
            const t = Number(new FormData(e.currentTarget).get('t'));
            if (Number.isFinite(t) && t >= 0) onJump(t);
          }}
          className="flex items-center gap-2"
        >
          <input name="t" aria-label="Go to time (s)" placeholder="time, s" inputMode="decimal" className={`${control} w-28 font-mono`} />
          <Button type="submit" variant="secondary">
            Go
          </Button>
        </form>
      </div>
      <div className="flex flex-wrap items-center gap-x-4 gap-y-2">
        <div role="group" aria-label="Status" className="flex flex-wrap items-center gap-1.5">
          <span className="text-xs text-muted">Status</span>
          <button
            type="button"
            aria-pressed={damagedOnly}
            className={pill(damagedOnly)}
            onClick={() => onChange({ ...filters, status: damagedOnly ? undefined : [...damagedStatuses] })}
          >
            Damaged only
          </button>
          {statuses.map((s) => (
            <button key={s} type="button" aria-pressed={filters.status?.includes(s) ?? false} className={pill(filters.status?.includes(s) ?? false)} onClick={() => onChange({ ...filters, status: toggle(filters.status, s) })}>
              {frameStatusLabels[s]}
            </button>
          ))}
        </div>
        <div role="group" aria-label="Kind" className="flex items-center gap-1.5">
          <span className="text-xs text-muted">Kind</span>
          {kinds.map((k) => (
            <button key={k} type="button" aria-pressed={filters.kind?.includes(k) ?? false} className={pill(filters.kind?.includes(k) ?? false)} onClick={() => onChange({ ...filters, kind: toggle(filters.kind, k) })}>
              {k}
            </button>
          ))}
        </div>
        <select
          aria-label="Station"
          value={filters.station?.[0] ?? ''}
          onChange={(e) => onChange({ ...filters, station: e.target.value === '' ? undefined : [Number(e.target.value)] })}
          className={control}
        >
          <option value="">All stations</option>
          {[...stations].sort((a, b) => a.address - b.address).map((s) => (
            <option key={s.id} value={s.address}>
              {formatAddress(s.address)} {s.name}
            </option>
          ))}
        </select>
        <select aria-label="Link" value={filters.link?.[0] ?? ''} onChange={(e) => onChange({ ...filters, link: e.target.value === '' ? undefined : [e.target.value] })} className={control}>
          <option value="">All links</option>
          {links.map((l) => (
            <option key={l.channel} value={l.channel}>
              {l.label ? `${l.channel} — ${l.label}` : l.channel}
            </option>
          ))}
        </select>
        <form aria-label="Command and time range" onSubmit={applyRange} key={`${filters.from}|${filters.to}|${filters.command}`} className="flex flex-wrap items-center gap-2">
          <input name="command" aria-label="Commands" defaultValue={filters.command?.join(', ') ?? ''} placeholder="RR, UI…" className={`${control} w-24 font-mono`} />
          <input name="from" aria-label="From (s)" defaultValue={filters.from ?? ''} placeholder="from s" inputMode="decimal" className={`${control} w-24 font-mono`} />
          <input name="to" aria-label="To (s)" defaultValue={filters.to ?? ''} placeholder="to s" inputMode="decimal" className={`${control} w-24 font-mono`} />
          <Button type="submit" variant="secondary">
            Apply
          </Button>
        </form>
        {Object.keys(filters).length > 0 ? (
          <button type="button" className="text-sm text-link hover:underline" onClick={() => onChange({})}>
            Clear filters
          </button>
        ) : null}
      </div>
      {problems.from || problems.to || problems.station || problems.status || problems.command ? (
        <p className="text-xs text-danger">
          Some filters in this link were not understood and are ignored: {Object.values(problems).join(' ')}
        </p>
      ) : null}
    </div>
  );
}
