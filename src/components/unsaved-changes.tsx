import { useCallback, useEffect, useId, useState, useSyncExternalStore } from 'react';
import { useBlocker } from 'react-router';
import { Button } from './button';

// Forms with edits not yet saved say so here; one guard in the app layout asks before the user
// leaves the page (a link, the back button, closing the tab) and they would be lost. One guard,
// not one per form: the router allows a single blocker at a time.

const dirty = new Map<string, string>();
const listeners = new Set<() => void>();
let version = 0;

function publish() {
  version += 1;
  for (const l of listeners) l();
}

function subscribe(listener: () => void) {
  listeners.add(listener);
  return () => listeners.delete(listener);
}

/** What has unsaved edits right now, e.g. ["the field map “Envelope v2”"]. */
export function unsavedWork(): string[] {
  return [...new Set(dirty.values())];
}

/**
 * Registers a form's unsaved edits while `isDirty` holds. `what` names them in the question
 * ("the field map “Envelope”", "your note").
 */
export function useUnsavedChanges(isDirty: boolean, what: string): () => void {
  const id = useId();
  useEffect(() => {
    if (!isDirty) return;
    dirty.set(id, what);
    publish();
    return () => {
      dirty.delete(id);
      publish();
    };
  }, [id, isDirty, what]);
  // at once, for a save that navigates in the same breath (before the component re-renders clean)
  return useCallback(() => {
    if (dirty.delete(id)) publish();
  }, [id]);
}

/**
 * The same for an uncontrolled form: put `onChange` on the <form> (changes bubble up to it) and
 * call `saved()` once the server took it.
 */
export function useFormEdits(what: string) {
  const [edited, setEdited] = useState(false);
  const release = useUnsavedChanges(edited, what);
  return {
    onChange: () => setEdited(true),
    saved: () => {
      release();
      setEdited(false);
    },
  };
}

/** "a, b and c" */
export function joinWords(items: string[]): string {
  if (items.length <= 1) return items.join('');
  return `${items.slice(0, -1).join(', ')} and ${items[items.length - 1]}`;
}

/** Rendered once (app layout): asks before a navigation to another page drops unsaved edits. */
export function UnsavedChangesGuard() {
  useSyncExternalStore(subscribe, () => version);
  const work = unsavedWork();
  const pending = work.length > 0;
  // only leaving the page counts: views that keep their state in the search params change it freely
  const blocker = useBlocker(({ currentLocation, nextLocation }) => unsavedWork().length > 0 && currentLocation.pathname !== nextLocation.pathname);

  useEffect(() => {
    if (!pending) return;
    const warn = (event: BeforeUnloadEvent) => {
      event.preventDefault();
      // older browsers need a value here to show their own "leave site?" question
      event.returnValue = '';
    };
    window.addEventListener('beforeunload', warn);
    return () => window.removeEventListener('beforeunload', warn);
  }, [pending]);

  if (blocker.state !== 'blocked') return null;
  return (
    <div className="fixed inset-0 z-50 flex items-center justify-center bg-ink-950/40 p-4" onKeyDown={(e) => e.key === 'Escape' && blocker.reset()}>
      <div role="alertdialog" aria-modal="true" aria-labelledby="leave-title" aria-describedby="leave-text" className="w-full max-w-md rounded-lg border border-line bg-surface p-5 shadow-lg">
        <h2 id="leave-title" className="text-base font-semibold">
          Leave without saving?
        </h2>
        <p id="leave-text" className="mt-2 text-sm text-muted">
          {work.length ? `${joinWords(work).replace(/^./, (c) => c.toUpperCase())} ${work.length === 1 ? 'has' : 'have'} changes you have not saved.` : 'Some changes are not saved.'}{' '}
          If you leave this page now they are lost.
        </p>
        <div className="mt-4 flex flex-wrap justify-end gap-2">
          <Button autoFocus variant="secondary" onClick={() => blocker.reset()}>
            Stay on this page
          </Button>
          <Button variant="danger" onClick={() => blocker.proceed()}>
            Leave and lose the changes
          </Button>
        </div>
      </div>
    </div>
  );
}
