/**
 * Encoding checks for uploaded panels.
 *
 * Tessera accepts UTF-8 only (with or without a byte-order mark). Spreadsheet
 * exports in Windows-1252 or Latin-1 are the usual culprits; instead of guessing
 * a legacy code page (and silently turning "Zürich-like" names into mojibake),
 * we validate the bytes as they stream past and name the first bad byte offsets
 * and the file lines they sit on, so the steward can re-save the file as UTF-8.
 */

/** One invalid UTF-8 sequence, located in the raw file. */
export interface EncodingProblem {
  /** 0-based byte offset of the first byte of the bad sequence (after any BOM is counted). */
  byteOffset: number;
  /** 1-based physical line of the file (line 1 is the header). */
  line: number;
  /** The offending byte, as two hexadecimal digits. */
  byte: string;
}

/** What the streaming decoder learned about the bytes. */
export interface EncodingSummary {
  encoding: "utf-8";
  bom: boolean;
  /** Number of invalid sequences found (every one, not only the kept examples). */
  invalidCount: number;
  /** The first few invalid sequences (capped). */
  problems: EncodingProblem[];
  /** Set when the file is clearly not UTF-8 at all (UTF-16 BOM, NUL bytes). */
  fatal: string | null;
  bytes: number;
}

const UTF8_BOM = [0xef, 0xbb, 0xbf];

/**
 * Streaming UTF-8 validator and decoder.
 *
 * `write(chunk)` returns the decoded text of the chunk (a sequence split over a
 * chunk boundary is carried over), `end()` flushes. Invalid bytes are replaced
 * by U+FFFD in the text (so parsing can go on and report other problems) and
 * recorded with their byte offset and line. Cost: one pass over the bytes, O(1)
 * memory besides the chunk itself.
 */
export class Utf8StreamDecoder {
  private readonly decoder = new TextDecoder("utf-8", { fatal: false, ignoreBOM: false });
  private readonly maxProblems: number;
  private offset = 0;
  private line = 1;
  /** Continuation bytes still expected by the current multi-byte sequence. */
  private need = 0;
  /** Allowed range of the next continuation byte (tighter for the 2nd byte, to reject overlongs and surrogates). */
  private lower = 0x80;
  private upper = 0xbf;
  private sequenceStart = 0;
  private sequenceLine = 1;
  private sequenceLead = 0;
  private firstBytes: number[] = [];
  private readonly summary: EncodingSummary = {
    encoding: "utf-8",
    bom: false,
    invalidCount: 0,
    problems: [],
    fatal: null,
    bytes: 0,
  };

  constructor(maxProblems = 20) {
    this.maxProblems = maxProblems;
  }

  write(chunk: Uint8Array): string {
    if (this.firstBytes.length < 4) this.inspectStart(chunk);
    this.validate(chunk);
    this.summary.bytes += chunk.length;
    return this.decoder.decode(chunk, { stream: true });
  }

  end(): string {
    if (this.need > 0) {
      // The file ends in the middle of a multi-byte sequence.
      this.record(this.sequenceStart, this.sequenceLine, this.sequenceLead);
      this.need = 0;
    }
    return this.decoder.decode();
  }

  result(): EncodingSummary {
    return { ...this.summary, problems: [...this.summary.problems] };
  }

  private inspectStart(chunk: Uint8Array): void {
    for (let i = 0; i < chunk.length && this.firstBytes.length < 4; i += 1) this.firstBytes.push(chunk[i]);
    const b = this.firstBytes;
    if (b.length >= 3 && b[0] === UTF8_BOM[0] && b[1] === UTF8_BOM[1] && b[2] === UTF8_BOM[2]) this.summary.bom = true;
    if (b.length >= 2 && ((b[0] === 0xff && b[1] === 0xfe) || (b[0] === 0xfe && b[1] === 0xff))) {
      this.summary.fatal = "the file is UTF-16 (it starts with a UTF-16 byte-order mark); save it as UTF-8 (CSV UTF-8) and upload again";
    }
  }

  private record(byteOffset: number, line: number, byte: number): void {
    this.summary.invalidCount += 1;
    if (this.summary.problems.length < this.maxProblems) {
      this.summary.problems.push({ byteOffset, line, byte: byte.toString(16).toUpperCase().padStart(2, "0") });
    }
  }

  private validate(chunk: Uint8Array): void {
    const base = this.offset;
    for (let i = 0; i < chunk.length; i += 1) {
      const byte = chunk[i];
      if (this.need === 0) {
        if (byte < 0x80) {
          if (byte === 0x0a) this.line += 1;
          else if (byte === 0 && this.summary.fatal === null) {
            this.summary.fatal = `the file contains NUL bytes (first at byte offset ${base + i}, line ${this.line}); it is probably UTF-16 or binary, not a UTF-8 CSV`;
          }
          continue;
        }
        this.sequenceStart = base + i;
        this.sequenceLine = this.line;
        this.sequenceLead = byte;
        if (byte >= 0xc2 && byte <= 0xdf) {
          this.need = 1;
          this.lower = 0x80;
          this.upper = 0xbf;
        } else if (byte >= 0xe0 && byte <= 0xef) {
          this.need = 2;
          this.lower = byte === 0xe0 ? 0xa0 : 0x80;
          this.upper = byte === 0xed ? 0x9f : 0xbf;
        } else if (byte >= 0xf0 && byte <= 0xf4) {
          this.need = 3;
          this.lower = byte === 0xf0 ? 0x90 : 0x80;
          this.upper = byte === 0xf4 ? 0x8f : 0xbf;
        } else {
          this.record(base + i, this.line, byte);
        }
        continue;
      }
      if (byte < this.lower || byte > this.upper) {
        // The sequence is broken; the current byte starts afresh (as the WHATWG decoder does).
        this.record(this.sequenceStart, this.sequenceLine, this.sequenceLead);
        this.need = 0;
        i -= 1;
        continue;
      }
      this.lower = 0x80;
      this.upper = 0xbf;
      this.need -= 1;
    }
    this.offset = base + chunk.length;
  }
}
