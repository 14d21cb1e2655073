import { MATCH_SHARE, matchCandidate, mismatchWarning, suggestTarget, type TargetCandidate } from "@/lib/intake";

const districts: TargetCandidate = { id: 1, name: "Districts", version: 3, codes: ["D1", "D2", "D3", "D4"] };
const municipalities: TargetCandidate = { id: 2, name: "Municipalities", version: 1, codes: ["M1", "M2", "M3", "M4", "M5", "M6"] };

describe("suggestTarget: a new set unless the file's codes match an existing set", () => {
  test("the rule is at least half of the file's codes", () => {
    expect(MATCH_SHARE).toBe(0.5);
  });

  test("a first upload in a workspace starts a new set", () => {
    expect(suggestTarget(["D1", "D2"], [], "region")).toMatchObject({ choice: "new", target: null, candidates: [] });
  });

  test("codes unrelated to every set: new set, with the overlap of each set listed", () => {
    const suggestion = suggestTarget(["X1", "X2", "X3", "D1"], [districts, municipalities], "region");
    expect(suggestion.choice).toBe("new");
    expect(suggestion.target).toBeNull();
    expect(suggestion.candidates.map((c) => [c.name, c.matched, c.total, c.matches])).toEqual([
      ["Districts", 1, 4, false],
      ["Municipalities", 0, 4, false],
    ]);
    expect(suggestion.rule).toMatch(/at least 50% of its region codes are region codes of that set's latest version/);
  });

  test("exactly half matches; just under half does not", () => {
    expect(suggestTarget(["D1", "D2", "X1", "X2"], [districts], "region")).toMatchObject({ choice: "version", target: { id: 1, matched: 2, total: 4, share: 0.5 } });
    expect(suggestTarget(["D1", "D2", "X1", "X2", "X3"], [districts], "region").choice).toBe("new");
  });

  test("a revised map (a region split, one added) proposes a new version of its set", () => {
    const suggestion = suggestTarget(["D1", "D2", "D3", "D4a", "D4b"], [municipalities, districts], "region");
    expect(suggestion).toMatchObject({ choice: "version", target: { id: 1, name: "Districts", version: 3, matched: 3, total: 5 } });
  });

  test("several matching sets: largest share, then most codes in common, then newest", () => {
    const a: TargetCandidate = { id: 10, name: "A", version: 1, codes: ["1", "2", "3"] };
    const b: TargetCandidate = { id: 11, name: "B", version: 1, codes: ["1", "2", "3", "4"] };
    expect(suggestTarget(["1", "2", "3", "4"], [a, b], "region").target?.name).toBe("B");
    const c: TargetCandidate = { id: 12, name: "C", version: 2, codes: ["1", "2", "3", "4"] };
    expect(suggestTarget(["1", "2", "3", "4"], [b, c], "region").target?.name).toBe("C");
  });

  test("codes are compared trimmed and exactly (leading zeros matter), duplicates count once", () => {
    const padded: TargetCandidate = { id: 3, name: "Padded", version: 1, codes: ["007", "008"] };
    expect(suggestTarget(["7", "8"], [padded], "region").choice).toBe("new");
    expect(suggestTarget([" 007", "007", "008 "], [padded], "region")).toMatchObject({ choice: "version", target: { matched: 2, total: 2 } });
  });

  test("a set with no usable version yet never matches; a file without codes never matches", () => {
    const empty: TargetCandidate = { id: 4, name: "Empty", version: null, codes: [] };
    expect(suggestTarget(["D1"], [empty], "region").choice).toBe("new");
    expect(suggestTarget([], [districts], "indicator")).toMatchObject({ choice: "new", candidates: [{ matched: 0, total: 0, share: 0, matches: false }] });
  });
});

describe("mismatchWarning says how few codes match", () => {
  test("names the counts, the share, the set and its version", () => {
    const match = matchCandidate(new Set(["X1", "X2", "X3", "D1"]), districts);
    expect(mismatchWarning(match, "region")).toBe("Only 1 of the file's 4 region codes (25%) are region codes of 'Districts' v3.");
  });
  test("a set without a validated version", () => {
    expect(mismatchWarning(matchCandidate(new Set(["A", "B"]), { id: 5, name: "New", version: null, codes: [] }), "region")).toBe(
      "'New' has no validated version yet, so none of this file's 2 region codes can be matched with it.",
    );
  });
  test("a file without codes", () => {
    expect(mismatchWarning(matchCandidate(new Set(), districts), "indicator")).toBe("This file has no indicator codes to compare with 'Districts' v3.");
  });
});
