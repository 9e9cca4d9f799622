/**
 * Seisift's mark: a trace passing over a narrowing sieve. Drawn in the current text and accent
 * colours, so it follows the theme. Decorative: the product name is always written beside it.
 */
export function SeisiftMark({ size = 22 }: { size?: number }) {
  return (
    <svg width={size} height={size} viewBox="0 0 32 32" aria-hidden="true" focusable="false">
      <path
        d="M4 12h4l2-5 3 10 3-7 2 2h10"
        fill="none"
        stroke="var(--sf-accent)"
        strokeWidth="2.4"
        strokeLinecap="round"
        strokeLinejoin="round"
      />
      <path d="M6 19h20M9 23h14M12 27h8" fill="none" stroke="currentColor" strokeWidth="2.2" strokeLinecap="round" />
    </svg>
  );
}
