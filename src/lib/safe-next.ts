/** Only same-site paths are followed after sign-in, so a crafted link cannot send users elsewhere. */
export function safeNext(next: string | null): string {
  if (!next || !next.startsWith('/') || next.startsWith('//') || next.startsWith('/\\')) return '/';
  return next;
}
