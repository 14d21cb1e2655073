/** Shown beside harmonised results (the harmonise form, a harmonised version, the timeline's reform mark). */
export const AREAL_WEIGHTING_CAUTION =
  "Areal weighting assumes that values are spread evenly within each old region. Where people or firms cluster, shares by area misplace them; a population-weighted crosswalk (for example from the statistics office) is better where one exists.";
