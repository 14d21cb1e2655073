/**
 * A row of mutually exclusive buttons read as one radio group (the map's
 * local view, its rate layer): the chosen one filled, the others plain.
 */
export function SegmentedSwitch<T extends string>({
  options,
  names,
  value,
  onChange,
  label,
  testId,
  tone,
}: {
  options: readonly T[];
  names: Readonly<Record<T, string>>;
  value: T;
  onChange: (option: T) => void;
  /** The group's accessible name. */
  label: string;
  testId: string;
  /** Ink for a choice of view, ochre for a choice of values. */
  tone: "ink" | "ochre";
}) {
  const chosen = tone === "ink" ? "bg-ink text-white" : "bg-ochre-700 text-white";
  const plain = tone === "ink" ? "text-ink-600 hover:bg-ink-50" : "text-ink-600 hover:bg-ochre-50";
  return (
    <div role="radiogroup" aria-label={label} className="inline-flex rounded-md border border-ink-200 bg-white p-0.5 text-sm" data-testid={testId}>
      {options.map((option) => (
        <button
          key={option}
          type="button"
          role="radio"
          aria-checked={value === option}
          onClick={() => onChange(option)}
          data-option={option}
          className={`rounded px-3 py-1 ${value === option ? chosen : plain}`}
        >
          {names[option]}
        </button>
      ))}
    </div>
  );
}
