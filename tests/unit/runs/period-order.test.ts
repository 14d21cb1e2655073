import { periodPair, periodsInOrder } from "@/lib/runs/period-order";

// Two periods side by side read earlier → later (left, "from") whatever order
// the link or URL gave (issue 13, item 5).

const YEARS = ["2015", "2016", "2017", "2018"];

describe("periodsInOrder", () => {
  it("puts the earlier period first whichever order they are given in", () => {
    expect(periodsInOrder(YEARS, "2016", "2018")).toEqual(["2016", "2018"]);
    expect(periodsInOrder(YEARS, "2018", "2016")).toEqual(["2016", "2018"]);
  });

  it("orders by the run's time order, not by the text of the keys", () => {
    // A run's periods are in time order even where the keys do not sort as text.
    const seasons = ["winter-2019", "spring-2019", "summer-2019"];
    expect(periodsInOrder(seasons, "winter-2019", "spring-2019")).toEqual(["winter-2019", "spring-2019"]);
    expect(periodsInOrder(seasons, "spring-2019", "winter-2019")).toEqual(["winter-2019", "spring-2019"]);
  });

  it("falls back to text order for keys the run does not list (quarters, months)", () => {
    expect(periodsInOrder([], "2019-Q3", "2019-Q1")).toEqual(["2019-Q1", "2019-Q3"]);
    expect(periodsInOrder(["2019-01"], "2019-11", "2019-01")).toEqual(["2019-01", "2019-11"]);
  });

  it("leaves equal periods and a pair with an unknown side as given", () => {
    expect(periodsInOrder(YEARS, "2017", "2017")).toEqual(["2017", "2017"]);
    expect(periodsInOrder(YEARS, "2018", "")).toEqual(["2018", ""]);
    expect(periodsInOrder(YEARS, "", "2015")).toEqual(["", "2015"]);
  });
});

describe("periodPair: what the map and comparison show for a URL", () => {
  it("keeps an ordered pair and swaps a reversed one", () => {
    expect(periodPair(YEARS, "2015", "2017")).toEqual({ earlier: "2015", later: "2017" });
    expect(periodPair(YEARS, "2017", "2015")).toEqual({ earlier: "2015", later: "2017" });
  });

  it("opens a catalogue row's period (only `a`) beside the last period, earlier on the left", () => {
    expect(periodPair(YEARS, "2016", null)).toEqual({ earlier: "2016", later: "2018" });
    // The last period's row: paired with the first, which goes left (it went right before this fix).
    expect(periodPair(YEARS, "2018", null)).toEqual({ earlier: "2015", later: "2018" });
  });

  it("orders a `b` given alone against the default `a`", () => {
    expect(periodPair(YEARS, null, "2017")).toEqual({ earlier: "2015", later: "2017" });
  });

  it("defaults to first and last without a and b, and to blanks before the periods are known", () => {
    expect(periodPair(YEARS, null, null)).toEqual({ earlier: "2015", later: "2018" });
    expect(periodPair([], null, null)).toEqual({ earlier: "", later: "" });
    expect(periodPair([], "2018", "2016")).toEqual({ earlier: "2016", later: "2018" });
  });
});
