import type { ReactNode } from 'react';
import { LogoMark } from './logo-mark';

/** Frame for pages a signed-out visitor sees: sign-in, invitations, password reset. */
export function CenteredPage({ title, children, wide = false }: { title: string; children: ReactNode; wide?: boolean }) {
  return (
    <main className="flex min-h-screen flex-col items-center px-4 py-12">
      <div className="mb-6 flex items-center gap-2.5">
        <LogoMark className="h-9 w-9" />
        <span className="text-xl font-semibold tracking-tight">Flagline</span>
      </div>
      <div className={`w-full ${wide ? 'max-w-2xl' : 'max-w-md'} rounded-lg border border-line bg-surface p-6 shadow-sm`}>
        <h1 className="mb-4 text-lg font-semibold">{title}</h1>
        {children}
      </div>
    </main>
  );
}
