import { Suspense } from 'react';
import { Outlet, useMatches, useNavigation } from 'react-router';
import { UnsavedChangesGuard } from '../../components/unsaved-changes';
import { AppHeader } from './app-header';

/** A route whose handle says `{ wide: true }` (the timeline) gets the window's width for its columns. */
export interface LayoutHandle {
  wide?: boolean;
}

export function AppLayout() {
  const navigation = useNavigation();
  const wide = useMatches().some((m) => (m.handle as LayoutHandle | undefined)?.wide);
  return (
    <div className="min-h-screen">
      <AppHeader wide={wide} />
      <UnsavedChangesGuard />
      <div
        aria-hidden
        className={`h-0.5 bg-flare-500 transition-opacity ${navigation.state === 'loading' ? 'animate-pulse opacity-100' : 'opacity-0'}`}
      />
      <main className={`mx-auto px-4 py-6 ${wide ? 'max-w-[120rem]' : 'max-w-6xl'}`}>
        <Suspense fallback={<p className="text-sm text-muted">Loading…</p>}>
          <Outlet />
        </Suspense>
      </main>
    </div>
  );
}

/** The first paint of a full page load, while the session and the page's data are read. */
export function AppLoading() {
  return (
    <div className="min-h-screen">
      <div className="h-14 border-b border-ink-800 bg-ink-900" />
      <p role="status" className="mx-auto max-w-6xl px-4 py-6 text-sm text-muted">
        Loading…
      </p>
    </div>
  );
}
