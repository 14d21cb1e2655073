// Tessera's mark: four tiles of a mosaic, one picked out in ochre.
export function LogoMark({ className = "h-6 w-6" }: { className?: string }) {
  return (
    <svg viewBox="0 0 24 24" className={className} aria-hidden="true">
      <rect x="2" y="2" width="9" height="9" rx="1.5" fill="currentColor" opacity="0.9" />
      <rect x="13" y="2" width="9" height="9" rx="1.5" fill="#c98a1b" />
      <rect x="2" y="13" width="9" height="9" rx="1.5" fill="currentColor" opacity="0.55" />
      <rect x="13" y="13" width="9" height="9" rx="1.5" fill="currentColor" opacity="0.75" />
    </svg>
  );
}

export function Wordmark({ className = "" }: { className?: string }) {
  return (
    <span className={`inline-flex items-center gap-2 font-semibold tracking-wide ${className}`}>
      <LogoMark />
      <span>Tessera</span>
    </span>
  );
}
