import { useCallback, useMemo } from 'react';
import { useSearchParams } from 'react-router';
import { filterParamNames, filterSearch, filtersFromParams, type TimelineFilters } from '../api/timeline-filters';

/**
 * The view state a copied link must reproduce: filters, the scroll anchor (`at`, seconds of the
 * top row) and the selected frame (`sel`). Everything else is derived.
 */
/** The address bar's params: the scroll anchor is written there directly (see setAnchor), so it can be newer than the router's. */
function liveParams(): URLSearchParams {
  return new URLSearchParams(window.location.search);
}

/**
 * The scroll anchor changes on every scroll; going through the router would re-render the app
 * (and rerun loaders) each time. It is written straight into the current history entry,
 * keeping the router's own entry state, and read back from the address bar when needed.
 */
function setAnchor(t: number): void {
  const params = liveParams();
  params.set('at', t.toFixed(6));
  window.history.replaceState(window.history.state, '', `${window.location.pathname}?${params}`);
}

function currentAt(): number | null {
  const v = liveParams().get('at');
  return v === null || !Number.isFinite(Number(v)) ? null : Number(v);
}

export function useTimelineUrl() {
  const [params, setParams] = useSearchParams();
  const key = filterParamNames.map((k) => params.get(k) ?? '').join('|');
  // keyed on the filter parameters only: moving the cursor (at, sel) keeps the same filters object
  // eslint-disable-next-line react-hooks/exhaustive-deps
  const { filters, problems } = useMemo(() => filtersFromParams(params), [key]);
  const at = params.get('at') === null ? null : Number(params.get('at'));
  const sel = params.get('sel') === null ? null : Number(params.get('sel'));

  const setFilters = useCallback(
    (next: TimelineFilters) => {
      setParams(
        () => {
          const out = filterSearch(next);
          const live = liveParams();
          const a = live.get('at');
          const s = live.get('sel');
          if (a) out.set('at', a);
          if (s) out.set('sel', s);
          return out;
        },
        { replace: false },
      );
    },
    [setParams],
  );

  /** the selection: replaces the history entry instead of piling them up */
  const setView = useCallback(
    (view: { at?: number | null; sel?: number | null }) => {
      setParams(
        () => {
          const out = liveParams();
          if (view.at !== undefined) {
            if (view.at === null) out.delete('at');
            else out.set('at', view.at.toFixed(6));
          }
          if (view.sel !== undefined) {
            if (view.sel === null) out.delete('sel');
            else out.set('sel', String(view.sel));
          }
          return out;
        },
        { replace: true, preventScrollReset: true },
      );
    },
    [setParams],
  );

  return { setAnchor, currentAt, filters, problems, at: at !== null && Number.isFinite(at) ? at : null, sel: sel !== null && Number.isFinite(sel) ? sel : null, setFilters, setView, search: params.toString() };
}
