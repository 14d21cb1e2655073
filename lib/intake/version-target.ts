/**
 * Where a new upload should go by default: a new boundary set (or panel), or
 * a new version of an existing one. A file only proposes "new version of X"
 * when its codes match X; an unrelated file starts something new, so a first
 * upload can never silently become the next version of someone else's data.
 *
 * The rule (one for both kinds): a file matches an existing set when at least
 * half of the file's distinct codes are codes of that set's latest version
 * (region codes for boundaries, indicator codes for panels; a panel's latest
 * version is its latest one with a validation report). Among matching
 * sets the one with the largest share wins, then the one with more codes in
 * common, then the newest. Pure: the caller loads the codes.
 */

/** Share of the new file's codes that must belong to a set's latest version for the file to match it. */
export const MATCH_SHARE = 0.5;

export interface TargetCandidate {
  id: number;
  name: string;
  /** Number of the latest version whose codes are given (null when the set has no usable version yet). */
  version: number | null;
  codes: Iterable<string>;
}

export interface CandidateMatch {
  id: number;
  name: string;
  version: number | null;
  /** Distinct codes of the new file that are codes of the candidate's latest version. */
  matched: number;
  /** Distinct codes in the new file. */
  total: number;
  /** matched / total (0 when the file has no codes). */
  share: number;
  matches: boolean;
}

export interface TargetSuggestion {
  /** "new": start a new set (or panel); "version": a new version of `target`. */
  choice: "new" | "version";
  target: CandidateMatch | null;
  /** Every existing set with its overlap, in the order given, so a screen can say how few codes match a set the user picks. */
  candidates: CandidateMatch[];
  /** The rule in one sentence, for the screen. */
  rule: string;
}

export function matchRule(what: "region" | "indicator"): string {
  return `A file is proposed as a new version of a set only when at least ${Math.round(MATCH_SHARE * 100)}% of its ${what} codes are ${what} codes of that set's latest version; otherwise it starts a new one.`;
}

/** Overlap of the file's codes with one candidate. */
export function matchCandidate(fileCodes: ReadonlySet<string>, candidate: TargetCandidate): CandidateMatch {
  const codes = candidate.codes instanceof Set ? (candidate.codes as ReadonlySet<string>) : new Set(candidate.codes);
  let matched = 0;
  for (const code of fileCodes) if (codes.has(code)) matched += 1;
  const total = fileCodes.size;
  const share = total === 0 ? 0 : matched / total;
  return { id: candidate.id, name: candidate.name, version: candidate.version, matched, total, share, matches: total > 0 && share >= MATCH_SHARE };
}

/**
 * Suggests where a file with `fileCodes` goes among `candidates`.
 * @example suggestTarget(["A", "B"], [{ id: 1, name: "Districts", version: 2, codes: ["A", "B", "C"] }], "region").choice // "version"
 */
export function suggestTarget(fileCodes: Iterable<string>, candidates: readonly TargetCandidate[], what: "region" | "indicator"): TargetSuggestion {
  const codes = new Set([...fileCodes].map((code) => code.trim()).filter((code) => code !== ""));
  const matches = candidates.map((candidate) => matchCandidate(codes, candidate));
  let best: CandidateMatch | null = null;
  for (const match of matches) {
    if (!match.matches) continue;
    if (best === null || match.share > best.share || (match.share === best.share && (match.matched > best.matched || (match.matched === best.matched && match.id > best.id)))) best = match;
  }
  return { choice: best === null ? "new" : "version", target: best, candidates: matches, rule: matchRule(what) };
}

/** The sentence a confirmation shows when the user picks a set the file does not match. */
export function mismatchWarning(match: CandidateMatch, what: "region" | "indicator"): string {
  const pct = Math.round(match.share * 100);
  const version = match.version === null ? "" : ` v${match.version}`;
  if (match.version === null) return `'${match.name}' has no validated version yet, so none of this file's ${match.total} ${what} codes can be matched with it.`;
  return match.total === 0
    ? `This file has no ${what} codes to compare with '${match.name}'${version}.`
    : `Only ${match.matched} of the file's ${match.total} ${what} codes (${pct}%) are ${what} codes of '${match.name}'${version}.`;
}
