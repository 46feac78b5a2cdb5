import type { ReactNode } from 'react';
import { errorText } from '../lib/error-text';

export function ErrorNotice({ error, children }: { error?: unknown; children?: ReactNode }) {
  if (!error && !children) return null;
  return (
    <div role="alert" className="rounded-md border border-danger/40 bg-danger-soft px-3 py-2 text-sm text-danger">
      {children ?? errorText(error)}
    </div>
  );
}

export function SuccessNotice({ children }: { children: ReactNode }) {
  return (
    <div role="status" className="rounded-md border border-ok/40 bg-ok-soft px-3 py-2 text-sm text-ok">
      {children}
    </div>
  );
}
