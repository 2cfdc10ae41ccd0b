/** Where each CSV record starts, so that every error about a row can name its line. */

const CARRIAGE_RETURN = 0x0d;
const LINE_FEED = 0x0a;
const BYTE_ORDER_MARK = 0xfeff;
const QUOTE = 0x22;
const QUOTE_OR_LINE_BREAK = /["\r\n]/g;

/**
 * The line on which each CSV record starts, found by reading the same text csv-parse reads
 * and following its record boundaries: csv-parse's own line counter counts a CRLF inside a
 * quoted field as two lines, and asking it for each record's raw text costs a copy of every
 * byte. Like csv-parse, the record delimiter is the first line break outside quotes (\r\n,
 * \n or \r), and a line holding nothing is skipped. Lines are counted the way a reader would:
 * \r\n, \r and \n are one line break each, except that a \r delimiter followed by \n counts
 * both, as the \n then belongs to the next record. A record's line is that of its first
 * character other than a line break. Quotes are followed only as far as input that csv-parse
 * accepts: text it refuses fails the upload, and the lines of its records are never asked for.
 */
export class CsvRecordLines {
  /** Lines of the records read but not yet handed over by csv-parse: slots nextStart to startCount. */
  private readonly starts: number[] = [];
  private nextStart = 0;
  private startCount = 0;
  private line = 1;
  private recordDelimiter: '' | '\r\n' | '\n' | '\r' = '';
  private quoting = false;
  /** Whether the record being read holds anything (a character, a comma or quotes), so it is not an empty line. */
  private recordHasContent = false;
  /** Whether everything read since the previous record's delimiter is line breaks. */
  private onlyLineBreaks = true;
  private recordLine = 1;
  private afterCarriageReturn = false;
  private startOfText = true;
  /** A \r ending a chunk outside quotes, whose meaning waits on the character after it. */
  private heldCarriageReturn = false;

  read(chunk: string): void {
    let text = chunk;
    if (this.heldCarriageReturn) {
      text = `\r${text}`;
      this.heldCarriageReturn = false;
    }
    let index = 0;
    if (this.startOfText) {
      this.startOfText = false;
      // csv-parse drops a byte order mark at the start of what it reads.
      if (text.charCodeAt(0) === BYTE_ORDER_MARK) index = 1;
    }
    const end = text.length;
    for (; index < end; index++) {
      const code = text.charCodeAt(index);
      if (code === CARRIAGE_RETURN) {
        if (!this.quoting && index === end - 1) {
          this.heldCarriageReturn = true;
          return;
        }
        index += this.lineBreak(code, text.charCodeAt(index + 1));
      } else if (code === LINE_FEED) {
        index += this.lineBreak(code, Number.NaN);
      } else {
        if (code === QUOTE) this.quoting = !this.quoting;
        if (this.onlyLineBreaks) {
          this.onlyLineBreaks = false;
          this.recordLine = this.line;
        }
        this.recordHasContent = true;
        this.afterCarriageReturn = false;
        // The characters up to the next quote or line break change nothing more.
        QUOTE_OR_LINE_BREAK.lastIndex = index + 1;
        index = QUOTE_OR_LINE_BREAK.test(text) ? QUOTE_OR_LINE_BREAK.lastIndex - 2 : end - 1;
      }
    }
  }

  /** Called once the text has ended, before csv-parse hands over its last record. */
  finish(): void {
    if (this.heldCarriageReturn) {
      this.heldCarriageReturn = false;
      this.lineBreak(CARRIAGE_RETURN, Number.NaN);
    }
    if (this.recordHasContent && !this.quoting) this.endRecord();
  }

  /** Line of the next record csv-parse hands over. */
  next(): number {
    const line = this.starts[this.nextStart] as number;
    this.nextStart += 1;
    if (this.nextStart === this.startCount) {
      // Emptied: later lines overwrite the slots in place, so the array is not grown anew.
      this.nextStart = 0;
      this.startCount = 0;
    }
    return line;
  }

  /** Reads a \r or \n; returns how many characters after it the record delimiter also took. */
  private lineBreak(code: number, nextCode: number): number {
    if (code === CARRIAGE_RETURN || !this.afterCarriageReturn) this.line += 1;
    this.afterCarriageReturn = code === CARRIAGE_RETURN;
    if (this.quoting) return 0;
    if (this.recordDelimiter === '') {
      this.recordDelimiter = code === LINE_FEED ? '\n' : nextCode === LINE_FEED ? '\r\n' : '\r';
    }
    let taken: number;
    if (this.recordDelimiter === '\r\n') {
      taken = code === CARRIAGE_RETURN && nextCode === LINE_FEED ? 1 : -1;
    } else {
      taken = (code === CARRIAGE_RETURN) === (this.recordDelimiter === '\r') ? 0 : -1;
    }
    if (taken === -1) {
      // A line break that is not the record delimiter is part of a field.
      this.recordHasContent = true;
      return 0;
    }
    if (this.recordHasContent) this.endRecord();
    return taken;
  }

  private endRecord(): void {
    this.starts[this.startCount] = this.onlyLineBreaks ? this.line : this.recordLine;
    this.startCount += 1;
    this.recordHasContent = false;
    this.onlyLineBreaks = true;
    this.afterCarriageReturn = false;
  }
}
