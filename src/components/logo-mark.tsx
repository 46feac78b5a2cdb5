/**
 * Our mark: a pennant on a pole standing in a line of bits — a flag on the wire.
 * Same drawing as public/favicon.svg.
 */
export function LogoMark({ className = 'h-8 w-8', title }: { className?: string; title?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} role={title ? 'img' : undefined} aria-hidden={title ? undefined : true}>
      {title ? <title>{title}</title> : null}
      <rect width="32" height="32" rx="7" fill="#111a2e" />
      <path
        d="M3.5 24.5H8.5V20.5H12.5V24.5H19.5V20.5H24V24.5H28.5"
        fill="none"
        stroke="#3cbcb0"
        strokeWidth="2.2"
        strokeLinecap="round"
        strokeLinejoin="round"
      />
      <path d="M15 24.5V5.5" stroke="#e6ebf2" strokeWidth="2.2" strokeLinecap="round" />
      <path d="M16 5.3L27 9.8L16 14.3Z" fill="#f2a93b" />
    </svg>
  );
}
