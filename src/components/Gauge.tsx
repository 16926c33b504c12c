/** Panelproof's mark: a round dial with a single pointer. */
export function Gauge({ className = "" }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} aria-hidden="true">
      <rect x="1" y="1" width="30" height="30" rx="6" fill="#23292e" />
      <circle cx="16" cy="16" r="10" fill="none" stroke="#e7e2d6" strokeWidth="1.6" />
      {[...Array(9)].map((_, i) => {
        const a = ((-225 + i * 33.75) * Math.PI) / 180;
        return (
          <line key={i} x1={16 + 8 * Math.cos(a)} y1={16 + 8 * Math.sin(a)} x2={16 + 10 * Math.cos(a)} y2={16 + 10 * Math.sin(a)} stroke="#e7e2d6" strokeWidth="1" />
        );
      })}
      <path d="M16 16 L22.5 9.5" stroke="#e0a526" strokeWidth="2.2" strokeLinecap="round" />
      <circle cx="16" cy="16" r="1.8" fill="#e7e2d6" />
    </svg>
  );
}
