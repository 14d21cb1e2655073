/**
 * Invented place names built from syllables. The syllable sets were chosen to
 * sound vaguely north-western European without copying real toponyms; every
 * name is checked for uniqueness, and a short list of real names that such
 * syllables could spell is refused outright.
 */
import type { SeededRandom } from "./random";

const ONSETS = ["b", "br", "d", "dr", "f", "g", "gr", "h", "k", "kl", "kr", "l", "m", "n", "p", "r", "s", "sk", "st", "t", "tr", "v", "vr", "w", "z"];
const VOWELS = ["a", "e", "i", "o", "u", "aa", "ei", "oe", "y"];
const CODAS = ["", "n", "r", "l", "m", "s", "k", "nd", "rk", "lt", "ss"];
const DISTRICT_SUFFIXES = ["vorn", "skell", "amar", "wyde", "kerin", "orra", "ivel", "aske", "emor", "ruin", "ellin", "tave"];
const PROVINCE_SUFFIXES = ["andra", "ovia", "esk", "imark", "ueld", "aland"];

// Real names the syllables could spell; refused so no real place is implied.
const REFUSED = new Set(["bremen", "brest", "delft", "gent", "hull", "kiel", "lille", "turin", "varna", "gouda", "sligo", "kerry", "derry", "tromso"]);

function capitalise(word: string): string {
  return word.charAt(0).toUpperCase() + word.slice(1);
}

function syllable(random: SeededRandom): string {
  return random.pick(ONSETS) + random.pick(VOWELS) + random.pick(CODAS);
}

/** Draws names until one is new (and not refused); `taken` is updated. */
function uniqueName(random: SeededRandom, taken: Set<string>, build: () => string): string {
  for (let attempt = 0; attempt < 1000; attempt += 1) {
    const name = capitalise(build());
    const key = name.toLowerCase();
    if (name.length < 5 || name.length > 13 || taken.has(key) || REFUSED.has(key) || /(.)\1\1/.test(key)) continue;
    taken.add(key);
    return name;
  }
  throw new Error("could not draw a unique invented name after 1000 attempts; widen the syllable sets");
}

export function districtName(random: SeededRandom, taken: Set<string>): string {
  return uniqueName(random, taken, () => syllable(random) + random.pick(DISTRICT_SUFFIXES));
}

export function provinceName(random: SeededRandom, taken: Set<string>): string {
  return uniqueName(random, taken, () => syllable(random) + random.pick(PROVINCE_SUFFIXES));
}
