import type { ClassPattern } from "@/lib/runs/class-patterns";
import { patternKey } from "@/lib/runs/class-patterns";

/** The marks of one pattern tile, drawn over its background. */
function Marks({ pattern }: { pattern: ClassPattern }) {
  const { size: s, ink, mark } = pattern;
  switch (mark) {
    case "none":
      return null;
    case "dots":
      return <circle cx={s / 2} cy={s / 2} r={s / 5} fill={ink} />;
    case "horizontal":
      return <line x1={0} y1={s / 2} x2={s} y2={s / 2} stroke={ink} strokeWidth={1.2} />;
    case "diagonal":
      return <line x1={0} y1={s} x2={s} y2={0} stroke={ink} strokeWidth={1.1} />;
    case "anti-diagonal":
      return <line x1={0} y1={0} x2={s} y2={s} stroke={ink} strokeWidth={1.6} />;
    case "cross":
      return (
        <>
          <line x1={0} y1={s / 2} x2={s} y2={s / 2} stroke={ink} strokeWidth={0.9} />
          <line x1={s / 2} y1={0} x2={s / 2} y2={s} stroke={ink} strokeWidth={0.9} />
        </>
      );
  }
}

/** The <pattern> definitions of a set of classes, ids `${prefix}-${class}` (prefix unique per SVG). */
export function ClassPatternDefs({ prefix, patterns }: { prefix: string; patterns: Readonly<Record<string, ClassPattern>> }) {
  return (
    <>
      {Object.entries(patterns).map(([cls, p]) => (
        <pattern key={cls} id={`${prefix}-${patternKey(cls)}`} width={p.size} height={p.size} patternUnits="userSpaceOnUse">
          <rect width={p.size} height={p.size} fill={p.background} />
          <Marks pattern={p} />
        </pattern>
      ))}
    </>
  );
}

/** The fill referring to a class's pattern inside the same SVG. */
export function patternFill(prefix: string, cls: string): string {
  return `url(#${prefix}-${patternKey(cls)})`;
}

/** A legend swatch: the class's colour with its pattern (decorative; the legend names the class). */
export function PatternSwatch({ pattern, id }: { pattern: ClassPattern; id: string }) {
  const prefix = `swatch-${id.replace(/[^A-Za-z0-9_-]/g, "")}`;
  return (
    <svg width={14} height={14} aria-hidden="true" focusable="false" className="inline-block shrink-0 rounded-sm border border-ink-200 align-middle">
      <defs>
        <ClassPatternDefs prefix={prefix} patterns={{ c: pattern }} />
      </defs>
      <rect width={14} height={14} fill={patternFill(prefix, "c")} />
    </svg>
  );
}
