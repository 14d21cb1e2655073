/**
 * A clean observation, ready for the store (COPY). `value` null means the cell
 * was given as missing. Its own module so that the report and the rate checks
 * (which the report's types also use) share it without importing each other.
 */
export interface Observation {
  region: string;
  periodKey: string;
  indicator: string;
  value: number | null;
  /** Data row it came from (same numbering as problems), for tracing. */
  row: number;
}
