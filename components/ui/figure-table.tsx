"use client";

import { useId, useState } from "react";

export type FigureColumn = { key: string; label: string; numeric?: boolean };
export type FigureRow = Record<string, string | number | null>;

/**
 * The text alternative of a figure (map, scatter plot, chart): a summary
 * sentence always shown, and a "Table" toggle button that shows the figure's
 * numbers as a table below it (regions with value, class and p; a chart's series).
 * The table scrolls inside a focusable region so keyboard users can scroll it.
 */
export function FigureTable({
  summary,
  caption,
  columns,
  rows,
  testId,
}: {
  summary: string;
  /** The table's caption: what the figure is. */
  caption: string;
  columns: readonly FigureColumn[];
  rows: readonly FigureRow[];
  testId?: string;
}) {
  const [open, setOpen] = useState(false);
  const tableId = useId();
  return (
    <div className="mt-3 space-y-2" data-testid={testId ? `${testId}-alternative` : undefined}>
      <div className="flex items-start justify-between gap-3">
        <p className="text-xs leading-relaxed text-ink-600" data-testid={testId ? `${testId}-summary` : undefined}>
          {summary}
        </p>
        <button
          type="button"
          aria-pressed={open}
          aria-controls={tableId}
          aria-label={`Table: ${caption}`}
          onClick={() => setOpen((v) => !v)}
          className="shrink-0 rounded-md border border-ink-200 bg-white px-2.5 py-1 text-xs font-medium text-ink-700 hover:bg-ink-50"
        >
          Table
        </button>
      </div>
      <div id={tableId} hidden={!open}>
        {open ? (
          <div role="region" aria-label={`${caption} (table)`} tabIndex={0} className="max-h-80 overflow-auto rounded-md border border-ink-100">
            <table className="w-full text-left text-xs" data-testid={testId ? `${testId}-table` : undefined}>
              <caption className="sr-only">{caption}</caption>
              <thead className="sticky top-0 bg-ink-50 text-ink-700">
                <tr>
                  {columns.map((c) => (
                    <th key={c.key} scope="col" className={`px-2 py-1.5 font-semibold ${c.numeric ? "text-right" : ""}`}>
                      {c.label}
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody className="divide-y divide-ink-50">
                {rows.map((r, i) => (
                  <tr key={i}>
                    {columns.map((c, j) =>
                      j === 0 ? (
                        <th key={c.key} scope="row" className="px-2 py-1 font-normal text-ink">
                          {r[c.key] ?? "—"}
                        </th>
                      ) : (
                        <td key={c.key} className={`px-2 py-1 text-ink-700 ${c.numeric ? "text-right tabular-nums" : ""}`}>
                          {r[c.key] ?? "—"}
                        </td>
                      ),
                    )}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        ) : null}
      </div>
    </div>
  );
}
