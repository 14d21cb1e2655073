/**
 * Intake: pure, database-free checks of uploaded boundaries and panels.
 * The ingest (lib/intake queries/service, worker) calls these and stores what they return.
 */
export { Utf8StreamDecoder, type EncodingProblem, type EncodingSummary } from "./encoding";
export { sniffDelimiter, sniffNewline, delimiterName, DELIMITERS, type Delimiter, type DelimiterGuess } from "./sniff";
export { parsePeriod, sortPeriods, yearPeriod, quarterPeriod, monthPeriod, type Period, type PeriodParse, type Granularity } from "./periods";
export { parseNumber, isMissingToken, type DecimalSeparator, type NumberParse } from "./numbers";
export { suggestMapping, requiredColumns, normaliseHeader, headerPeriod, periodColumnsOf, fileIndicatorCodes, indicatorFromFileName, type MappingSuggestion, type HeaderPeriod, type SuggestOptions } from "./mapping";
export { suggestTarget, matchCandidate, mismatchWarning, MATCH_SHARE, type TargetSuggestion, type TargetCandidate, type CandidateMatch } from "./version-target";
export { validatePanel, validatePanelStream, type ValidatePanelInput } from "./validate";
export { readPanelHeader, type PanelPreview } from "./preview";
export {
  loadBoundaries,
  inspectBoundaries,
  boundaryIds,
  BoundaryError,
  type LoadedBoundaries,
  type BoundarySummary,
  type BoundaryObjectSummary,
  type PropertySummary,
} from "./boundaries";
export { ROW_NUMBERING, type PanelReport, type IntakeProblem, type Observation, type DuplicateExample } from "./report";
export {
  validateCrosswalkCsv,
  CROSSWALK_SHARE_TOLERANCE,
  type CrosswalkCsvOptions,
  type CrosswalkCsvReport,
  type CrosswalkCsvLink,
} from "./crosswalk-csv";
export * from "./schemas";
