import { Suspense } from 'react';
import { Outlet, useNavigation } from 'react-router';
import { AppHeader } from './app-header';

export function AppLayout() {
  const navigation = useNavigation();
  return (
    <div className="min-h-screen">
      <AppHeader />
      <div
        aria-hidden
        className={`h-0.5 bg-flare-500 transition-opacity ${navigation.state === 'loading' ? 'animate-pulse opacity-100' : 'opacity-0'}`}
      />
      <main className="mx-auto max-w-6xl px-4 py-6">
        <Suspense fallback={<p className="text-sm text-muted">Loading…</p>}>
          <Outlet />
        </Suspense>
      </main>
    </div>
  );
}
