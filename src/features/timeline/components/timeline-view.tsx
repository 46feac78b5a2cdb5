import { useEffect, useRef, useState } from 'react';
import { useNavigate } from 'react-router';
import type { CaptureSummaryRow, RigDetail, TimelineFrame } from '../../../../shared/schemas';
import { ErrorNotice } from '../../../components/notice';
import { formatCount } from '../../../components/units';
import { fetchDamagedNeighbour } from '../api/damaged-neighbour';
import { timelineExportUrl, useCursorAt, useTimelineCount } from '../api/get-timeline';
import { ExportLinks } from '../../../components/export-links';
import type { TimelineFilters } from '../api/timeline-filters';
import { TimelineFilterBar } from './timeline-filter-bar';
import { TimelineTable } from './timeline-table';
import { useTimelineUrl } from './use-timeline-url';
import { captureScope } from '../../../lib/scope';

/** Screen 5: every frame and line event in time order, filtered, searchable, driven from the keyboard. */
export function TimelineView({ rig, capture }: { rig: RigDetail; capture: CaptureSummaryRow }) {
  const url = useTimelineUrl();
  const navigate = useNavigate();
  // where the list starts: the URL's anchor when the page opens, later an explicit jump
  const [jump, setJump] = useState<{ t: number | null; n: number }>({ t: url.at, n: 0 });
  const [reveal, setReveal] = useState<number | null>(url.sel);
  const [message, setMessage] = useState<string | null>(null);
  const [navError, setNavError] = useState<unknown>(null);
  const cursorAt = useCursorAt(rig.id, capture.id, url.filters, jump.t);
  const count = useTimelineCount(rig.id, capture.id, url.filters);
  const searchRef = useRef<HTMLInputElement>(null);
  // a jump remounts the list; when the keys were driving it, the new list takes the focus back
  const [refocus, setRefocus] = useState(false);
  // the URL catches up a moment after a click; keys pressed right after it use the newest selection
  const selected = useRef<number | null>(url.sel);
  useEffect(() => {
    selected.current = url.sel;
  }, [url.sel]);
  const select = (id: number) => {
    selected.current = id;
    url.setView({ sel: id });
  };
  const base = `${captureScope(rig.id, capture.id).page}`;
  const waitingForCursor = jump.t !== null && jump.t > 0 && !cursorAt.isSuccess;
  const start = jump.t !== null && jump.t > 0 ? (cursorAt.data?.cursor ?? null) : null;
  const links = capture.settings?.links ?? [];
  const linkLabels = Object.fromEntries(links.map((l) => [l.channel, l.label]));

  useEffect(() => {
    function onKey(e: KeyboardEvent) {
      const target = e.target as HTMLElement;
      if (e.key === '/' && !['INPUT', 'TEXTAREA', 'SELECT'].includes(target.tagName)) {
        e.preventDefault();
        searchRef.current?.focus();
        searchRef.current?.select();
      }
    }
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, []);

  function open(frame: TimelineFrame) {
    select(frame.id);
    const back = new URLSearchParams(window.location.search);
    back.set('sel', String(frame.id));
    navigate(`${base}/frames/${frame.id}`, { state: { timelineSearch: `?${back}` } });
  }

  async function damaged(dir: 'next' | 'prev') {
    const from = selected.current;
    if (from === null) return setMessage('Select a frame first (click a row), then press n or p.');
    const keysInList = Boolean(document.activeElement?.closest('[data-testid="timeline-scroller"]'));
    setMessage(null);
    setNavError(null);
    try {
      const found = await fetchDamagedNeighbour(rig.id, capture.id, from, dir);
      if (!found) {
        return setMessage(dir === 'next' ? 'No later damaged frame: none follows the selected one.' : 'No earlier damaged frame: none comes before the selected one.');
      }
      selected.current = found.id;
      url.setView({ sel: found.id, at: found.t });
      setReveal(found.id);
      // a frame outside the loaded pages: start the list a little before it
      const loaded = document.querySelector(`[data-frame-id="${found.id}"]`);
      if (!loaded) {
        setRefocus(keysInList);
        setJump((j) => ({ t: found.t, n: j.n + 1 }));
      }
    } catch (error) {
      setNavError(error);
    }
  }

  function changeFilters(next: TimelineFilters) {
    setRefocus(false);
    url.setFilters(next);
    setJump((j) => ({ t: url.currentAt(), n: j.n + 1 }));
  }

  return (
    <div className="space-y-3">
      <TimelineFilterBar
        filters={url.filters}
        problems={url.problems}
        stations={rig.stations}
        links={links}
        searchRef={searchRef}
        onChange={changeFilters}
        onJump={(t) => {
          setRefocus(false);
          url.setView({ at: t });
          setJump((j) => ({ t, n: j.n + 1 }));
        }}
      />
      <div className="flex flex-wrap items-center justify-between gap-2 text-xs text-muted">
        <span className="flex flex-wrap items-center gap-3">
          <span data-testid="match-count">
            {count.data ? `${formatCount(count.data.count)} ${count.data.count === 1 ? 'row matches' : 'rows match'}` : count.error ? 'Could not count the rows' : 'Counting…'}
          </span>
          <ExportLinks href={(format) => timelineExportUrl(rig.id, capture.id, url.filters, format)} what="the frames that match these filters" />
        </span>
        <span>
          <kbd className="font-mono">↑ ↓</kbd> move · <kbd className="font-mono">Enter</kbd> open · <kbd className="font-mono">n</kbd>/
          <kbd className="font-mono">p</kbd> next/previous damaged frame · <kbd className="font-mono">/</kbd> search
        </span>
      </div>
      {message ? <p className="rounded-md bg-raised px-3 py-1.5 text-sm" role="status">{message}</p> : null}
      {navError ? <ErrorNotice error={navError} /> : null}
      {cursorAt.error ? <ErrorNotice error={cursorAt.error} /> : null}
      {waitingForCursor ? (
        <p className="text-sm text-muted">Finding {jump.t?.toFixed(6)} s…</p>
      ) : (
        <TimelineTable
          key={`${start ?? 'start'}-${jump.n}`}
          rigId={rig.id}
          captureId={capture.id}
          filters={url.filters}
          start={start}
          selectedId={url.sel}
          revealId={reveal}
          linkLabels={linkLabels}
          onSelect={(f) => select(f.id)}
          onOpen={open}
          onAnchor={url.setAnchor}
          onDamaged={(dir) => void damaged(dir)}
          focusOnMount={refocus}
        />
      )}
    </div>
  );
}
