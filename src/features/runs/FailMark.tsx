/**
 * The mark drawn over a failing element on a panel drawing: a dashed frame, a corner flag and
 * the element's label, so failure reads by shape and words as well as colour. The text never
 * runs wider than the frame (two neighbouring gauges' labels used to run into each other): a
 * label a little too long is squeezed, a much longer one gives way to the count of failing
 * elements (the drawing names each element under it, and the list beside it names them all).
 */
export function FailMark({ cell: c, x, y, labels, prefix, testId }: { cell: number; x: number; y: number; labels: string[]; prefix: string; testId: string }) {
  const fontSize = c * 0.16;
  const width = c * 1.15;
  // Monospace: about 0.6 of the font size per character.
  const widthOf = (t: string) => t.length * fontSize * 0.6;
  let text = `${prefix} ${labels.join(", ")}`;
  if (widthOf(text) > width / 0.75) text = labels.length > 1 ? `${prefix} ×${labels.length}` : prefix;
  const natural = widthOf(text);
  return (
    <g transform={`translate(${x} ${y})`} data-testid={testId}>
      <rect x={-c * 0.6} y={-c * 0.6} width={c * 1.2} height={c * 1.25} fill="none" stroke="#c4473c" strokeWidth={c * 0.05} strokeDasharray={`${c * 0.12} ${c * 0.06}`} />
      <path d={`M ${c * 0.42} ${-c * 0.6} l ${c * 0.18} 0 l 0 ${c * 0.18} z`} fill="#c4473c" />
      <text
        x={0}
        y={-c * 0.66}
        textAnchor="middle"
        fontSize={fontSize}
        fontWeight={700}
        fill="#fbfaf6"
        stroke="#c4473c"
        strokeWidth={c * 0.05}
        paintOrder="stroke"
        fontFamily="ui-monospace, monospace"
        textLength={natural > width ? width : undefined}
        lengthAdjust="spacingAndGlyphs"
      >
        {text}
      </text>
    </g>
  );
}
