/**
 * Decorative cross-section for the sign-in panel: trenches of several widths etched to different depths under
 * one mask, the wide openings deepest (aspect-ratio dependent etching, drawn schematically, not to scale).
 */
export function TrenchFigure() {
  const trenches = [
    { x: 24, w: 10, d: 70 },
    { x: 54, w: 14, d: 96 },
    { x: 90, w: 20, d: 122 },
    { x: 134, w: 30, d: 146 },
    { x: 190, w: 46, d: 160 },
  ];
  const top = 48;
  return (
    <svg viewBox="0 0 260 230" className="w-full max-w-md" role="img" aria-label="Schematic cross-section: wider trenches etch deeper">
      <defs>
        <linearGradient id="si" x1="0" y1="0" x2="0" y2="1">
          <stop offset="0" stopColor="#28394a" />
          <stop offset="1" stopColor="#111c26" />
        </linearGradient>
      </defs>
      <rect x="8" y={top} width="244" height="170" rx="4" fill="url(#si)" />
      {trenches.map((t) => (
        <path
          key={t.x}
          d={`M${t.x} ${top} L${t.x + t.w} ${top} L${t.x + t.w - 1.5} ${top + t.d - 4} Q${t.x + t.w / 2} ${top + t.d + 2} ${t.x + 1.5} ${top + t.d - 4} Z`}
          fill="#0b1219"
          stroke="#4fa39b"
          strokeOpacity="0.55"
          strokeWidth="1"
        />
      ))}
      {[8, ...trenches.map((t) => t.x + t.w)].map((x, i) => {
        const next = trenches[i]?.x ?? 252;
        return <rect key={x} x={x} y={top - 12} width={next - x} height="12" rx="1.5" fill="#d9925f" />;
      })}
      {trenches.map((t) => (
        <line key={`d${t.x}`} x1={t.x + t.w / 2} x2={t.x + t.w / 2} y1={top + t.d + 8} y2={top + t.d + 8} stroke="#e7b48f" />
      ))}
      <path d={`M16 ${top + 64} L252 ${top + 170}`} stroke="#e7b48f" strokeDasharray="3 4" strokeOpacity="0.5" />
    </svg>
  );
}
