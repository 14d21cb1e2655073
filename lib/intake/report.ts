/**
 * Shapes of the panel validation report and of the clean observations the
 * validator streams out. Plain JSON-serialisable objects: the report is stored
 * as-is with an upload and printed by the CLI.
 */
import type { Delimiter } from "./sniff";
import type { Granularity } from "./periods";
import type { ColumnMapping, PanelLayout } from "./schemas";
import type { DecimalSeparator } from "./numbers";
import type { RatesReport } from "./rates";

/**
 * One problem, located. `row` is the 1-based data row: row 1 is the first line
 * after the header, row 0 is the header itself, and null means the whole file.
 * Blank lines are counted, so row N is file line N+1 unless a quoted value
 * spans lines. `column` is the header name, or null when no single column is at fault.
 */
export interface IntakeProblem {
  row: number | null;
  column: string | null;
  message: string;
}

export interface DuplicateExample {
  region: string;
  period: string;
  indicator: string;
  /** The row that first gave this (region, period, indicator). */
  firstRow: number;
  /** The row repeating it. */
  row: number;
}

export type { Observation } from "./observation";

export interface PanelReport {
  /** True when the panel can be published: no errors (warnings allowed). */
  ok: boolean;
  rowNumbering: string;
  encoding: { name: "utf-8"; bom: boolean; invalidByteSequences: number };
  delimiter: Delimiter | null;
  delimiterDetected: boolean;
  decimal: DecimalSeparator;
  layout: PanelLayout | null;
  mapping: ColumnMapping | null;
  header: string[];
  /** Data rows read (header and blank lines excluded). */
  rows: number;
  blankRows: number;
  /** Clean observations emitted (missing-value cells included, with value null). */
  observations: number;
  granularity: Granularity | null;
  regions: {
    /** Boundary ids found in the panel (null when no boundary ids were given). */
    matched: number | null;
    /** Distinct region codes in the panel. */
    inPanel: number;
    inPanelNotInBoundaries: string[];
    inPanelNotInBoundariesCount: number;
    inBoundariesNotInPanel: string[];
    inBoundariesNotInPanelCount: number;
  };
  /** Period labels in time order. */
  periods: string[];
  /** Indicator codes in first-seen order. */
  indicators: string[];
  duplicates: { count: number; examples: DuplicateExample[] };
  /** Cells given as missing (empty, NA, "..", "-", …), per indicator. Never read as zero. */
  missing: Record<string, number>;
  /** The same per indicator and period key. */
  missingByPeriod: Record<string, Record<string, number>>;
  /** (region, period) pairs with no row at all for an indicator, over the known regions and the panel's periods. */
  absent: Record<string, number>;
  errors: IntakeProblem[];
  errorCount: number;
  warnings: IntakeProblem[];
  warningCount: number;
  /**
   * Rate declarations in force (from the file's `# rate:` lines or the
   * workspace's indicator records), whether each rate was derived, and the
   * problems of their cells by region, period and indicator. Absent from
   * reports stored before rates existed.
   */
  rates?: RatesReport;
}

export const ROW_NUMBERING =
  "row 1 is the first data line after the header; row 0 is the header; blank lines are counted; null means the whole file";
