/**
 * Two periods shown side by side always read earlier → later: left and
 * "from" is the earlier one, whatever order a link or URL gave them in. Pure;
 * shared by the compare route and the map and comparison screens.
 */

/**
 * Whether period `x` comes before `y`: by position in the run's periods (time
 * order, lib/runs/service resolveRunParams) when both are among them, else as
 * text (period keys such as 2019, 2019-Q3, 2019-07 sort correctly as text).
 */
function before(periods: readonly string[], x: string, y: string): boolean {
  const i = periods.indexOf(x);
  const j = periods.indexOf(y);
  if (i >= 0 && j >= 0) return i < j;
  return x < y;
}

/** The two periods as [earlier, later]. Equal periods, and a pair with one not yet known (""), come back as they are. */
export function periodsInOrder(periods: readonly string[], a: string, b: string): [earlier: string, later: string] {
  if (a === "" || b === "") return [a, b];
  return before(periods, b, a) ? [b, a] : [a, b];
}

/**
 * The pair a screen shows for the URL's `a` and `b` (either may be absent):
 * `a` defaults to the first period; `b` to the last period, or the first when
 * `a` is the last; then ordered earlier → later.
 */
export function periodPair(periods: readonly string[], a: string | null, b: string | null): { earlier: string; later: string } {
  const first = periods[0] ?? "";
  const last = periods[periods.length - 1] ?? "";
  const x = a ?? first;
  const y = b ?? (x === last ? first : last);
  const [earlier, later] = periodsInOrder(periods, x, y);
  return { earlier, later };
}
