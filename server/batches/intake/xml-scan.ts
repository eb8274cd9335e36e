/**
 * A small streaming XML tokenizer for the parts of an XLSX workbook. General XML parsers
 * cost about 40 µs a row on a worksheet (a million-row sheet took a minute in a test with
 * saxes); this one finds tags with indexOf and hands on only what the reader asks for.
 * It reads elements, attributes, text, CDATA, comments and processing instructions, strips
 * namespace prefixes (some writers put every element under "x:"), and refuses a DOCTYPE
 * (workbooks never have one, and entity definitions are how XML bombs are built).
 */
import { CapError } from './caps';

/** The XML is not well formed enough to read. */
export class XmlError extends Error {}

/** What the tokenizer tells its reader. Names are local names (prefix removed). */
export interface XmlHandler {
  /** True while the reader wants the text of the current element. */
  capturing: boolean;
  open(name: string, attrs: string, selfClosing: boolean): void;
  close(name: string): void;
  /** Text between two tags, entities already decoded (called only while `capturing`). */
  text(text: string): void;
}

function localName(q: string): string {
  const colon = q.indexOf(':');
  return colon >= 0 ? q.slice(colon + 1) : q;
}

const ENTITY = /&(#x[0-9a-fA-F]+|#[0-9]+|amp|lt|gt|quot|apos);/g;
const NAMED: Record<string, string> = { amp: '&', lt: '<', gt: '>', quot: '"', apos: "'" };

/** Decodes the five XML entities and character references. */
export function decodeXml(s: string): string {
  if (s.indexOf('&') < 0) return s;
  return s.replace(ENTITY, (_m, e: string) => {
    if (e.charCodeAt(0) !== 35) return NAMED[e];
    const code = e.charCodeAt(1) === 120 ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10);
    return code <= 0x10ffff ? String.fromCodePoint(code) : '\uFFFD';
  });
}

/**
 * The value of attribute `name` (a local name; `r:id` is found as "id" with any prefix
 * when `anyPrefix`), decoded; undefined when absent.
 */
export function attr(attrs: string, name: string, anyPrefix = false): string | undefined {
  if (attrs.indexOf(name) < 0) return undefined;
  // Fast path: the usual ` name="value"`.
  if (!anyPrefix) {
    const key = ` ${name}="`;
    const at = attrs.indexOf(key);
    if (at >= 0) {
      const end = attrs.indexOf('"', at + key.length);
      if (end >= 0) return decodeXml(attrs.slice(at + key.length, end));
    }
  }
  const cacheKey = anyPrefix ? `*${name}` : name;
  let re = ATTR_PATTERNS.get(cacheKey);
  if (!re) {
    re = new RegExp(`(?:^|\\s)${anyPrefix ? '(?:[A-Za-z_][\\w.-]*:)?' : ''}${name}\\s*=\\s*(?:"([^"]*)"|'([^']*)')`);
    ATTR_PATTERNS.set(cacheKey, re);
  }
  const m = re.exec(attrs);
  return m ? decodeXml(m[1] ?? m[2]) : undefined;
}

const ATTR_PATTERNS = new Map<string, RegExp>();

/** Feeds text chunks through the tokenizer; a token longer than `maxToken` characters is a CapError. */
export class XmlScanner {
  private carry = '';

  constructor(
    private readonly h: XmlHandler,
    private readonly maxToken: number,
    private readonly tooLong: () => CapError,
  ) {}

  feed(chunk: string): void {
    const buf = this.carry === '' ? chunk : this.carry + chunk;
    this.carry = '';
    const h = this.h;
    let pos = 0;
    for (;;) {
      const lt = buf.indexOf('<', pos);
      if (lt < 0) {
        if (h.capturing) this.keep(buf.slice(pos));
        return;
      }
      if (lt > pos && h.capturing) h.text(decodeXml(buf.slice(pos, lt)));
      const c = buf.charCodeAt(lt + 1);
      if (c !== c) return this.keep(buf.slice(lt)); // '<' is the last character: wait for more
      if (c === 33 /* ! */) {
        if (buf.startsWith('<!--', lt)) {
          const end = buf.indexOf('-->', lt + 4);
          if (end < 0) return this.keep(buf.slice(lt));
          pos = end + 3;
        } else if (buf.startsWith('<![CDATA[', lt)) {
          const end = buf.indexOf(']]>', lt + 9);
          if (end < 0) return this.keep(buf.slice(lt));
          if (h.capturing) h.text(buf.slice(lt + 9, end));
          pos = end + 3;
        } else if (buf.length - lt < 9) {
          return this.keep(buf.slice(lt));
        } else {
          throw new XmlError('it declares a DOCTYPE, which no workbook part has');
        }
        continue;
      }
      if (c === 63 /* ? */) {
        const end = buf.indexOf('?>', lt + 2);
        if (end < 0) return this.keep(buf.slice(lt));
        pos = end + 2;
        continue;
      }
      const end = tagEnd(buf, lt + 1);
      if (end < 0) return this.keep(buf.slice(lt));
      if (c === 47 /* / */) {
        h.close(localName(buf.slice(lt + 2, end).trim()));
      } else {
        const self = buf.charCodeAt(end - 1) === 47;
        const inner = end - (self ? 1 : 0);
        let nameEnd = lt + 1;
        while (nameEnd < inner) {
          const ch = buf.charCodeAt(nameEnd);
          if (ch === 32 || ch === 9 || ch === 10 || ch === 13) break;
          nameEnd++;
        }
        const name = localName(buf.slice(lt + 1, nameEnd));
        h.open(name, buf.slice(nameEnd, inner), self);
        if (self) h.close(name);
      }
      pos = end + 1;
    }
  }

  /** Checks that nothing is left half-read at the end of a part. */
  end(): void {
    if (this.carry.trim() !== '' && this.carry.indexOf('<') >= 0) throw new XmlError('it ends in the middle of a tag');
  }

  private keep(rest: string): void {
    if (rest.length > this.maxToken) throw this.tooLong();
    this.carry = rest;
  }
}

/** Index of the '>' that ends the tag starting before `from`, skipping quoted values; -1 if not in `s`. */
function tagEnd(s: string, from: number): number {
  let i = from;
  for (;;) {
    const gt = s.indexOf('>', i);
    if (gt < 0) return -1;
    // Quotes are looked for only up to that '>' (tags are short; the chunk is not).
    let q = -1;
    for (let k = i; k < gt; k++) {
      const c = s.charCodeAt(k);
      if (c === 34 || c === 39) {
        q = k;
        break;
      }
    }
    if (q < 0) return gt;
    const close = s.indexOf(s[q], q + 1);
    if (close < 0) return -1;
    i = close + 1;
  }
}
